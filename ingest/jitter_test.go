package ingest

import (
	"math"
	"math/rand/v2"
	"testing"
)

// clockLog simulates the stamps of a logger sampling at 1 kHz on a steady
// clock from the Unix time 1777712400 s: three groups of 8000 samples
// each, 5 s apart, sample 4000 of the second group missing (simulated
// truth). It returns the true instants, the groups, and the rows kept.
func clockLog() (truth []float64, g []string) {
	const t0, dt = 1777712400.0, 1e-3
	for k := 0; k < 3; k++ {
		start := t0 + float64(k)*13
		for i := 0; i < 8000; i++ {
			if k == 1 && i == 4000 {
				continue
			}
			truth = append(truth, start+float64(i)*dt)
			g = append(g, string(rune('A'+k)))
		}
	}
	return truth, g
}

// TestRetimeJitteredStamps: stamps written with ±0.25 ms of uniform jitter
// about a steady 1 kHz clock (a host clock stamping the rows; simulated
// truth) are rebuilt on the clock: the rebuilt times lie within a few
// times the clock line's own error (the jitter's 0.144 ms RMS over the
// square root of a group's 8000 rows, 1.6 µs) of the true instants, the
// missing sample keeps its gap, the scatter found is the jitter's, and
// GroupSigma gives each group's line error. Before, such stamps were
// taken as they were.
func TestRetimeJitteredStamps(t *testing.T) {
	truth, g := clockLog()
	rng := rand.New(rand.NewPCG(1, 2))
	const J = 2.5e-4
	stamps := make([]float64, len(truth))
	for i, v := range truth {
		stamps[i] = v + J*(2*rng.Float64()-1)
	}
	out, tj := RetimeJittered(stamps, g)
	if out == nil {
		t.Fatal("jittered stamps not re-timed")
	}
	want := J / math.Sqrt(3) // RMS of a uniform ±J
	if math.Abs(tj.Scatter-want) > 0.05*want {
		t.Errorf("scatter %.4g s, want %.4g s", tj.Scatter, want)
	}
	if math.Abs(tj.StepCorrelation+0.5) > 0.05 {
		t.Errorf("step correlation %.3f, want -0.5", tj.StepCorrelation)
	}
	line := want / math.Sqrt(8000)
	for k, s := range tj.GroupSigma {
		if math.Abs(s-line) > 0.05*line {
			t.Errorf("group %s: clock sigma %.3g s, want %.3g s", k, s, line)
		}
	}
	var worst float64
	for i := range truth {
		worst = math.Max(worst, math.Abs(out[i]-truth[i]))
	}
	// The line's error at a run's ends: its offset and slope errors,
	// each about line, the slope's times sqrt(3) at an end.
	if worst > 5*line {
		t.Errorf("re-timed times off the true instants by up to %.3g s, want under %.3g s", worst, 5*line)
	}
	if d := out[12000] - out[11999]; math.Abs(d-2e-3) > 1e-5 {
		t.Errorf("the missing sample's step is %.6g s, want 0.002 s", d)
	}
}

// TestRetimeJitteredLeavesExactStamps: stamps that are not jittered are
// left alone: exact times of the steady clock (as float64 Unix seconds
// hold them), exact times of a sampling whose intervals really vary
// (1 ms ± 0.25 ms uniform, each sample stamped when it was taken: the
// times wander from any line as a random walk and successive steps are
// uncorrelated), and a clock whose rate drifts smoothly by 200 ppm over
// a group (simulated truth).
func TestRetimeJitteredLeavesExactStamps(t *testing.T) {
	truth, g := clockLog()
	if out, tj := RetimeJittered(truth, g); out != nil {
		t.Errorf("exact stamps re-timed: %+v", tj)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	walk := make([]float64, len(truth))
	for i := range truth {
		if i == 0 || g[i] != g[i-1] {
			walk[i] = truth[i]
			continue
		}
		walk[i] = walk[i-1] + 1e-3 + 2.5e-4*(2*rng.Float64()-1)
	}
	if out, tj := RetimeJittered(walk, g); out != nil {
		t.Errorf("exact stamps of an irregular sampling re-timed: %+v", tj)
	}
	drift := make([]float64, len(truth))
	for i := range truth {
		if i == 0 || g[i] != g[i-1] {
			drift[i] = truth[i]
			continue
		}
		x := float64(i%8000) / 8000
		drift[i] = drift[i-1] + 1e-3*(1+2e-4*math.Sin(2*math.Pi*x))
	}
	if out, tj := RetimeJittered(drift, g); out != nil {
		t.Errorf("stamps of a drifting clock re-timed: %+v", tj)
	}
}
