package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// The Earth's main field at the surface is about 22 000 to 67 000 nT
// (IGRF, WMM): a raw log's median |B| lies there in the right unit.
// inspect names the unit that puts it there, mG among them (1 mG = 1e-7 T
// = 100 nT, from 1 G = 1e-4 T, BIPM SI Brochure, 8th ed., Table 9), and
// warns too when no unit does. Before, a log in mG read as nT (median 511
// nT) and one read as tesla at 1.5e10 nT got no word from inspect.
func TestInspectFieldUnitWarnings(t *testing.T) {
	log := func(scale float64) string {
		var b strings.Builder
		b.WriteString("time,bx,by,bz\n")
		// A 50 000 nT Earth field (20000, 0, -45826 nT) turned about
		// z; the fixture's values in nT are divided by scale.
		for i := range 100 {
			c := [][2]float64{{20000, 0}, {0, 20000}, {-20000, 0}, {0, -20000}}[i%4]
			fmt.Fprintf(&b, "%d,%g,%g,%g\n", i, c[0]/scale, c[1]/scale, -45826/scale)
		}
		return b.String()
	}
	for _, c := range []struct {
		name  string
		text  string
		opts  []Option
		wants []string
	}{
		{"mG read as nT", log(100), nil, []string{"median |B| is 500 nT", "probably in mG (try units bx=mG,by=mG,bz=mG)"}},
		{"uT read as nT", log(1000), nil, []string{"probably in uT"}},
		{"nT read as T", log(1), []Option{WithUnits("bx=T", "by=T", "bz=T")}, []string{"median |B| is 5e+04 T", "probably in nT"}},
		{"no unit explains", log(1e4), nil, []string{"median |B| is 5 nT", "in none of the units", "Earth's field removed"}},
		{"no unit explains, in T", log(1e4), []Option{WithUnits("bx=T", "by=T", "bz=T")}, []string{"median |B| is 5e+09 nT (5 T)", "in none of the units"}},
	} {
		in, err := Inspect(writeFile(t, "log.csv", c.text), c.opts...)
		if err != nil {
			t.Fatal(err)
		}
		var field []string
		for _, w := range in.Warnings {
			if strings.HasPrefix(w, "field:") {
				field = append(field, w)
			}
		}
		if len(field) != 1 {
			t.Errorf("%s: field warnings %q, want one", c.name, field)
			continue
		}
		for _, want := range c.wants {
			if !strings.Contains(field[0], want) {
				t.Errorf("%s: warning %q lacks %q", c.name, field[0], want)
			}
		}
	}
	in, err := Inspect(writeFile(t, "nT.csv", log(1)))
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Warnings) != 0 {
		t.Errorf("a 50 000 nT log: warnings %q", in.Warnings)
	}
}
