package main

// --field-axes and the ways of reading three field columns: each map's
// determinant against the determinant of its matrix worked out by the
// rule of Sarrus, its flag read back, and the frames' handedness (east,
// north, up and north, east, down are both right-handed frames, so reading
// one as the other is a turn, det +1; a swap of two columns is a mirror,
// det -1).

import (
	"strings"
	"testing"
)

func TestAxisMapsDeterminantAndFlag(t *testing.T) {
	maps := allAxisMaps()
	if len(maps) != 48 {
		t.Fatalf("%d signed permutations of three axes, want 3! * 2^3 = 48", len(maps))
	}
	seen := map[string]bool{}
	for _, m := range maps {
		var a [3][3]float64
		for i := range 3 {
			a[i][m.perm[i]] = m.sign[i]
		}
		sarrus := a[0][0]*a[1][1]*a[2][2] + a[0][1]*a[1][2]*a[2][0] + a[0][2]*a[1][0]*a[2][1] -
			a[0][2]*a[1][1]*a[2][0] - a[0][0]*a[1][2]*a[2][1] - a[0][1]*a[1][0]*a[2][2]
		if m.det() != sarrus {
			t.Errorf("%s: det %g, Sarrus %g", m.flag(), m.det(), sarrus)
		}
		back, err := parseFieldAxes(m.flag())
		if err != nil || back != m {
			t.Errorf("%s read back as %+v (%v)", m.flag(), back, err)
		}
		seen[m.flag()] = true
	}
	if len(seen) != 48 {
		t.Errorf("%d distinct flags", len(seen))
	}
	for flag, det := range map[string]float64{"e,n,u": 1, "n,e,d": 1, "w,s,u": 1, "e,s,d": 1, "n,e,u": -1, "e,n,d": -1} {
		m, err := parseFieldAxes(flag)
		if err != nil || m.det() != det {
			t.Errorf("%s: det %g (%v), want %g", flag, m.det(), err, det)
		}
	}
	// A field logged north, east, down: bx holds north, by east, bz down.
	m, _ := parseFieldAxes("n,e,d")
	if got := m.apply([3]float64{19200, -150, 45100}); got != [3]float64{-150, 19200, -45100} {
		t.Errorf("n,e,d read as %v", got)
	}
}

func TestFieldAxesFlagRefused(t *testing.T) {
	for _, c := range []struct{ args, want string }{
		{"--field-axes n,e", "want three"},
		{"--field-axes n,n,u", "given twice"},
		{"--field-axes x,y,z", "want one of"},
		{"--field-axes n,e,d --frame ned", "without --frame ned"},
	} {
		code, _, stderr := cli(t, append([]string{"locate", "--group-by", "group"}, append(strings.Fields(c.args), "nosuch.csv")...)...)
		if code != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("%s: exit %d, stderr %q", c.args, code, stderr)
		}
	}
}
