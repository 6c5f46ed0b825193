package broker

import (
	"errors"
	"testing"
)

// FuzzDecode feeds arbitrary payloads (JSON, Arrow IPC stream or neither)
// to Decode: it must not panic, and every error must wrap ErrMalformed.
func FuzzDecode(f *testing.F) {
	b := &Batch{Time: []float64{1, 2}, Bx: []float64{1, 2}, By: []float64{3, 4}, Bz: []float64{5, 6}}
	if j, err := EncodeJSON(b); err == nil {
		f.Add(j, uint8(0))
	}
	if a, err := EncodeArrow(b); err == nil {
		f.Add(a, uint8(1))
	}
	f.Add([]byte(`{"t0":0,"dt":0.1,"bx":[1,2],"by":[1,2],"bz":[1,2]}`), uint8(2))
	f.Fuzz(func(t *testing.T, data []byte, ct uint8) {
		types := []string{"", ContentJSON, ContentArrow}
		got, err := DecodeLimit("uc.data.a1.s1", types[int(ct)%3], data, 1<<20)
		if err != nil {
			if !errors.Is(err, ErrMalformed) {
				t.Fatalf("error not ErrMalformed: %v", err)
			}
			return
		}
		if got == nil {
			t.Fatal("nil batch without error")
		}
	})
}
