package calibrate

import (
	"math/rand/v2"
	"strings"
	"testing"
)

// TestSkipFailedFreqKeepsTheRest: with EstimateFreq, a window whose
// four-parameter fit fails (here a window in which no axis varies, so
// there is no frequency to fit) fails the whole demodulation unless
// SkipFailedFreq is set; then that window alone is left out and counted,
// and the others still give the simulated 49.93 Hz.
func TestSkipFailedFreqKeepsTheRest(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 24))
	c := acLog(rng, 2000, 4000, 1.7e9, 49.93, testPhasors, 1)
	// Rows 800-1199 (the fifth 0.2 s window) held still.
	for k := 0; k < 3; k++ {
		for i := 800; i < 1200; i++ {
			c.B[k][i] = 1000
		}
	}
	set := DemodSettings{Freq: 50, Window: 0.2, EstimateFreq: true}
	if _, err := DemodulateColumns(c, &set); err == nil || !strings.Contains(err.Error(), "rows 800-1199") {
		t.Fatalf("without SkipFailedFreq: err = %v, want one naming rows 800-1199", err)
	}
	set.SkipFailedFreq = true
	res, err := DemodulateColumns(c, &set)
	if err != nil {
		t.Fatal(err)
	}
	if res.FreqFailed != 1 || len(res.Windows) != 9 || len(res.Losses) != 0 {
		t.Errorf("%d failed, %d windows, losses %v; want 1, 9 and none", res.FreqFailed, len(res.Windows), res.Losses)
	}
	for _, w := range res.Windows {
		if w.Freq < 49.9 || w.Freq > 49.96 {
			t.Errorf("window at %g s: %.4f Hz, want about 49.93", w.Time-1.7e9, w.Freq)
		}
	}
}
