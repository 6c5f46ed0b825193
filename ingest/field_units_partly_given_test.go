package ingest

import (
	"strings"
	"testing"
)

// Units given for some of the field's axes leave the others in the unit
// nothing states (nT assumed) or the file's metadata states: a log in
// microtesla given bx=uT,by=uT read bz 1000 times smaller than bx and by
// (1 uT = 1000 nT: BIPM, The International System of Units, 9th ed. 2019,
// table 7), the median |B| staying in the Earth's band. That is refused,
// naming the axes and the units; the three axes given are read, as are
// names that state the units of the others (with a warning saying where
// each unit came from, not "as the column names say").
func TestFieldUnitsPartlyGiven(t *testing.T) {
	const text = "time,x,y,z,bx,by,bz\n0,0,0,0.3,0.045,18.86,-43.99\n"
	p := writeFile(t, "log.csv", text)
	_, err := ReadSamples(p, WithUnits("bx=uT,by=uT"))
	wantErr(t, err, "log.csv:1: units are given for some of the field's axes (bx=uT, by=uT) and not for bz in nT (by default): the axes would be read in different units (bx in uT, by in uT, bz in nT), one 1000 times off the others")
	wantErr(t, err, "(try units bx=uT,by=uT,bz=uT)")

	s, err := ReadSamples(p, WithUnits("bx=uT,by=uT,bz=uT"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 45 || s.By[0] != 18860 || s.Bz[0] != -43990 {
		t.Errorf("uT read as %v %v %v nT, want 45 18860 -43990", s.Bx[0], s.By[0], s.Bz[0])
	}
	// A unit given as the one assumed leaves the axes in one unit.
	if _, err := ReadSamples(p, WithUnits("bx=nT")); err != nil {
		t.Errorf("bx=nT on an nT log: %v", err)
	}

	// The canonical form's metadata states nT for all three axes.
	p = writeFile(t, "canon.csv", "# "+MetaFrame+": enu\n"+text)
	_, err = ReadSamples(p, WithUnits("bx=uT"))
	wantErr(t, err, "and not for by in nT (by the file's metadata), bz in nT (by the file's metadata)")

	// The other axes' names state their units: read, with a warning that
	// says where each axis's unit came from.
	p = writeFile(t, "named.csv", "time,bx,By_nT,Bz_nT\n0,0.045,18860,-43990\n")
	s, err = ReadSamples(p, WithUnits("bx=uT"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 45 || s.By[0] != 18860 {
		t.Errorf("bx=uT beside By_nT: %v %v nT, want 45 18860", s.Bx[0], s.By[0])
	}
	w := warningsOf(t, p, WithUnits("bx=uT"))
	if want := `named.csv:1: the field's axes are in different units (bx in uT, by in nT, bz in nT), bx's unit given, by's by its name "By_nT", bz's by its name "Bz_nT"`; !strings.Contains(w, want) {
		t.Errorf("warnings %q lack %q", w, want)
	}
	if strings.Contains(w, "as the column names say") {
		t.Errorf("warnings %q say the names give the units; bx's was given", w)
	}
}
