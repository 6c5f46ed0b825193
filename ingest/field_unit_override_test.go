package ingest

import (
	"strings"
	"testing"
)

// A unit given for a field column overrides the unit its name states. By
// the SI prefixes (BIPM, The International System of Units, 9th ed. 2019,
// table 7: micro 1e-6, nano 1e-9) 1 uT is 1000 nT, so "--unit bx=nT" on
// "Bx [uT]" alone read bx 1000 times smaller than by and bz, and the
// median |B| stayed in the Earth's band. An override that leaves the
// axes in different units is refused, naming the column, the name's unit
// and the unit given; one applied to all three axes is taken with a
// warning (the names may be wrong); names stating different units for
// the axes are warned about.
func TestFieldUnitOverride(t *testing.T) {
	const text = "time,Bx [uT],By [uT],Bz [uT]\n0,0.45,16.0,-46.25\n1,0.46,16.01,-46.26\n"
	p := writeFile(t, "log.csv", text)

	_, err := ReadSamples(p, WithUnits("bx=nT"))
	wantErr(t, err, `log.csv:1: the unit given for bx, nT, contradicts the unit uT in the column's name "Bx [uT]", and leaves the field's axes in different units (bx in nT, by in uT, bz in uT): one axis would be read 1000 times off the others`)

	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 450 || s.By[0] != 16000 || s.Bz[0] != -46250 {
		t.Errorf("uT read as %v %v %v nT, want 450 16000 -46250", s.Bx[0], s.By[0], s.Bz[0])
	}

	r, err := Open(p, WithUnits("bx=nT,by=nT,bz=nT"))
	if err != nil {
		t.Fatal(err)
	}
	w := strings.Join(Warnings(r), "\n")
	r.Release()
	for _, axis := range []string{"bx", "by", "bz"} {
		if want := "the unit given for " + axis + ", nT, contradicts the unit uT"; !strings.Contains(w, want) {
			t.Errorf("warnings %q lack %q", w, want)
		}
	}

	// The same unit given again is no contradiction.
	r, err = Open(p, WithUnits("bx=uT,by=uT,bz=uT"))
	if err != nil {
		t.Fatal(err)
	}
	if w := Warnings(r); len(w) != 0 {
		t.Errorf("units given as the names state them: warnings %q", w)
	}
	r.Release()

	// Names that state different units.
	p = writeFile(t, "log.csv", "time,Bx [nT],By [uT],Bz [uT]\n0,450,16.0,-46.25\n")
	r, err = Open(p)
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(Warnings(r), "\n"); !strings.Contains(w, "log.csv:1: the field's axes are in different units (bx in nT, by in uT, bz in uT)") {
		t.Errorf("warnings %q do not name the axes' different units", w)
	}
	r.Release()
}
