package ingest

import (
	"strings"
	"testing"
)

// TestLatLonOriginLineNotUsedWarned: a latitude/longitude log is placed
// from its first reading (or the mean of its positions), so an origin line
// it states is not used; that is now said, with the line, the height it
// would have measured from and the --origin that uses it. Before, the line
// was checked and then dropped in silence: with --reference-z 0 a log
// whose line stated 10.0 m under readings at 10.3 m read the cover 0.30 m
// deep (1.40 m for 1.10). Given an origin, the line is overridden as
// asked, without a word. Invented positions.
func TestLatLonOriginLineNotUsedWarned(t *testing.T) {
	p := writeFile(t, "ll.csv", "# undercurrent.origin: 54.3125 -2.0883 312.0\ntime,lat,lon,height,bx,by,bz\n1,54.3125538,-2.0883046,312.25,1,2,3\n2,54.3125540,-2.0883040,312.25,1,2,3\n")
	for _, c := range []struct {
		name string
		opts []Option
		want string // "" for no warning
	}{
		{"first", nil, "placed from its first reading"},
		{"mean", []Option{WithOriginMean()}, "placed from the mean of its positions"},
		{"given", []Option{WithOrigin(Geodetic{Lat: 54.3125, Lon: -2.0883, H: 312})}, ""},
	} {
		s, err := ReadSamples(p, c.opts...)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		w := strings.Join(s.Warnings, "\n")
		if c.want == "" {
			if strings.Contains(w, "is not used") {
				t.Errorf("%s: warned although the origin was given:\n%s", c.name, w)
			}
			continue
		}
		for _, want := range []string{`the line "# undercurrent.origin: 54.3125 -2.0883 312.0") is not used`, c.want, "not from the stated origin's 312 m", "--origin 54.3125,-2.0883,312.0"} {
			if !strings.Contains(w, want) {
				t.Errorf("%s: warnings lack %q:\n%s", c.name, want, w)
			}
		}
	}
}
