package ingest

import (
	"math"
	"strings"
	"testing"
)

// TestUnreadUnitColumnNamed checks the error for a field column that is bx
// by its name but whose name states a unit not read ("bx [furlong]",
// "Bx_MT", "bx_nT_x10"): it names the column, the text
// taken for its unit and every field unit read, and says how to map it.
// Before, the error was "no column for bx" with the column in the list of
// columns found and no reason given.
func TestUnreadUnitColumnNamed(t *testing.T) {
	for _, c := range []struct{ header, unit, mapping string }{
		{"bx [furlong]", "furlong", "'bx=bx [furlong]'"},
		{"Bx_MT", "MT", "bx=Bx_MT"},
		{"bx_nT_x10", "nT_x10", "bx=bx_nT_x10"},
	} {
		p := writeFile(t, "u.csv", "# a logger's export\ntime,"+c.header+",by,bz\n0,0.5,1,2\n")
		_, err := ReadSamples(p)
		if err == nil {
			t.Errorf("%s: read without an error", c.header)
			continue
		}
		msg := err.Error()
		for _, want := range []string{
			"u.csv:2:",
			"no column for bx: column " + `"` + c.header + `"` + " may be bx (its name begins so)",
			`unknown field unit "` + c.unit + `" (want ` + FieldUnits + ", or one of them with the size of a count before it",
			"--column " + c.mapping + ")",
			"--unit bx=U",
		} {
			if !strings.Contains(msg, want) {
				t.Errorf("%s: error %q does not contain %q", c.header, msg, want)
			}
		}
	}
	// A column that is taken by its name, and a log where the axis is
	// simply absent, are not affected.
	p := writeFile(t, "u.csv", "time,bx [uT],by,bz\n0,0.5,1,2\n")
	if _, err := ReadSamples(p); err != nil {
		t.Errorf("bx [uT]: %v", err)
	}
	p = writeFile(t, "u.csv", "time,mag,by,bz\n0,0.5,1,2\n")
	_, err := ReadSamples(p)
	wantErr(t, err, "no column for bx (columns found:")
}

// TestFieldUnitsListed checks that every field unit read is named in the
// message for a unit that is not: before, "want nT, pT, uT, mT, T, G or
// mG" left out the gamma, the oersted and the names written out, which are
// read. The sizes are those of BIPM, SI Brochure, 8th ed., 2006, Tables 9
// and 10 (1 γ = 1 nT, 1 G = 1e-4 T, 1 Oe read as B = µ0 H = 1e-4 T).
func TestFieldUnitsListed(t *testing.T) {
	_, err := unitScale(kindField, "furlong")
	if err == nil {
		t.Fatal("furlong read as a field unit")
	}
	msg := err.Error()
	words := strings.FieldsFunc(msg, func(r rune) bool { return strings.ContainsRune(" (),\"", r) })
	for _, u := range []struct {
		name string
		nT   float64
	}{
		{"nT", 1}, {"nanotesla", 1}, {"gamma", 1}, {"pT", 1e-3}, {"picotesla", 1e-3},
		{"uT", 1e3}, {"µT", 1e3}, {"microtesla", 1e3}, {"mT", 1e6}, {"millitesla", 1e6},
		{"T", 1e9}, {"tesla", 1e9}, {"G", 1e5}, {"gauss", 1e5}, {"mG", 100}, {"milligauss", 100},
		{"mgauss", 100}, {"Oe", 1e5}, {"oersted", 1e5},
	} {
		s, err := unitScale(kindField, u.name)
		if err != nil || math.Abs(s-u.nT) > 1e-12*u.nT {
			t.Errorf("%s: %v nT (%v), want %v", u.name, s, err, u.nT)
		}
		found := false
		for _, w := range words {
			found = found || w == u.name
		}
		if !found {
			t.Errorf("%s is read but not listed in %q", u.name, msg)
		}
	}
}

// TestUnreadUnitColumnStepWithBlank: a field column named with the size
// of a count and its unit after a blank, no brackets ("bx 0.1 nT"), is not
// read by its name (only the name's last word is taken for its unit, and
// "bx 2 nT" may be sensor 2's bx), but the error names the column, the
// unit its name states and how to read it; following that advice reads
// the counts in that step without a warning that the unit given
// contradicts the name. The values are invented: 188591 counts of 0.1 nT
// are 18859.1 nT.
func TestUnreadUnitColumnStepWithBlank(t *testing.T) {
	text := "time,x,y,bx 0.1 nT,by 0.1 nT,bz 0.1 nT\n0,0,0,1205,188591,-462140\n1,1,0,1206,188592,-462144\n"
	p := writeFile(t, "k.csv", text)
	_, err := ReadSamples(p)
	if err == nil {
		t.Fatal("read without an error")
	}
	for _, want := range []string{
		`k.csv:1: no column for bx, by, bz: column "bx 0.1 nT" may be bx (its name begins so) in "0.1 nT"`,
		`--column 'bx=bx 0.1 nT' --unit 'bx=0.1 nT'`,
		`"bx [0.1 nT]"`,
	} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not contain %q", err, want)
		}
	}
	s, err := ReadSamples(p, WithColumns("bx=bx 0.1 nT", "by=by 0.1 nT", "bz=bz 0.1 nT"), WithUnits("bx=0.1 nT", "by=0.1 nT", "bz=0.1 nT"))
	if err != nil {
		t.Fatal(err)
	}
	if s.By[0] != 18859.1 || s.Bx[1] != 120.6 {
		t.Errorf("read bx %v, by %v: want 120.5, 120.6 and 18859.1, 18859.2 nT", s.Bx, s.By)
	}
	for _, w := range s.Warnings {
		if strings.Contains(w, "contradicts") {
			t.Errorf("warning %q", w)
		}
	}
}
