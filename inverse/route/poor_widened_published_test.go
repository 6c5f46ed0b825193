package route

import (
	"math"
	"math/rand/v2"
	"testing"
)

// poorWidening is the factor by which the fits beside the loss in
// poorBesideLoss widen their sigmas for residuals correlated along the
// readings in this test: 5.7, as a walked fit beside a current step did
// through locate (inverse.Result.SigmaWidening).
const poorWidening = 5.7

// TestPoorWidenedStationPublishedAsFitted: on poorBesideLoss (simulated
// truth, Biot-Savart shares; 10 seeds) the two poor fits beside the loss
// carry sigmas widened poorWidening times for correlated residuals, with
// the factor (Station.Widening). The route sizes its steps with their
// sigmas unwidened (unwidenPoor), so the step found is the one found when
// the same fits come with their sigmas unwidened and no factor, to
// relSame; but every station is published with its fit's own sigmas, the
// caller's, exactly (widened for its misfit or the step beside it when
// modelDoubt or stepDoubt widens them, from the caller's), and the
// shallow-cover finding, made before that widening, quotes the fit's own. Before,
// Route.Stations gave the poor fits' current, depth and phase sigmas
// divided by the factor, and the report published them as the stations'
// (a least cover of 1.0814 ± 0.0016 m where the fit, and the report's
// table, gave ± 0.0089 m; truth 1.100 m).
func TestPoorWidenedStationPublishedAsFitted(t *testing.T) {
	// relSame: the two runs differ only by a multiplication and a
	// division by the factor, a few units in the last place.
	const relSame = 1e-9
	set := &Settings{MinCover: 1.5}
	for seed := uint64(1); seed <= 10; seed++ {
		white := poorBesideLoss(rand.New(rand.NewPCG(seed, 7)))
		wide := poorBesideLoss(rand.New(rand.NewPCG(seed, 7)))
		poor := 0
		for i := range wide {
			s := &wide[i]
			s.PhaseSigma = 0.5
			white[i].PhaseSigma = 0.5
			if s.Chi2/float64(s.DOF) > 100 {
				s.Widening = poorWidening
				s.CurrentSigma *= poorWidening
				s.DepthSigma *= poorWidening
				s.PhaseSigma *= poorWidening
				if poor == 0 {
					// The shallowest station, for the cover below.
					s.Depth, white[i].Depth = 0.98, 0.98
				}
				poor++
			}
		}
		if poor != 2 {
			t.Fatalf("seed %d: %d poor fits widened, want 2", seed, poor)
		}
		rw, err := Build(white, set)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Build(wide, set)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range r.Stations {
			in := wide[p.Index]
			// A fit missing its readings by more than ModelChi2, or
			// one beside the step, is published with its sigmas widened
			// for that (modelerr.go), from its fit's own.
			cs, ds := p.CurrentSigma, p.DepthSigma
			if md := p.Model; md != nil {
				cs, ds = md.FitCurrentSigma, md.FitDepthSigma
				if w := md.Widen(cs, p.Current); p.StepNear == nil && math.Abs(w-p.CurrentSigma) > relSame*w {
					t.Errorf("seed %d: %s published ± %g A, its model widening gives %g A", seed, p.Key, p.CurrentSigma, w)
				}
			} else if sn := p.StepNear; sn != nil {
				cs, ds = sn.FitCurrentSigma, sn.FitDepthSigma
			}
			if cs != in.CurrentSigma || ds != in.DepthSigma || p.PhaseSigma != in.PhaseSigma {
				t.Errorf("seed %d: %s published with sigmas %g A, %g m, %g deg; its fit gives %g A, %g m, %g deg",
					seed, p.Key, p.CurrentSigma, p.DepthSigma, p.PhaseSigma, in.CurrentSigma, in.DepthSigma, in.PhaseSigma)
			}
			if in.Widening > 1 {
				if got, want := p.RouteSigma(), in.CurrentSigma/poorWidening; math.Abs(got-want) > relSame*want {
					t.Errorf("seed %d: %s: the steps' sigma %g A, want the unwidened %g A", seed, p.Key, got, want)
				}
			}
		}
		steps, ws := findings(r, KindCurrentStep), findings(rw, KindCurrentStep)
		if len(steps) != 1 || len(ws) != 1 {
			t.Errorf("seed %d: %d and %d steps, want 1 each", seed, len(steps), len(ws))
			continue
		}
		a, _ := findingValue(&steps[0], "step")
		b, _ := findingValue(&ws[0], "step")
		if math.Abs(a.Value-b.Value) > relSame*math.Abs(b.Value) || math.Abs(a.Sigma-b.Sigma) > relSame*b.Sigma {
			t.Errorf("seed %d: step %.6f ± %.6f A from widened sigmas, %.6f ± %.6f A from unwidened", seed, a.Value, a.Sigma, b.Value, b.Sigma)
		}
		// Every station lies 1 m down, the first poor fit 0.98 m, under
		// the 1.5 m minimum: one run of shallow cover, quoted at that
		// poor fit with its own sigma.
		cov := findings(r, KindShallowCover)
		if len(cov) != 1 {
			t.Errorf("seed %d: %d shallow-cover findings, want 1", seed, len(cov))
			continue
		}
		c, _ := findingValue(&cov[0], "cover")
		var low *Station
		for i := range wide {
			if low == nil || wide[i].Depth < low.Depth {
				low = &wide[i]
			}
		}
		if low.Widening <= 1 || c.Sigma != low.DepthSigma {
			t.Errorf("seed %d: shallow cover quoted ± %g m, its station's fit ± %g m", seed, c.Sigma, low.DepthSigma)
		}
	}
}
