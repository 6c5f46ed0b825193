package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// columnPulls is positionPulls with each reading's own position scatter:
// sig(i) gives reading i's sd across the plan and in height, the logged
// positions are off the true ones by that, and with own the problem
// carries them (Problem.PositionSigmas, as a log's accuracy columns give
// them). It returns the pulls' standard deviations of depth and current,
// the mean depth and current sigmas, and the note of the last fit.
func columnPulls(t *testing.T, set Settings, sig func(i int) [2]float64, own bool, runs int) (sdD, sdI, sigD, sigI float64, note string) {
	t.Helper()
	const trueI, trueD, noise = 25.0, 1.1, 2.0
	line := Line{Point: [3]float64{0, 0, -trueD}, Dir: [3]float64{0, 1, 0}}
	var logged [][3]float64
	for k := range 3 {
		logged = append(logged, traverse(81, -4, 4, 2*float64(k-1), 0.3)...)
	}
	zero := 0.0
	set.Count, set.ReferenceZ = 1, &zero
	rng := rand.New(rand.NewPCG(27, 3))
	for range runs {
		pts := make([][3]float64, len(logged))
		truePts := make([][3]float64, len(logged))
		var sigs [][2]float64
		for i, p := range logged {
			s := sig(i)
			pts[i] = p
			truePts[i] = [3]float64{p[0] + s[0]*rng.NormFloat64(), p[1] + s[0]*rng.NormFloat64(), p[2] + s[1]*rng.NormFloat64()}
			sigs = append(sigs, s)
		}
		f := simulate(truePts, []Line{line}, []float64{trueI}, [3]float64{-150, 19200, -45100}, noise, rng)
		prob := &Problem{Points: pts, Fields: f}
		if own {
			prob.PositionSigmas = sigs
		}
		st := set
		res, err := FitLines(prob, &st)
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		if !(e.DepthSigma > 0) || !(e.CurrentSigma > 0) {
			t.Fatalf("depth %v ± %v, current %v ± %v: no sigma (%q)", e.Depth, e.DepthSigma, e.Current, e.CurrentSigma, res.Notes)
		}
		cur := e.Current * (e.Dir[1]*line.Dir[1] + e.Dir[0]*line.Dir[0])
		pd, pi := (e.Depth-trueD)/e.DepthSigma, (cur-trueI)/e.CurrentSigma
		sdD += pd * pd
		sdI += pi * pi
		sigD += e.DepthSigma
		sigI += e.CurrentSigma
		note = positionNote(res)
	}
	r := float64(runs)
	return math.Sqrt(sdD / r), math.Sqrt(sdI / r), sigD / r, sigI / r, note
}

// TestPositionSigmaColumns checks per-reading position sigmas
// (Problem.PositionSigmas, a log's accuracy columns) on a survey whose
// positioning changed halfway (RTK fixed to float): the first half of
// the readings logged 0.02 m off the truth, the second 0.4 m across the
// plan and 0.2 m in height, each reading carrying its own. The pulls
// (fit - truth)/sigma of depth and current are within [0.7, 1.4] (a
// sigma that is right gives 1), and the sigmas are smaller than with the
// worst value given for the whole run (Settings, the flag), which
// throws away the precise half. Before, the problem had no per-reading
// sigmas (the test did not build).
func TestPositionSigmaColumns(t *testing.T) {
	runs := 40
	if testing.Short() {
		runs = 16
	}
	sig := func(i int) [2]float64 {
		if i%81 < 40 {
			return [2]float64{0.02, 0.02}
		}
		return [2]float64{0.4, 0.2}
	}
	dC, iC, sdC, siC, note := columnPulls(t, Settings{}, sig, true, runs)
	dF, iF, sdF, siF, _ := columnPulls(t, Settings{PositionSigmaPlan: 0.4, PositionSigmaUp: 0.2}, sig, false, runs)
	t.Logf("%d runs: columns: depth pulls SD %.2f, current %.2f, mean sigmas %.4f m, %.3f A; flag at the worst: %.2f, %.2f, %.4f m, %.3f A; note %q", runs, dC, iC, sdC, siC, dF, iF, sdF, siF, note)
	if !(dC >= 0.7 && dC <= 1.4) || !(iC >= 0.7 && iC <= 1.4) {
		t.Errorf("with the columns: depth pulls SD %.2f, current %.2f, want each 0.7-1.4", dC, iC)
	}
	if !(sdC < sdF) || !(siC < siF) {
		t.Errorf("with the columns: sigmas %.4f m, %.3f A, want both smaller than with the worst value for the run (%.4f m, %.3f A)", sdC, siC, sdF, siF)
	}
	if !strings.Contains(note, "from the log's position sigma columns") {
		t.Errorf("note %q, want it to say the sigmas came from the log's columns", note)
	}
}

// TestPositionSigmasChecked checks that a negative or infinite reading's
// position sigma, or a count that does not match the points, is refused.
func TestPositionSigmasChecked(t *testing.T) {
	pts := traverse(21, -2, 2, 0, 0.3)
	f := make([][3]float64, len(pts))
	for _, c := range []struct {
		s    [][2]float64
		want string
	}{
		{make([][2]float64, 3), "position sigmas"},
		{func() [][2]float64 { s := make([][2]float64, len(pts)); s[4][0] = -0.1; return s }(), "reading 4: position sigma across the plan"},
		{func() [][2]float64 { s := make([][2]float64, len(pts)); s[7][1] = math.Inf(1); return s }(), "reading 7: position sigma in height"},
	} {
		p := &Problem{Points: pts, Fields: f, PositionSigmas: c.s}
		if err := p.validate(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("error %v, want one with %q", err, c.want)
		}
	}
}
