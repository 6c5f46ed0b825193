package report

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// wrenbyLane makes hand-made fits (synthetic results, not fitted) for
// twelve traverses 5 m apart along a route due north at the invented
// Wrenby Lane: a 30 A feeder 1.30 m below the sensors and, 2 m to its
// right, a 10 A auxiliary cable laid shallow, 0.65 m below the sensors.
// The sensors are 0.30 m above the ground, so the feeder lies under 1.00 m
// of cover and the auxiliary cable under 0.35 m. With second false the
// groups hold the feeder only. Fixture data, not check values.
func wrenbyLane(second bool) []Fit {
	rng := rand.New(rand.NewPCG(8, 2026))
	u := [3]float64{0, 1, 0}
	right := [3]float64{1, 0, 0}
	var fits []Fit
	for i := range 12 {
		c := [3]float64{0, 2.5 + 5*float64(i), 0}
		var pts [][3]float64
		for k := -10; k <= 10; k++ {
			pts = append(pts, [3]float64{c[0] + 0.5*float64(k), c[1], 0})
		}
		src := func(off, depth, cur float64) inverse.SourceEstimate {
			d := depth + 0.0004*rng.NormFloat64()
			return inverse.SourceEstimate{
				Kind:  "line",
				Point: [3]float64{c[0] + off*right[0], c[1], -d}, Dir: u,
				Current: cur + 0.01*rng.NormFloat64(), CurrentSigma: 0.01,
				Depth: d, DepthSigma: 0.0004,
				Offset: off, OffsetSigma: 0.001, Azimuth: 0, AzimuthSigma: 0.05,
				Identifiable: inverse.Identifiable{Current: true, Depth: true, Offset: true, Azimuth: true, Dip: true},
			}
		}
		res := &inverse.Result{Status: inverse.ConvergedResidual, Sigma: 3, RMS: 3, Chi2: 58, DOF: 58}
		res.Sources = append(res.Sources, src(0, 1.30, 30))
		if second {
			res.Sources = append(res.Sources, src(2, 0.65, 10))
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: &inverse.Problem{Points: pts}, Result: res})
	}
	return fits
}

// coverIn finds "least cover X ± S m" in s and returns X.
func coverIn(t *testing.T, s, prefix string) float64 {
	t.Helper()
	i := strings.Index(s, prefix)
	if i < 0 {
		t.Fatalf("%q not in %q", prefix, s)
	}
	var x float64
	if _, err := fmt.Sscan(strings.TrimSpace(s[i+len(prefix):]), &x); err != nil {
		t.Fatalf("no number after %q in %q: %v", prefix, s, err)
	}
	return x
}

// TestLeastCoverOverEveryConductor: the summary's least cover is the least
// over every conductor followed, naming it, and each further conductor's
// sentence gives its own cover. Cover is depth below the ground, so with
// depths below the sensors it is the depth less the sensors' height above
// ground (DOMAIN.md, minimum cover, which codes state as depth below
// grade, e.g. NEC Table 300.5): 0.65 - 0.30 = 0.35 m for the auxiliary
// cable, 1.30 - 0.30 = 1.00 m for the feeder. The summary used to give the
// feeder's 1.00 m as the least cover of the survey.
func TestLeastCoverOverEveryConductor(t *testing.T) {
	head := Document{Title: "Wrenby Lane", Site: "Wrenby Lane (invented)"}
	d, err := Build(head, wrenbyLane(true), &BuildSettings{Noise: 3, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Conductors) != 1 || d.Conductors[0].Number != 2 {
		t.Fatalf("further conductors %+v, want conductor 2", d.Conductors)
	}
	const auxCover, feederCover = 0.65 - 0.30, 1.30 - 0.30
	lc := LeastCover(d)
	if !strings.HasPrefix(lc, "Least cover over the 2 conductors followed: ") || !strings.Contains(lc, "conductor 2 at T") {
		t.Errorf("least cover sentence %q: want it over 2 conductors, naming conductor 2", lc)
	}
	if c := coverIn(t, lc, "followed: "); math.Abs(c-auxCover) > 0.003 {
		t.Errorf("least cover %.4f m, want the auxiliary cable's %.2f m", c, auxCover)
	}
	cs := ConductorSummary(d, &d.Conductors[0])
	if c := coverIn(t, cs, "least cover "); math.Abs(c-auxCover) > 0.003 {
		t.Errorf("conductor 2's sentence gives cover %.4f m, want %.2f m: %q", c, auxCover, cs)
	}

	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	sum := page[strings.Index(page, "<h2>Summary</h2>"):strings.Index(page, "<h2>Plan view</h2>")]
	if !strings.Contains(sum, lc) {
		t.Errorf("summary lacks %q:\n%s", lc, sum)
	}
	if !strings.Contains(sum, cs) {
		t.Errorf("summary lacks conductor 2's sentence %q:\n%s", cs, sum)
	}
	// Conductor 1's own line says whose cover it is, and gives the cover
	// first.
	if c := coverIn(t, sum, "Conductor 1: cover (depth below ground) is "); math.Abs(c-feederCover) > 0.003 {
		t.Errorf("conductor 1's least cover %.4f m, want %.2f m", c, feederCover)
	}
	// No minimum cover was given: "no findings" says nothing was checked.
	if !strings.Contains(sum, "no minimum cover was given, so no cover was checked") {
		t.Errorf("summary says there are no findings without saying cover was not checked:\n%s", sum)
	}

	// One conductor: the sentence names conductor 1, and the crew report
	// keeps its single depth line.
	one, err := Build(head, wrenbyLane(false), &BuildSettings{Noise: 3, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if lc := LeastCover(one); !strings.HasPrefix(lc, "Least cover: ") || !strings.Contains(lc, "conductor 1 at T") ||
		math.Abs(coverIn(t, lc, "Least cover: ")-feederCover) > 0.003 {
		t.Errorf("one conductor: %q, want its %.2f m on conductor 1", lc, feederCover)
	}
	// Without the ground there is no cover to give.
	none, err := Build(head, wrenbyLane(true), &BuildSettings{Noise: 3})
	if err != nil {
		t.Fatal(err)
	}
	if lc := LeastCover(none); lc != "" {
		t.Errorf("no sensor height, yet %q", lc)
	}
	if cs := ConductorSummary(none, &none.Conductors[0]); strings.Contains(cs, "cover") {
		t.Errorf("no sensor height, yet %q", cs)
	}
}
