package broker

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// A reading far beyond any field a magnetometer reads (a corrupt float or
// a wrong scale, 1e200 nT) was accepted because it is finite, and a
// window's fit then overflowed to +Inf. Decode refuses a batch with a
// reading whose |B| is above 0.1 T (1e8 nT: a hundred times the range of
// a survey fluxgate, about +-1 mT, from memory of fluxgate data sheets;
// 500 kA at 1 m by Biot-Savart, mu0 I / (2 pi r)), naming the row, and
// takes readings up to the bound, the Earth's field (about 22,000 to
// 67,000 nT, IGRF) among them. |B| is computed without overflow, so
// components of 1e200 are refused and not taken as +Inf.
func TestDecodeRefusesFieldAboveBound(t *testing.T) {
	subj := "uc.data.fenwick-lane.s1"
	cases := []struct {
		name, payload string
		wantErr       string // "" accepted
	}{
		{"earth field", `{"time":[1,2],"bx":[19000,19001],"by":[-1200,-1201],"bz":[45000,45002]}`, ""},
		{"at the bound", `{"time":[1,2],"bx":[0,0],"by":[0,0],"bz":[1e8,-1e8]}`, ""},
		{"huge bx", `{"time":[1,2,3],"bx":[19000,1e200,19000],"by":[0,0,0],"bz":[45000,45000,45000]}`, "row 2: field magnitude |B| = 1e+200 nT"},
		{"components each under, magnitude over", `{"time":[1],"bx":[8e7],"by":[8e7],"bz":[0]}`, "row 1: field magnitude"},
		{"largest float", `{"time":[1],"bx":[1.7e308],"by":[1.7e308],"bz":[1.7e308]}`, "above 0.1 T"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := Decode(subj, ContentJSON, []byte(tc.payload))
			switch {
			case tc.wantErr == "" && err != nil:
				t.Fatalf("refused: %v", err)
			case tc.wantErr == "":
				if b.FieldOver() != 0 {
					t.Fatalf("accepted, but FieldOver counts %d readings above the bound", b.FieldOver())
				}
			case err == nil:
				t.Fatalf("accepted (bx %v by %v bz %v), want an error with %q", b.Bx, b.By, b.Bz, tc.wantErr)
			case !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), tc.wantErr) || !strings.Contains(err.Error(), subj):
				t.Fatalf("error %q, want ErrMalformed naming %s with %q", err, subj, tc.wantErr)
			}
		})
	}
	b := &Batch{Time: []float64{1, 2, 3}, Bx: []float64{1e200, 0, -1e9}, By: []float64{0, 0, 0}, Bz: []float64{0, 5e4, 0}}
	if n := b.FieldOver(); n != 2 {
		t.Errorf("FieldOver = %d, want 2", n)
	}
	if m := fieldMagnitude(1e200, 1e200, 0); math.IsInf(m, 0) || math.Abs(m/(math.Sqrt2*1e200)-1) > 1e-15 {
		t.Errorf("|B| of (1e200, 1e200, 0) = %v, want sqrt(2) 1e200", m)
	}
}
