package ingest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The model of quantised stamps is the rounding itself: a sample taken at
// t is stamped round(t/q) q, so its stamp is within q/2 of t. The tests
// build the true times of a steady sampling, stamp them so, and want the
// true times back (fixtures: an invented Harrow Fen logger at Unix times of
// 2026, start from `date -u -d 2026-12-01T06:00:00Z +%s`).
const quantumStart = 1796104800

// stampedRuns returns the true times of runs of n samples at rate fs Hz
// with pause s between them, the times stamped to q s (rounded), and a
// group per run. The first sample is 0.137 ms past the second: a logger
// starts when it is switched on, and a sample that fell exactly half
// way between two stamps would be rounded by the float64 of its time,
// which no rebuilding can know.
func stampedRuns(runs, n int, fs, pause, q float64) (truth, stamped []float64, group []string) {
	t0 := float64(quantumStart) + 0.137e-3
	for r := range runs {
		for i := range n {
			// The sample's time from the run start: i/fs, exact to the
			// float64 rounding of the absolute time.
			tt := t0 + float64(i)/fs
			truth = append(truth, tt)
			stamped = append(stamped, math.Round(tt/q)*q)
			group = append(group, fmt.Sprintf("T%d", r+1))
		}
		t0 += float64(n)/fs + pause
	}
	return truth, stamped, group
}

// TestRetimeQuantisedMillisecondStamps: steady sampling at 400 to 3200 Hz
// written to the millisecond (steps of 1 and 2 ms at 800 Hz, of 0 and 1 ms
// at 1600 Hz) in three runs with pauses of 60 s. The rate comes back to a
// part in a million and the rebuilt times follow the true ones to 2% of a
// quantum, where the stamps were up to half a quantum off; the pauses are
// kept. When the interval is a ratio p/r of quanta in lowest terms (5/4
// at 800 Hz) the stamps repeat every r samples and fix the times only to
// within q/(2r), the same shift for all of them: that common part is
// allowed that much; at a rate a crystal's 17 ppm off (the stamps then
// never repeat) it is not.
func TestRetimeQuantisedMillisecondStamps(t *testing.T) {
	const q = 1e-3
	for _, c := range []struct {
		fs float64
		r  int // the denominator of the interval in quanta, 0: none
	}{{800, 4}, {1600, 8}, {3200, 16}, {600, 3}, {400, 2}, {800 * (1 + 17e-6), 0}, {1600 * (1 - 17e-6), 0}} {
		fs := c.fs
		truth, stamped, group := stampedRuns(3, 32000, fs, 60, q)
		for _, g := range [][]string{group, nil} {
			got, tq := RetimeQuantised(stamped, g)
			if tq == nil || !tq.Uniform || got == nil {
				t.Fatalf("%g Hz: not found quantised (%+v)", fs, tq)
			}
			if math.Abs(tq.Quantum-q) > 1e-6 || math.Abs(1/tq.Interval-fs) > 1e-6*fs {
				t.Errorf("%g Hz: quantum %g s, rate %.9g Hz, want 0.001 s and %.9g Hz", fs, tq.Quantum, 1/tq.Interval, fs)
			}
			if tq.Runs != 3 || tq.Rows != len(truth) {
				t.Errorf("%g Hz: %d runs of %d rows, want 3 of %d", fs, tq.Runs, tq.Rows, len(truth))
			}
			var mean, before float64
			for i := range truth {
				mean += got[i] - truth[i]
				before = math.Max(before, math.Abs(stamped[i]-truth[i]))
			}
			mean /= float64(len(truth))
			var worst float64
			for i := range truth {
				worst = math.Max(worst, math.Abs(got[i]-truth[i]-mean))
			}
			common := 0.02 * q
			if c.r > 0 {
				common += q / float64(2*c.r)
			}
			if worst > 0.02*q || math.Abs(mean) > common {
				t.Errorf("%g Hz: rebuilt times off the true ones by %.3g s in common and up to %.3g s more (the stamps up to %.3g s); want under %.3g and %.3g s",
					fs, mean, worst, before, common, 0.02*q)
			}
		}
	}
}

// TestRetimeQuantisedLeavesExactLogs: stamps that are the sampling's own
// times are not quantised, even where the logger missed samples (steps of
// one and two intervals, like the steps of a quantised log): a steady log,
// one missing 1% of its samples at random (whose long steps no line
// through the stamps keeps within an interval), and one missing three.
func TestRetimeQuantisedLeavesExactLogs(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	steady, _, _ := stampedRuns(2, 20000, 1000, 30, 1e-3)
	var missing1, missing3 []float64
	for i, v := range steady {
		if rng.Float64() >= 0.01 {
			missing1 = append(missing1, v)
		}
		if i != 5000 && i != 9000 && i != 15000 {
			missing3 = append(missing3, v)
		}
	}
	for name, ts := range map[string][]float64{"steady": steady, "1% missing": missing1, "3 missing": missing3} {
		if got, tq := RetimeQuantised(ts, nil); got != nil || tq != nil {
			t.Errorf("%s: taken as quantised (%+v)", name, tq)
		}
	}
}

// TestRetimeQuantisedJitter: a 1600 Hz logger whose samples jitter by
// ±0.4 ms about their slots, stamped to the millisecond, steps 0 and 1 ms
// like a steady one but strays up to 0.9 ms from any line: it looks
// quantised, and is not rebuilt.
func TestRetimeQuantisedJitter(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 44))
	var ts []float64
	last := math.Inf(-1)
	for i := range 20000 {
		tt := float64(quantumStart) + float64(i)/1600 + 0.4e-3*(2*rng.Float64()-1)
		s := math.Max(math.Round(tt/1e-3)*1e-3, last) // a logger's times do not go back
		ts = append(ts, s)
		last = s
	}
	got, tq := RetimeQuantised(ts, nil)
	if got != nil || tq == nil || tq.Uniform || math.Abs(tq.Quantum-1e-3) > 1e-6 {
		t.Errorf("rebuilt %v, quantum %+v; want it found quantised to 1 ms but not steady", got != nil, tq)
	}
}

// TestInspectQuantisedStamps: inspect of the 800 Hz log written to the
// millisecond gives the sampling's 800 Hz, not the 1000 Hz of the median
// step, counts the two pauses as the only gaps, and says why.
func TestInspectQuantisedStamps(t *testing.T) {
	_, stamped, group := stampedRuns(3, 8000, 800, 60, 1e-3)
	var b strings.Builder
	b.WriteString("time,bx,by,bz,group\n")
	for i, v := range stamped {
		fmt.Fprintf(&b, "%.3f,1000,2000,-45000,%s\n", v, group[i])
	}
	p := filepath.Join(t.TempDir(), "harrow-fen-800.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	in, err := Inspect(p)
	if err != nil {
		t.Fatal(err)
	}
	ts := in.Time
	if math.Abs(ts.Rate-800) > 1e-3 || ts.Gaps != 2 || ts.Quantum == nil || !ts.Quantum.Uniform {
		t.Errorf("rate %.6g Hz, %d gaps, quantum %+v; want 800 Hz, 2 gaps, quantised", ts.Rate, ts.Gaps, ts.Quantum)
	}
	found := false
	for _, w := range in.Warnings {
		found = found || strings.Contains(w, "quantised to 0.001 s") && strings.Contains(w, "800 Hz") && strings.Contains(w, "not gaps or repeated rows")
	}
	if !found {
		t.Errorf("no warning of the quantised stamps: %q", in.Warnings)
	}
}
