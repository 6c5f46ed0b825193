package report

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// trainFits returns the DC fits of six traverses (invented fixtures, Kestrel Moor
// beside an electrified line: 201 readings every 0.08 m, 0.25 m up, walked at
// 0.8 m/s across a 2 A line 1.5 m deep running east, 1 nT noise) on each of which a
// uniform 60 nT field (a far railway's field while a train draws current) is added
// from the 60th reading to the 140th, as a current changing in time adds it. The
// readings are Biot-Savart (inverse.Line.Field); each traverse is fitted with one
// line and uniform background. stamped gives each fit the time of its first
// reading (Fit.Start) as a log with stamps does.
func trainFits(t *testing.T, stamped bool) []Fit {
	t.Helper()
	const noise = 1.0
	rng := rand.New(rand.NewPCG(29, 3))
	l := inverse.Line{Point: [3]float64{0, 0, -1.5}, Dir: [3]float64{1, 0, 0}}
	t0 := time.Date(2026, 6, 9, 10, 0, 0, 0, time.UTC)
	var fits []Fit
	for g := range 6 {
		var pts, fs [][3]float64
		for j := range 201 {
			r := [3]float64{13 * float64(g), -8 + 0.08*float64(j), 0.25}
			b := l.Field(r, 2)
			for a := range 3 {
				b[a] = b[a]*1e9 + noise*rng.NormFloat64()
			}
			if j >= 60 && j < 140 {
				b[0] += 30
				b[1] -= 40
				b[2] += 30
			}
			pts, fs = append(pts, r), append(fs, b)
		}
		p := &inverse.Problem{Points: pts, Fields: fs}
		z0 := 0.0
		res, err := inverse.FitLines(p, &inverse.Settings{Count: 1, ReferenceZ: &z0})
		if err != nil {
			t.Fatal(err)
		}
		f := Fit{Key: fmt.Sprintf("T%02d", g+1), Problem: p, Result: res, MeasuredNoise: noise}
		if stamped {
			f.Start = t0.Add(time.Duration(g) * 65 * time.Second)
		}
		fits = append(fits, f)
	}
	return fits
}

// TestSharedMisfitNamesTimeVaryingCurrent: a DC survey whose readings carry
// times and whose fits miss them by far more than the noise must name a
// current changing in time among the misfit's causes (in review, surveys
// beside a DC railway whose trains raised its current several times a walk
// gave 0 of 33 runs any text saying a current changed, the misfits blamed
// on bends, tees and objects). Readings without times, or scaled by a
// reference current (which models the change), must not.
func TestSharedMisfitNamesTimeVaryingCurrent(t *testing.T) {
	const want = "a current that changed in time while the traverses were walked"
	fits := trainFits(t, true)
	w := sharedMisfit(fits, &BuildSettings{}, &route.Settings{MaxReducedChi2: 4})
	if !strings.Contains(w, "6 of 6 groups' fits miss the readings") {
		t.Fatalf("train fixture: warning %q, want one naming all six groups' misfit", w)
	}
	if !strings.Contains(w, want) || !strings.Contains(w, "--current-reference") {
		t.Errorf("stamped DC survey: warning %q, want it to name %q and the reference current", w, want)
	}
	plain := trainFits(t, false)
	if w := sharedMisfit(plain, &BuildSettings{}, &route.Settings{MaxReducedChi2: 4}); strings.Contains(w, want) {
		t.Errorf("readings without times: warning %q names a current changing in time", w)
	}
	for i := range fits {
		s := make([]float64, len(fits[i].Problem.Points))
		for j := range s {
			s[j] = 1
		}
		fits[i].Problem.Scale = s
	}
	if w := sharedMisfit(fits, &BuildSettings{}, &route.Settings{MaxReducedChi2: 4}); strings.Contains(w, want) {
		t.Errorf("readings scaled by a reference current: warning %q names a current changing in time", w)
	}
}
