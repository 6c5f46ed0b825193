package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// sideBySideLines is two same-way cables 0.3 m apart side by side, 1.0 m
// below the ground and running north, carrying 10 and 6 A (a review
// scenario, invented site), under a traverse of readings 0.1 m apart at
// 0.3 m.
func sideBySideLines() ([][3]float64, []Line, []float64) {
	pts := traverse(101, -5, 5, 0, 0.3)
	lines := []Line{
		{Point: [3]float64{-0.15, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0.15, 0, -1.0}, Dir: [3]float64{0, 1, 0}},
	}
	return pts, lines, []float64{10, 6}
}

// TestNoiseFloorIgnoresCurvature checks the noise the fitter reads from the
// readings themselves (noiseFloor, no Problem.Sigma) against the simulated
// noise, 2 nT, over the two cables of sideBySideLines: the field's own
// curvature at 0.1 m spacing over a conductor 1.3 m under the sensors raised
// the second-difference estimate to 2.5 nT (25% high, so a one-line fit
// missing by 1.35 times the noise passed as at the noise). The mean over 20
// noise draws must be within 5% of 2 nT (the estimate's own spread is about
// 9% per draw on these 303 values, so 2% on the mean).
func TestNoiseFloorIgnoresCurvature(t *testing.T) {
	pts, lines, cur := sideBySideLines()
	const sigma = 2.0
	var sum float64
	const draws = 20
	for seed := range uint64(draws) {
		f := simulate(pts, lines, cur, [3]float64{-150, 19200, -45100}, sigma, rand.New(rand.NewPCG(seed, 93)))
		p := &Problem{Points: pts, Fields: f}
		s := (&Settings{Count: 1}).orDefault()
		scr := scratchPool.Get().(*scratch)
		ft := &fitter{sv: newSurveyIn(p, scr), set: &s, prob: p, scr: scr}
		sum += ft.noiseFloor()
		scr.release()
		scratchPool.Put(scr)
	}
	if mean := sum / draws; math.Abs(mean-sigma) > 0.05*sigma {
		t.Errorf("noise read from the readings: mean %.3f nT over %d draws, want %.1f nT within 5%%", mean, draws, sigma)
	}
}

// TestSideBySideSameWayNote: over the cables of sideBySideLines with 2 nT
// of noise, the automatic count keeps one line on most traverses (the
// second line's current is not resolved), and that line misses the
// readings by about 1.35 times their noise (16.1 A, 15 sigma above the
// 16 A the two carry). A fit kept so must carry UnresolvedLinesNote; with
// the noise read from second differences it did on one traverse in six.
// Each of 6 noise draws: either two lines, or one with the note.
func TestSideBySideSameWayNote(t *testing.T) {
	pts, lines, cur := sideBySideLines()
	z0 := 0.0
	missing, one := 0, 0
	for seed := range uint64(6) {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			f := simulate(pts, lines, cur, [3]float64{-150, 19200, -45100}, 2, rand.New(rand.NewPCG(seed, 94)))
			res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{ReferenceZ: &z0})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Sources) == 1 {
				one++
			}
			if len(res.Sources) == 1 && !slices.ContainsFunc(res.Notes, func(n string) bool { return strings.HasPrefix(n, UnresolvedLinesNote) }) {
				missing++
				e := res.Sources[0]
				t.Logf("one line (%.4f ± %.4f A, RMS %.3g nT against 2 nT noise) without the note; criteria %+v", e.Current, e.CurrentSigma, res.RMS, res.Criteria)
			}
		})
	}
	// The check on the fit's RMS against 1.2 times the noise read from the
	// readings is statistical (that estimate spreads by about 9%): one
	// draw in six may pass.
	if one == 0 {
		t.Errorf("every traverse fitted two lines: the case this test is for did not arise")
	}
	if missing > 1 {
		t.Errorf("%d of 6 traverses kept one line without %q", missing, UnresolvedLinesNote)
	}
}
