package inverse

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestPreIterateSameMinimum checks that iterating a large survey's starts on the
// screening subsample before polishing on every reading (preIterate) ends at the same
// minimum as polishing from the start: on one-line (level and dipping), two-line (a cable
// and its return, and a crossing), AC, path-averaged and automatic-count surveys of 279
// to 800 readings, the residual sums of squares agree to a small fraction of the noise
// variance and every reported quantity to well inside its sigma (the LM stops when
// chi-square changes by 1e-4, about 0.015 sigma), and the final fit on every reading
// takes no more iterations and stops converged. The reference is the same fit without
// the pre-iteration.
func TestPreIterateSameMinimum(t *testing.T) {
	type tc struct {
		name  string
		pts   [][3]float64
		lines []Line
		cur   []float64
		count int
		kind  string // "" DC point readings, "ac" phasors, "travel" path-averaged readings
	}
	cases := []tc{
		{"one line", grid(9, 45, 2, 0.5, 0), []Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, 1, ""},
		{"one dipping line", grid(10, 41, 2, 0.5, 0), []Line{{Point: [3]float64{-0.4, 0, -1.4}, Dir: [3]float64{-0.2, 1, -0.15}}}, []float64{-25}, 1, ""},
		{"cable and return", grid(10, 50, 3, 0.45, 0), []Line{
			{Point: [3]float64{-0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
			{Point: [3]float64{0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
		}, []float64{40, -37}, 2, ""},
		{"crossing", grid(16, 50, 3, 0.4, 0), []Line{
			{Point: [3]float64{0, 0, -1.1}, Dir: [3]float64{0, 1, 0}},
			{Point: [3]float64{0, 0.5, -1.6}, Dir: [3]float64{1, 0.2, 0}},
		}, []float64{30, 12}, 2, ""},
		{"automatic count", grid(9, 45, 2, 0.5, 0), []Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, 0, ""},
		{"AC cable and return", grid(9, 31, 2.5, 0.4, 0.05), []Line{
			{Point: [3]float64{-0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
			{Point: [3]float64{0.25, 0, -0.7}, Dir: [3]float64{0.15, 1, 0}},
		}, []float64{50, -46}, 2, "ac"},
		{"path-averaged readings", grid(9, 45, 2, 0.5, 0), []Line{{Point: [3]float64{0.2, 0, -0.8}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, 1, "travel"},
	}
	rng := rand.New(rand.NewPCG(21, 22))
	for _, c := range cases {
		for rep := range 3 {
			var p *Problem
			switch c.kind {
			case "ac":
				cur := make([]complex128, len(c.cur))
				for i, a := range c.cur {
					cur[i] = cmplx.Rect(a, 0.4)
				}
				p = &Problem{Points: c.pts, Phasors: phasorReadings(c.pts, c.lines, cur, 2, rng), Sigma: 2}
			case "travel":
				// Readings averaged over 0.2 m of walk along the traverse (east).
				trav := make([][3]float64, len(c.pts))
				f := make([][3]float64, len(c.pts))
				for i, r := range c.pts {
					trav[i] = [3]float64{0.1, 0, 0}
					f[i] = scale(fineMean(r, trav[i], 400, func(q [3]float64) [3]float64 { return c.lines[0].Field(q, c.cur[0]) }), nT)
					for j := range 3 {
						f[i][j] += 5 * rng.NormFloat64()
					}
				}
				p = &Problem{Points: c.pts, Fields: f, Travel: trav}
			default:
				p = &Problem{Points: c.pts, Fields: simulate(c.pts, c.lines, c.cur, [3]float64{17000, 1500, -44000}, 5, rng)}
			}
			set := &Settings{Count: c.count}
			fit := func(off bool) *Result {
				noPreIterate = off
				defer func() { noPreIterate = false }()
				r, err := FitLines(p, set)
				if err != nil {
					t.Fatalf("%s #%d: %v", c.name, rep, err)
				}
				return r
			}
			ref, got := fit(true), fit(false)
			if len(got.Sources) != len(ref.Sources) {
				t.Fatalf("%s #%d: %d sources, without pre-iteration %d", c.name, rep, len(got.Sources), len(ref.Sources))
			}
			s2, n := ref.Sigma*ref.Sigma, float64(3*len(c.pts))
			rssGot, rssRef := got.RMS*got.RMS*n, ref.RMS*ref.RMS*n
			if d := math.Abs(rssGot - rssRef); d > 0.01*s2 {
				t.Errorf("%s #%d: RSS %.6f, without pre-iteration %.6f (differ by %.3g noise variances)", c.name, rep, rssGot, rssRef, d/s2)
			}
			// The point of it: fewer iterations on every reading, and a proper stop.
			if !got.Status.Converged() || got.Iterations > ref.Iterations {
				t.Errorf("%s #%d: %d iterations on every reading (%v), without pre-iteration %d", c.name, rep, got.Iterations, got.Status, ref.Iterations)
			}
			t.Logf("%s #%d: %d iterations on every reading, without pre-iteration %d", c.name, rep, got.Iterations, ref.Iterations)
			for k := range ref.Sources {
				a, b := got.Sources[k], ref.Sources[k]
				for _, q := range []struct {
					what        string
					x, y, sigma float64
				}{
					{"current", a.Current, b.Current, b.CurrentSigma},
					{"depth", a.Depth, b.Depth, b.DepthSigma},
					{"offset", a.Offset, b.Offset, b.OffsetSigma},
					{"azimuth", math.Remainder(a.Azimuth-b.Azimuth, 180), 0, b.AzimuthSigma},
				} {
					if !(q.sigma > 0) || math.Abs(q.x-q.y) > 0.05*q.sigma {
						t.Errorf("%s #%d source %d: %s %.6g, without pre-iteration %.6g (sigma %.3g)", c.name, rep, k, q.what, q.x, q.y, q.sigma)
					}
				}
			}
		}
	}
}
