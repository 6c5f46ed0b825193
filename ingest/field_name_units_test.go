package ingest

import (
	"math"
	"strings"
	"testing"
)

// Units written in a mapped field column's name. The CGS units are read
// by their definitions: 1 G = 1e-4 T (BIPM, SI Brochure, 8th ed., 2006,
// Table 9), so 1 mG = 1e-7 T = 100 nT; 1 Oe = 1000/(4π) A/m (same table),
// which in free space is B = µ0 H = 4π·10⁻⁷ · 1000/(4π) T = 1e-4 T, 1e5
// nT. Before, "Bx [mgauss]" and "Bx (Oe)" mapped with a column mapping
// were read as nT without a word.
func TestMappedFieldNameUnits(t *testing.T) {
	for _, c := range []struct {
		name  string
		scale float64
	}{
		{"Bx [mgauss]", 100}, {"Bx (milligauss)", 100}, {"Bx [mG]", 100},
		{"Bx (Oe)", 1e5}, {"Bx [oersted]", 1e5}, {"Bx_gauss", 1e5}, {"Bx (Gauss)", 1e5},
	} {
		p := writeFile(t, "u.csv", "time,"+c.name+",By_nT,Bz_nT\n0,0.5,1,2\n")
		s, err := ReadSamples(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if want := 0.5 * c.scale; math.Abs(s.Bx[0]-want) > 1e-12*want {
			t.Errorf("%s: 0.5 read as %v nT, want %v", c.name, s.Bx[0], want)
		}
	}
}

// A mapped field column whose name states a unit that is not read is
// refused, naming the column and the unit, rather than read as nT: a
// known one in another case (MT: mT or
// megatesla?) or with another prefix (kG), or a known one followed by
// more (nT_x10). A name whose last word is no unit (mag_x) states none and
// is read in nT (words in brackets too: field_name_words_test.go); a unit
// given for the column settles it.
func TestMappedFieldNameUnknownUnit(t *testing.T) {
	for _, c := range []struct{ name, unit string }{
		{"Bx_MT", `"MT"`}, {"Bx_nT_x10", `"nT_x10"`}, {"Bx [kG]", `"kG"`},
	} {
		p := writeFile(t, "u.csv", "time,"+c.name+",By_nT,Bz_nT\n0,0.5,1,2\n")
		_, err := ReadSamples(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"))
		if err == nil {
			t.Errorf("%s: read, want it refused", c.name)
			continue
		}
		for _, want := range []string{"u.csv:1: column " + c.name + ":", "states the unit " + c.unit, "--unit bx=U"} {
			if !strings.Contains(err.Error(), want) {
				t.Errorf("%s: error %q does not contain %q", c.name, err, want)
			}
		}
		if _, err := ReadSamples(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"), WithUnits("bx=nT")); err != nil {
			t.Errorf("%s with its unit given: %v", c.name, err)
		}
	}
	p := writeFile(t, "m.csv", "time,mag_x,mag_y,Field Z\n0,0.5,1,2\n")
	r, err := Open(p, WithColumns("bx=mag_x", "by=mag_y", "bz=Field Z"))
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	for _, m := range Mappings(r) {
		if strings.HasPrefix(m.Column, "b") && (m.Unit != "nT" || m.UnitFrom != UnitDefault) {
			t.Errorf("%s from %s: unit %s from %s, want nT by default", m.Column, m.Source, m.Unit, m.UnitFrom)
		}
	}
}
