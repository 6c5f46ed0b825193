package ingest

import (
	"math"
	"strings"
	"testing"
)

// Logger column names often carry words in brackets or between
// underscores that are no unit: "Mag X (sensor 2)", "fluxgate_x
// (filtered)", "Bx (raw)", or a one-letter word in the middle
// ("sensor_g_x", where "g" is not gauss: only a name's last word,
// "bx_g", is read as one). Mapped field columns so named are read in nT,
// the default, as they were before units in names were checked. The
// nanotesla written out and the gamma are nT: 1 γ = 1 nT = 1e-9 T (BIPM,
// SI Brochure, 8th ed., 2006, Table 10, non-SI units; the gamma is the
// magnetic survey trade's name for the nanotesla). The SI names written
// out read as their symbols (SI Brochure, Tables 3 and 5: tesla, and the
// prefixes pico 1e-12, micro 1e-6, milli 1e-3).
func TestMappedFieldNameWordsAndUnitNames(t *testing.T) {
	for _, c := range []struct {
		name  string
		scale float64 // nT per unit of the column
		unit  string  // the unit the mapping reports
	}{
		{"Mag X (sensor 2)", 1, "nT"}, {"fluxgate_x (filtered)", 1, "nT"}, {"Bx (raw)", 1, "nT"},
		{"sensor_g_x", 1, "nT"}, {"Bx [G2]", 1, "nT"}, {"Bx (probe T1)", 1, "nT"}, {"B_v", 1, "nT"},
		{"B_x (nanotesla)", 1, "nanotesla"}, {"Bx (gamma)", 1, "gamma"}, {"Bx_gammas", 1, "gammas"},
		{"Bx [Nanotesla]", 1, "Nanotesla"}, {"Bx (picotesla)", 1e-3, "picotesla"},
		{"Bx (microtesla)", 1e3, "microtesla"}, {"Bx (millitesla)", 1e6, "millitesla"}, {"Bx (tesla)", 1e9, "tesla"},
		{"bx_G", 1e5, "G"},
	} {
		p := writeFile(t, "w.csv", "time,"+c.name+",By_nT,Bz_nT\n0,0.5,1,2\n")
		s, err := ReadSamples(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if want := 0.5 * c.scale; math.Abs(s.Bx[0]-want) > 1e-12*want {
			t.Errorf("%s: 0.5 read as %v nT, want %v", c.name, s.Bx[0], want)
		}
		r, err := Open(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"))
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range Mappings(r) {
			if m.Column == ColBx && m.Unit != c.unit {
				t.Errorf("%s: unit %q, want %q", c.name, m.Unit, c.unit)
			}
		}
		r.Release()
	}
}

// Names whose suffix looks like a unit that is not read are refused, not
// read as nT: a field unit with a prefix or case the
// readers do not take, a unit with words after it, or one of another
// quantity (mV, ft).
func TestMappedFieldNameUnitLikeRefused(t *testing.T) {
	for _, c := range []struct{ name, unit string }{
		{"Bx (T x10)", `"T x10"`}, {"Bx (0.1 fT)", `"0.1 fT"`}, {"Bx (-0.1 nT)", `"-0.1 nT"`}, {"Bx [0 nT]", `"0 nT"`},
		{"Bx (fT)", `"fT"`}, {"Bx [NT/10]", `"NT/10"`}, {"Bx (kilogauss)", `"kilogauss"`}, {"Bx_0x1nT", `"0x1nT"`},
		{"Bx (uT, filtered)", `"uT, filtered"`}, {"Bx_uT (filtered)", `"uT (filtered)"`}, {"Bx_nT_x10", `"nT_x10"`},
		{"Bx (mV)", `"mV"`}, {"Bx (V)", `"V"`}, {"Bx [ft]", `"ft"`},
	} {
		p := writeFile(t, "r.csv", "time,\""+c.name+"\",By_nT,Bz_nT\n0,0.5,1,2\n")
		_, err := ReadSamples(p, WithColumns("bx="+c.name, "by=By_nT", "bz=Bz_nT"))
		if err == nil {
			t.Errorf("%s: read, want it refused", c.name)
			continue
		}
		for _, want := range []string{"r.csv:1: column " + c.name + ":", "states the unit " + c.unit} {
			if !strings.Contains(err.Error(), want) {
				t.Errorf("%s: error %q does not contain %q", c.name, err, want)
			}
		}
	}
}
