package report

import (
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// teeDoc simulates testdata/scenarios/open/tee.toml (the invented Corran
// Leys tee) with seed and builds its document (scenarioDoc).
func teeDoc(t *testing.T, seed int64) *Document {
	t.Helper()
	return scenarioDoc(t, filepath.Join("open", "tee.toml"), seed)
}

// scenarioDoc simulates the scenario file name under testdata/scenarios
// with seed, fits each traverse as the locate command does (one or two
// lines, depths below the ground at up = 0, the noise estimated from the
// residuals) and builds the document, each group's noise measured from the
// second differences of successive readings as the locate command measures
// it (cmd/undercurrent dcnoise.go).
func scenarioDoc(t *testing.T, name string, seed int64) *Document {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", name))
	if err != nil {
		t.Fatal(err)
	}
	sc.Seed = seed
	return simulatedDoc(t, sc)
}

// simulatedDoc simulates scenario sc, fits each group's readings as locate would
// (ground at up = 0; the measured noise from second differences) and builds the document.
func simulatedDoc(t *testing.T, sc *simulate.Scenario) *Document {
	t.Helper()
	return simulatedDocWith(t, sc, &BuildSettings{})
}

// simulatedDocWith is simulatedDoc building the document with settings bs.
func simulatedDocWith(t *testing.T, sc *simulate.Scenario, bs *BuildSettings) *Document {
	t.Helper()
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	ground := 0.0
	var fits []Fit
	for _, k := range keys {
		p := byKey[k]
		res, err := inverse.FitLines(p, &inverse.Settings{ReferenceZ: &ground})
		fits = append(fits, Fit{Key: k, Problem: p, Result: res, Err: err, MeasuredNoise: secondDiffNoise(p.Fields)})
	}
	d, err := Build(Document{}, fits, bs)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// secondDiffNoise is the noise per axis of readings f in the order taken:
// the second difference of independent readings of noise sigma has
// variance (1 + 4 + 1) sigma^2, and its scale is taken robustly as the
// median absolute value over 0.6745, the median of |Z| for a standard
// normal Z.
func secondDiffNoise(f [][3]float64) float64 {
	var d []float64
	for i := 1; i+1 < len(f); i++ {
		for k := range 3 {
			d = append(d, math.Abs(f[i-1][k]-2*f[i][k]+f[i+1][k]))
		}
	}
	return median(d) / 0.6744897501960817 / math.Sqrt(6)
}

// TestTeeScenarioSteps: end to end on the tee. Kirchhoff's current law
// gives one fall of the branch's 15 A at the tee (chainage 26 m, between
// T07 and T08) and no other change of current: before the fix seeds 2, 5
// and 7 also reported a fall of 0.84-0.86 A between T10 and T11, where the
// branch's field, beyond the traverses' ends, pulls the one-line fits low
// while their misfit passed against the survey's median noise estimate.
// The fall's sigma must cover its error (within 3 sigma of 15 A) and the
// finding must say that the fits beside the tee miss their readings.
func TestTeeScenarioSteps(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 15 traverses per seed")
	}
	for _, seed := range []int64{2, 14, 21} {
		d := teeDoc(t, seed)
		big := 0
		for _, f := range d.Findings {
			if f.Kind != "current-step" && f.Kind != "current-change" {
				continue
			}
			if f.ChainageFrom >= 27 {
				t.Errorf("seed %d: a change of current past the tee, where 25 A flow throughout: %s", seed, f.Message)
				continue
			}
			if len(f.Values) == 0 || math.Abs(f.Values[0].Value) < 5 {
				continue
			}
			big++
			v := f.Values[0]
			if z := (-v.Value - 15) / v.Sigma; math.Abs(z) > 3 {
				t.Errorf("seed %d: fall %.4g ± %.2g A, %.1f sigma from the branch's 15 A: %s", seed, -v.Value, v.Sigma, z, f.Message)
			}
			if f.ChainageFrom > 26 || f.ChainageTo < 26 {
				t.Errorf("seed %d: fall bracketed %.1f-%.1f m, not holding the tee at 26 m", seed, f.ChainageFrom, f.ChainageTo)
			}
			if !strings.Contains(f.Message, "times the noise measured from them") {
				t.Errorf("seed %d: the fall does not say the fits beside the tee miss their readings: %s", seed, f.Message)
			}
		}
		if big != 1 {
			t.Errorf("seed %d: %d changes of more than 5 A, want the one at the tee", seed, big)
		}
	}
}

// groupProblems splits simulated readings s into one problem per group,
// with the group keys sorted.
func groupProblems(s *ingest.Samples) (map[string]*inverse.Problem, []string) {
	byKey := map[string]*inverse.Problem{}
	var keys []string
	for i := range s.Time {
		k := s.Group[i]
		p := byKey[k]
		if p == nil {
			p = &inverse.Problem{}
			byKey[k] = p
			keys = append(keys, k)
		}
		p.Points = append(p.Points, [3]float64{s.X[i], s.Y[i], s.Z[i]})
		p.Fields = append(p.Fields, [3]float64{s.Bx[i], s.By[i], s.Bz[i]})
	}
	sort.Strings(keys)
	return byKey, keys
}
