package report

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// The fits below are kestrelMoor's (build_test.go): eight traverses 20 m
// apart across a line 1.2 m below the sensors, fitted with depths below
// the sensors' mean height. Simulated truth: chainages 0, 20, ... 140 m.

// Keys that do not name each group apart are refused: the route places a
// group by its key, and with repeated or empty keys every group had taken
// the first one's chainage (0 m) beside a 140 m route.
func TestBuildRefusesRepeatedOrEmptyKeys(t *testing.T) {
	fits := kestrelMoor(t)
	set := &BuildSettings{Noise: 2}
	for _, c := range []struct{ key, want string }{
		{"K", `share the key "K"`},
		{"", "has no key"},
	} {
		same := append([]Fit(nil), fits...)
		for i := range same {
			same[i].Key = c.key
		}
		if _, err := Build(Document{}, same, set); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("every key %q: error %v, want one saying %q", c.key, err, c.want)
		}
	}
	twice := append([]Fit(nil), fits...)
	twice[5].Key = "K2"
	if _, err := Build(Document{}, twice, set); err == nil || !strings.Contains(err.Error(), `fits 1 and 5 share the key "K2"`) {
		t.Errorf("K2 twice: error %v, want fits 1 and 5 named", err)
	}
	// A single fit needs no key (a run that was not grouped).
	one := []Fit{fits[0]}
	one[0].Key = ""
	if _, err := Build(Document{}, one, set); err != nil {
		t.Errorf("one fit with no key: %v", err)
	}
	// Unique keys: each group at its simulated chainage.
	d, err := Build(Document{}, fits, set)
	if err != nil {
		t.Fatal(err)
	}
	for i, g := range d.Groups {
		if g.Chainage == nil || math.Abs(*g.Chainage-20*float64(i)) > 0.5 {
			t.Errorf("%s: chainage %v, want %g m", g.Key, g.Chainage, 20*float64(i))
		}
	}
}

// refit fits fit i again with settings s, storing them in Fit.Settings.
func refit(t *testing.T, f *Fit, s *inverse.Settings) {
	t.Helper()
	res, err := inverse.FitLines(f.Problem, s)
	if err != nil {
		t.Fatalf("%s: %v", f.Key, err)
	}
	f.Result, f.Err, f.Settings = res, nil, s
}

// Fits whose depths are measured from different references are refused:
// Build had taken the first fit's reference for all, so that a depth
// below the sensors (1.2 m) was read as cover below the ground (truly
// 0.9 m, the sensors 0.3 m above it) and passed a 1.0 m minimum.
func TestBuildRefusesMixedDepthReferences(t *testing.T) {
	ground, other := -0.3, -0.2
	mixed := kestrelMoor(t)
	for i := 0; i < len(mixed); i += 2 {
		refit(t, &mixed[i], &inverse.Settings{Count: 1, ReferenceZ: &ground})
	}
	set := &BuildSettings{Noise: 2, MinCover: 1.0}
	_, err := Build(Document{}, mixed, set)
	if err == nil || !strings.Contains(err.Error(), `fit 1 (group "K2")`) || !strings.Contains(err.Error(), "same depth reference") {
		t.Errorf("mixed references: error %v, want a refusal naming K2", err)
	}
	two := kestrelMoor(t)
	for i := range two {
		z := ground
		if i == 3 {
			z = other
		}
		refit(t, &two[i], &inverse.Settings{Count: 1, ReferenceZ: &z})
	}
	if _, err := Build(Document{}, two, set); err == nil || !strings.Contains(err.Error(), `fit 3 (group "K4")`) || !strings.Contains(err.Error(), "same ReferenceZ") {
		t.Errorf("two ReferenceZ: error %v, want a refusal naming K4", err)
	}
	// One reference: every group's cover, truly 0.9 m, is under 1.0 m.
	for i := range two {
		refit(t, &two[i], &inverse.Settings{Count: 1, ReferenceZ: &ground})
	}
	d, err := Build(Document{}, two, set)
	if err != nil {
		t.Fatal(err)
	}
	if d.DepthReference.Kind != DepthBelowGround {
		t.Errorf("depth reference %q, want %q", d.DepthReference.Kind, DepthBelowGround)
	}
	if n := countKind(d, "shallow-cover"); n == 0 {
		t.Errorf("no shallow-cover finding with a true cover of 0.9 m against 1.0 m")
	}
}

// A mix of DC fields and AC phasors is refused: read along one route, a
// signed DC current beside an AC RMS made false steps of about twice the
// current.
func TestBuildRefusesMixedDCAndAC(t *testing.T) {
	fits := kestrelMoor(t)
	earth := [3]float64{-310, 17900, -46300} // kestrelMoor's Earth field
	rng := rand.New(rand.NewPCG(7, 7))
	for i := 1; i < len(fits); i += 2 {
		// The line's field as in-phase phasors with 2 nT noise per part.
		q := &inverse.Problem{Sigma: 2, Points: fits[i].Problem.Points}
		for _, f := range fits[i].Problem.Fields {
			var ph [3]complex128
			for a := range ph {
				ph[a] = complex(f[a]-earth[a], 2*rng.NormFloat64())
			}
			q.Phasors = append(q.Phasors, ph)
		}
		fits[i].Problem = q
		refit(t, &fits[i], &inverse.Settings{Count: 1})
	}
	_, err := Build(Document{}, fits, &BuildSettings{Noise: 2})
	if err == nil || !strings.Contains(err.Error(), "DC and AC") || !strings.Contains(err.Error(), `"K2"`) {
		t.Errorf("mixed DC and AC: error %v, want a refusal naming K2", err)
	}
}

// A minimum cover with depths below the sensors and no sensor height is
// refused, as the command line refuses it: Build had taken the ground at
// the sensors, read the 1.2 m depth as cover and passed a 1.0 m minimum
// that the true 0.9 m cover fails.
func TestBuildMinCoverNeedsGround(t *testing.T) {
	fits := kestrelMoor(t)
	_, err := Build(Document{}, fits, &BuildSettings{Noise: 2, MinCover: 1.0})
	if err == nil || !strings.Contains(err.Error(), "where the ground is") {
		t.Errorf("MinCover without a ground: error %v, want a refusal", err)
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, MinCover: 1.0, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if n := countKind(d, "shallow-cover"); n == 0 {
		t.Errorf("no shallow-cover finding with a true cover of 0.9 m against 1.0 m")
	}
	// No minimum cover: nothing to refuse.
	if _, err := Build(Document{}, fits, &BuildSettings{Noise: 2}); err != nil {
		t.Errorf("no MinCover: %v", err)
	}
}

func countKind(d *Document, kind string) int {
	n := 0
	for _, f := range d.Findings {
		if string(f.Kind) == kind {
			n++
		}
	}
	return n
}
