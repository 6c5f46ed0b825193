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

// The fixtures here are exact times, stamped as a logger's clock gives them
// (t0 + i/fs, to the float64's rounding), of invented Harrow Fen and
// Kestrel Moor logs; the model of quantised stamps is that of
// time_quantum_test.go (a sample at t stamped round(t/q) q).

// exactTimes returns the exact times of n samples at fs Hz from t0, less
// those for which drop(i) is true.
func exactTimes(n int, fs, t0 float64, drop func(i int) bool) []float64 {
	var ts []float64
	for i := range n {
		if drop == nil || !drop(i) {
			ts = append(ts, t0+float64(i)/fs)
		}
	}
	return ts
}

// TestRetimeQuantisedLeavesMissingSamples: exact times of a logger that
// misses samples step one and two intervals, as stamps of a slower
// sampling written to that interval do; a logger missing every 10th
// sample at 2000 Hz steps exactly as 1800 Hz written to 0.5 ms. These are
// left as they are: 2000 Hz missing every 10th or 19th sample (buffer
// overruns) or 12% at random, started on a whole second as the simulator
// starts; 1000 Hz missing every 10th (a long step in 9, too few for
// quantised stamps) and 1000 Hz missing every 4th but started 0.137 ms past
// the second (no stamp on the millisecond); and a 1 s base log missing
// 12% of its seconds at random. Neither is taken as quantised, nor said to
// look it.
func TestRetimeQuantisedLeavesMissingSamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(61, 62))
	const t0 = float64(quantumStart)
	random := func(p float64) func(int) bool { return func(int) bool { return rng.Float64() < p } }
	every := func(k int) func(int) bool { return func(i int) bool { return i%k == k-1 } }
	for _, c := range []struct {
		name string
		ts   []float64
	}{
		{"2000 Hz, every 10th missing", exactTimes(60000, 2000, t0, every(10))},
		{"2000 Hz, every 19th missing", exactTimes(60000, 2000, t0, every(19))},
		{"2000 Hz, 12% missing at random", exactTimes(60000, 2000, t0, random(0.12))},
		{"1000 Hz, every 10th missing", exactTimes(60000, 1000, t0, every(10))},
		{"1000 Hz off the millisecond, every 4th missing", exactTimes(60000, 1000, t0+0.137e-3, every(4))},
		{"1 s, 12% missing at random", exactTimes(3600, 1, t0, random(0.12))},
	} {
		if got, tq := RetimeQuantised(c.ts, nil); got != nil || tq != nil {
			t.Errorf("%s: taken as quantised (%+v)", c.name, tq)
		}
	}
}

// TestRetimeQuantisedFineQuantum: a quantum of a fifth of the interval or
// less is no quantisation coarser than the sampling: a 10 Hz log timed by
// a clock with ±1 ms of jitter, written to the millisecond (steps of 99,
// 100 and 101 ms), and a steady 150 Hz written to the millisecond (steps
// of 6 and 7 ms, each stamp within a thirteenth of an interval of its
// time).
func TestRetimeQuantisedFineQuantum(t *testing.T) {
	rng := rand.New(rand.NewPCG(63, 64))
	var gps []float64
	for i := range 3000 {
		gps = append(gps, math.Round((float64(quantumStart)+float64(i)*0.1+1e-3*float64(rng.IntN(3)-1))*1e3)/1e3)
	}
	_, slow, _ := stampedRuns(1, 30000, 150, 0, 1e-3)
	for name, ts := range map[string][]float64{"10 Hz with 1 ms jitter": gps, "150 Hz to the ms": slow} {
		if got, tq := RetimeQuantised(ts, nil); got != nil || tq != nil {
			t.Errorf("%s: taken as quantised (%+v)", name, tq)
		}
	}
}

// interleaved returns the rows of k sensors logging together at fs Hz
// from t0 (each sample's row in sensor order), their times stamped to q
// s (q 0: exact), and the sensor of each row.
func interleaved(k, n int, fs, q float64) (truth, stamped []float64, group []string) {
	t0 := float64(quantumStart) + 0.137e-3
	if q == 0 {
		t0 = float64(quantumStart)
	}
	for i := range n {
		tt := t0 + float64(i)/fs
		for s := range k {
			truth = append(truth, tt)
			st := tt
			if q > 0 {
				st = math.Round(tt/q) * q
			}
			stamped = append(stamped, st)
			group = append(group, fmt.Sprintf("hf-%d", s+1))
		}
	}
	return truth, stamped, group
}

// TestRetimeQuantisedInterleavedSensors: sensors whose rows interleave on
// shared stamps are each sampled on their own. Five at an exact 500 Hz are
// not quantised; five at 800 Hz written to the millisecond are, at 800 Hz,
// and every sensor's times come back on its own steady sampling.
func TestRetimeQuantisedInterleavedSensors(t *testing.T) {
	_, exact, g := interleaved(5, 10000, 500, 0)
	if got, tq := RetimeQuantised(exact, g); got != nil || tq != nil {
		t.Errorf("five sensors at an exact 500 Hz: taken as quantised (%+v)", tq)
	}
	const q = 1e-3
	truth, stamped, g := interleaved(5, 16000, 800, q)
	got, tq := RetimeQuantised(stamped, g)
	if got == nil || tq == nil || !tq.Uniform || math.Abs(1/tq.Interval-800) > 1e-3 {
		t.Fatalf("five sensors at 800 Hz to the ms: rebuilt %v, quantum %+v; want 800 Hz", got != nil, tq)
	}
	var mean float64
	for i := range truth {
		mean += got[i] - truth[i]
	}
	mean /= float64(len(truth))
	for i := range truth {
		// 800 Hz is 5/4 of a quantum: a common shift of up to q/8 (see
		// TestRetimeQuantisedMillisecondStamps).
		if d := got[i] - truth[i]; math.Abs(d-mean) > 0.02*q || math.Abs(mean) > q/8+0.02*q {
			t.Fatalf("row %d (%s): rebuilt time off the true one by %.3g s (%.3g s in common)", i, g[i], d, mean)
		}
	}
}

// writeLog writes a CSV log of times ts (and groups g, or nil) with a
// steady field, the times with format tf.
func writeLog(t *testing.T, name, tf string, ts []float64, g []string) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("time,bx,by,bz")
	if g != nil {
		b.WriteString(",group")
	}
	b.WriteString("\n")
	for i, v := range ts {
		fmt.Fprintf(&b, tf+",1500,20800,-47500", v)
		if g != nil {
			b.WriteString("," + g[i])
		}
		b.WriteString("\n")
	}
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestInspectExactStampsNotQuantised: inspect gives the rate of exact logs
// and no word of quantised stamps: five sensors logging 500 Hz each on
// shared stamps (the group column names the sensor; not 2500 Hz), 2000 Hz
// missing every 10th sample (not 1800 Hz; its missing samples are gaps), a
// 1 s base log missing 12% of its seconds, and a 10 Hz log written to the
// millisecond with ±1 ms of clock jitter.
func TestInspectExactStampsNotQuantised(t *testing.T) {
	rng := rand.New(rand.NewPCG(65, 66))
	_, fixed, g := interleaved(5, 5000, 500, 0)
	var gps []float64
	for i := range 3000 {
		gps = append(gps, float64(quantumStart)+float64(i)*0.1+1e-3*float64(rng.IntN(3)-1))
	}
	for _, c := range []struct {
		path string
		rate float64
		gaps int // at least
	}{
		{writeLog(t, "harrow-fen-fixed.csv", "%.6f", fixed, g), 500, 0},
		{writeLog(t, "kestrel-moor-drop10.csv", "%.6f", exactTimes(40000, 2000, float64(quantumStart), func(i int) bool { return i%10 == 9 }), nil), 2000, 1000},
		{writeLog(t, "kestrel-moor-base.csv", "%.0f", exactTimes(3600, 1, float64(quantumStart), func(int) bool { return rng.Float64() < 0.12 }), nil), 1, 100},
		{writeLog(t, "kestrel-moor-gps.csv", "%.3f", gps, nil), 10, 0},
	} {
		in, err := Inspect(c.path)
		if err != nil {
			t.Fatal(err)
		}
		name := filepath.Base(c.path)
		if ts := in.Time; math.Abs(ts.Rate-c.rate) > 1e-3*c.rate || ts.Quantum != nil || ts.Gaps < c.gaps {
			t.Errorf("%s: rate %.6g Hz, %d gaps, quantum %+v; want %g Hz, %d gaps or more, not quantised", name, ts.Rate, ts.Gaps, ts.Quantum, c.rate, c.gaps)
		}
		for _, w := range in.Warnings {
			if strings.Contains(w, "quantised") {
				t.Errorf("%s: %s", name, w)
			}
		}
	}
}
