package main

import (
	"math"
	"math/cmplx"
	"path/filepath"
	"testing"
)

// trefoilDoc is what TestLocateTrefoilNeighbourSeeded reads of results.json.
type trefoilDoc struct {
	Groups []struct {
		Key     string  `json:"key"`
		OK      bool    `json:"ok"`
		RMS     float64 `json:"rms_nt"`
		Sources []struct {
			Kind         string  `json:"kind"`
			Current      float64 `json:"current_a"`
			CurrentSigma float64 `json:"current_sigma_a"`
			Depth        float64 `json:"depth_m"`
			DepthSigma   float64 `json:"depth_sigma_m"`
		} `json:"sources"`
	} `json:"groups"`
	Conductors []struct {
		Set           []int    `json:"polyphase_set"`
		Residual      *float64 `json:"polyphase_residual_a"`
		ResidualSigma *float64 `json:"polyphase_residual_sigma_a"`
	} `json:"conductors"`
	Findings []struct {
		Kind     string `json:"kind"`
		Severity string `json:"severity"`
		Message  string `json:"message"`
	} `json:"findings"`
}

// TestLocateTrefoilNeighbourSeeded: an unbalanced trefoil
// (testdata/scenarios/open/trefoil-unbalanced.toml: 200, 150 and 120 A at
// 0, -120 and 120 degrees, 50 Hz, 0.1 m cores, the top core 0.6823 m
// down; 12 traverses). The truth is the simulator's (inverse/simulate,
// Biot-Savart); the set's residual, the phasor sum 200 + 150 e^{-i120°} +
// 120 e^{i120°}, is 70.0 A (phasor arithmetic, computed below).
//
// Before refitFromNeighbours about one traverse in six (14 of 84 over
// seeds 1-7; 3 each at seeds 3 and 6, run here) ended in a worse local
// minimum from every start of its own: a 43 A line 0.49 m down with three
// weak lines beside it, 2.8 nT RMS where its neighbours fit the three
// cores to 0.92-1.03 nT. That gave a least cover of 0.487 m for 0.68 m,
// false current steps (18 warnings over the 7 seeds) and no three-phase
// set (no residual at any seed). Now each traverse is fitted as its
// neighbours are: its strongest line is the top core (200 A within 5
// sigma, its depth within 5 sigma and 1 cm), no current step is
// reported, and the set is named with
// its residual within 4 sigma of 70.0 A.
func TestLocateTrefoilNeighbourSeeded(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	scen := filepath.Join("..", "..", "testdata", "scenarios", "open", "trefoil-unbalanced.toml")
	want := cmplx.Abs(200 + cmplx.Rect(150, -2*math.Pi/3) + cmplx.Rect(120, 2*math.Pi/3))
	const topCore = 0.6823 // the top core's depth below up = 0 (the scenario)
	for _, seed := range []string{"3", "6"} {
		t.Run("seed"+seed, func(t *testing.T) {
			dir := t.TempDir()
			log := filepath.Join(dir, "trefoil.arrows")
			mustCLI(t, "simulate", "--seed", seed, scen, "-o", log)
			doc := locateInto[trefoilDoc](t, "--freq", "50", "--group-by", "group", "--reference-z", "0", "-o", filepath.Join(dir, "res"), log)
			for _, g := range doc.Groups {
				var lines int
				for _, s := range g.Sources {
					if s.Kind == "line" {
						lines++
					}
				}
				if !g.OK || lines < 3 || len(g.Sources) == 0 {
					t.Errorf("%s: ok %v with %d lines (%.3g nT RMS), want three cores fitted", g.Key, g.OK, lines, g.RMS)
					continue
				}
				s := g.Sources[0]
				if math.Abs(s.Current-200) > 5*s.CurrentSigma || math.Abs(s.Depth-topCore) > 5*s.DepthSigma+0.01 {
					t.Errorf("%s: strongest line %.1f ± %.1f A at %.4f ± %.4f m (%.3g nT RMS), want the top core, 200 A at %.4f m",
						g.Key, s.Current, s.CurrentSigma, s.Depth, s.DepthSigma, g.RMS, topCore)
				}
			}
			for _, f := range doc.Findings {
				if f.Kind == "current-step" || f.Kind == "current-loss" {
					t.Errorf("false finding: %s %s: %.200s", f.Severity, f.Kind, f.Message)
				}
			}
			sets := 0
			for _, c := range doc.Conductors {
				if c.Residual == nil || c.ResidualSigma == nil {
					continue
				}
				sets++
				t.Logf("set %v residual %.4f ± %.4f A (true %.4f A)", c.Set, *c.Residual, *c.ResidualSigma, want)
				// Within 4 sigmas, or 0.1 % of the residual: with the
				// stations' phasors averaged (fix-fx29a) this close trefoil
				// reads 70.026-70.029 ± 0.0025 A for 70 A on seeds 3 and 6,
				// a bias of 0.04 % that the covariance sigmas leave out
				// (written in DEVELOPERS.md Known limits). What this test
				// guards is that the set is found at all (0 of 7 seeds
				// before the neighbour-seeded refit).
				if len(c.Set) != 3 || !(math.Abs(*c.Residual-want) <= math.Max(4**c.ResidualSigma, 1e-3*want)) {
					t.Errorf("set %v residual %.4f ± %.4f A, want %.4f A", c.Set, *c.Residual, *c.ResidualSigma, want)
				}
			}
			if sets != 1 {
				t.Errorf("%d three-phase sets with a residual, want one", sets)
			}
		})
	}
}
