package report

import (
	"math"
	"slices"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestBuildLeavesOutLinesMissNote: inverse.FitLines notes a fit, with the
// noise estimated (Problem.Sigma zero), that misses the readings' noise floor
// (inverse.LinesMissNote). The report judges every fit against its own
// yardstick and says so in a finding; the group does not repeat it as a
// note. K3 of the Kestrel Moor traverses (the infinite line of DOMAIN.md)
// is given a magnetised object beside the spur, 2 A m^2 mostly vertical
// 0.9 m down and 1.5 m to the side (the point dipole of DOMAIN.md), and
// fitted as one line: the library result carries the note, the group's
// notes do not, and a finding names K3's fit.
func TestBuildLeavesOutLinesMissNote(t *testing.T) {
	fits := kestrelMoor(t)
	f := &fits[2]
	p := *f.Problem
	p.Fields = slices.Clone(p.Fields)
	p.Sigma = 0
	c := p.Points[len(p.Points)/2]
	obj := inverse.Dipole{Pos: [3]float64{c[0] + 1.5*math.Cos(math.Pi/4), c[1] - 1.5*math.Sin(math.Pi/4), -0.9}}
	for i, r := range p.Points {
		b := obj.Field(r, [3]float64{0.5, -0.25, 2})
		for a := range 3 {
			p.Fields[i][a] += b[a] * 1e9
		}
	}
	res, err := inverse.FitLines(&p, &inverse.Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.ContainsFunc(res.Notes, func(n string) bool { return strings.HasPrefix(n, inverse.LinesMissNote) }) {
		t.Fatalf("K3 with the object, fitted as one line: notes %q, want %q", res.Notes, inverse.LinesMissNote)
	}
	f.Problem, f.Result = &p, res
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	g := d.Groups[2]
	if g.Key != "K3" {
		t.Fatalf("group 3 is %s", g.Key)
	}
	for _, n := range g.Notes {
		if strings.HasPrefix(n, inverse.LinesMissNote) {
			t.Errorf("K3's group repeats the library's note: %q", n)
		}
	}
	var named bool
	for _, fd := range d.Findings {
		if slices.Contains(fd.Groups, "K3") {
			named = true
			t.Logf("%s %s: %s", fd.Severity, fd.Kind, fd.Message)
		}
	}
	if !named {
		t.Errorf("no finding names K3's fit, which misses its readings: %+v", d.Findings)
	}
}
