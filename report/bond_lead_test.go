package report

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// TestBondLeadKeepsShallowWarning: a 20 A cable 0.8 m down and a 0.3 A
// bonding lead 0.3 m down running 3 m across one traverse of five
// (testdata/scenarios/open/bond-lead.toml, an invented street), checked
// against a 0.45 m minimum cover. The lead is a live conductor with 0.3 m
// of cover, the simulated truth: the report must keep a shallow-cover
// warning within 1 m of it in plan. A short current element's field falls
// faster than a long line's, and a point dipole fits it as well (found in
// review: the warning became an info-level "magnetised object 0.9 m below
// ground"); where the report also names an object there, the warning
// must name both readings and say to treat it as live.
func TestBondLeadKeepsShallowWarning(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 5 traverses with the object search")
	}
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "open", "bond-lead.toml"))
	if err != nil {
		t.Fatal(err)
	}
	var lead [][3]float64
	for _, c := range sc.Conductors {
		if c.Name == "bond lead" {
			lead = c.Vertices
		}
	}
	if len(lead) != 3 {
		t.Fatalf("scenario's bond lead has %d vertices, want 3", len(lead))
	}
	// Plan distance of a point from the lead's shallow run.
	a, b := lead[1], lead[2]
	fromLead := func(p [3]float64) float64 {
		ux, uy := b[0]-a[0], b[1]-a[1]
		l := math.Hypot(ux, uy)
		ux, uy = ux/l, uy/l
		s := math.Max(0, math.Min(l, (p[0]-a[0])*ux+(p[1]-a[1])*uy))
		return math.Hypot(p[0]-a[0]-s*ux, p[1]-a[1]-s*uy)
	}
	for _, seed := range []int64{1, 2} {
		t.Run(fmt.Sprint("seed", seed), func(t *testing.T) {
			sc.Seed = seed
			d := simulatedDocWith(t, sc, &BuildSettings{MinCover: 0.45})
			object := false
			for _, g := range d.Groups {
				for _, s := range g.Sources {
					if s.Kind == KindDipole && fromLead(s.Point) < 1 {
						object = true
					}
				}
			}
			warned := false
			for _, f := range d.Findings {
				if f.Kind != "shallow-cover" || f.Severity != "warning" || fromLead(f.Position) > 1 {
					continue
				}
				warned = true
				t.Log(f.Message)
				if object && !(strings.Contains(f.Message, "magnetised object") && strings.Contains(f.Message, "treat as live")) {
					t.Errorf("an object is named at the lead and its shallow-cover warning does not name both readings: %s", f.Message)
				}
			}
			for _, f := range d.Findings {
				if object && f.Kind == "dipole-anomaly" && fromLead(f.Position) < 1 && !strings.Contains(f.Message, "treat as live") {
					t.Errorf("the object named at the lead does not point to the shallow-line reading: %s", f.Message)
				}
			}
			if !warned {
				for _, f := range d.Findings {
					t.Logf("%s %s: %s", f.Severity, f.Kind, f.Message)
				}
				t.Errorf("no shallow-cover warning within 1 m of the 0.3 A lead 0.3 m down (object named there: %v)", object)
			}
		})
	}
}
