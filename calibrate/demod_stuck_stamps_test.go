package calibrate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// stickStamps gives every row i+1 with i%every == off the stamp of row i
// (a logger's clock that failed to tick once; the values are those of the
// reading taken one interval later).
func stickStamps(c *Columns, every, off int) *Columns {
	out := *c
	out.Time = append([]float64(nil), c.Time...)
	for i := off; i+1 < len(out.Time); i += every {
		out.Time[i+1] = out.Time[i]
	}
	return &out
}

// TestDemodulateStuckStamps: a row whose stamp repeats the row before's
// with new values (one per 100 rows) was demodulated one interval early,
// at 500 Hz a fifth of a 50 Hz cycle at the start of a window; the tone
// averaged over the log's windows then sat far outside its sigma (the
// located currents of a review's log 31-94 sigma off, phases up to 296).
// The reference is the tone the log was built with and the least-squares
// variance of a sine fit's coefficients (IEEE Std 1057: σ²/N on each RMS
// component of a window of N samples): over the M windows of a seed the
// mean of B - truth has sigma Sigma/sqrt(M) per component, and its pull
// must stay within 4 (a few seeds, six components each, so an honest pull
// reaches 3 now and then). The stale rows must be named in a warning, and
// exact duplicate rows (a copy of the row before, values too) left as
// they are: counted as repeated times, the windows fitted unchanged.
func TestDemodulateStuckStamps(t *testing.T) {
	const noise, maxPull = 5.0, 4.0
	set := DemodSettings{Freq: 50, Window: 0.2} // 100 samples at 500 Hz
	worst := 0.0
	for seed := uint64(1); seed <= 4; seed++ {
		c := acLog(rand.New(rand.NewPCG(seed, 77)), 500, 20000, 1.7e9, 50, testPhasors, noise)
		stuck := stickStamps(c, 100, 33)
		res, err := DemodulateColumns(stuck, &set)
		if err != nil {
			t.Fatal(err)
		}
		warned := false
		for _, w := range res.Warnings {
			warned = warned || strings.Contains(w, "200 rows repeat the time stamp of the row before with new values") && strings.Contains(w, "row 35,")
		}
		if !warned {
			t.Errorf("seed %d: no warning naming the 200 stale stamps, the first at row 35; warnings:\n%s", seed, strings.Join(res.Warnings, "\n"))
		}
		var sum [3]complex128
		var sig [3]float64
		for _, w := range res.Windows {
			for k := range 3 {
				sum[k] += w.B[k] - testPhasors[k]
				sig[k] += w.Sigma[k]
			}
		}
		m := float64(len(res.Windows))
		if m < 190 {
			t.Fatalf("seed %d: %d windows, want about 200", seed, len(res.Windows))
		}
		for k := range 3 {
			s := sig[k] / m / math.Sqrt(m)
			for _, d := range []float64{real(sum[k]) / m, imag(sum[k]) / m} {
				p := d / s
				worst = math.Max(worst, math.Abs(p))
				if math.Abs(p) > maxPull {
					t.Errorf("seed %d axis %d: mean B - truth %.4f nT, %.1f sigma (sigma %.4f)", seed, k, d, p, s)
				}
			}
		}
	}
	t.Logf("largest pull of the mean phasor over 4 seeds: %.2f", worst)

	// Exact duplicates: not re-timed, counted as repeated times.
	c := acLog(rand.New(rand.NewPCG(9, 77)), 500, 4000, 1.7e9, 50, testPhasors, noise)
	dup := columnsRepeating(c, func(i int) bool { return i%100 == 33 })
	if _, rows := stuckColumns(dup); rows != nil {
		t.Errorf("exact duplicate rows taken for stale stamps: rows %v", rows)
	}
	res, err := DemodulateColumns(dup, &set)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Losses) == 0 || res.Losses[0].Repeats == 0 {
		t.Errorf("exact duplicates not counted as repeated times: %+v", res.Losses)
	}
	for _, w := range res.Warnings {
		if strings.Contains(w, "stuck clock") {
			t.Errorf("exact duplicates warned of as stale stamps: %s", w)
		}
	}

	// The Samples form, as the command line calls it (times to 1e-6 s, a
	// few float64 steps at 1.7e9 s), and stamps whose
	// sampling around them is not steady (a pause just after) are left.
	s := &ingest.Samples{Time: stuck4(c.Time), Bx: c.B[0], By: c.B[1], Bz: c.B[2]}
	rs, rows := RetimeStuck(s)
	if len(rows) != 1 || rows[0] != 11 || rs == s || math.Abs(rs.Time[11]-c.Time[11]) > 1e-6 || s.Time[11] != c.Time[10] {
		t.Errorf("RetimeStuck: rows %v, time %v (written %v), want row 11 at %v and the input untouched", rows, rs.Time[11], s.Time[11], c.Time[11])
	}
}

// stuck4 gives row 11 row 10's stamp and row 21 row 20's with a pause of
// four intervals after it (not steady: left as it is).
func stuck4(t []float64) []float64 {
	out := append([]float64(nil), t...)
	out[11] = out[10]
	out[21] = out[20]
	for i := 22; i < len(out); i++ {
		out[i] += 3 * (t[1] - t[0])
	}
	return out
}

// TestDemodulateOneTime: a log whose every row carries one time (a time
// column a spreadsheet saved to six significant figures) was refused with
// "fewer than two samples in time order", which names no cause; the error
// now says every row has the same time and asks whether it was rounded.
func TestDemodulateOneTime(t *testing.T) {
	c := acLog(nil, 500, 1000, 1.7e9, 50, testPhasors, 0)
	for i := range c.Time {
		c.Time[i] = 1.77841e9
	}
	_, err := DemodulateColumns(c, &DemodSettings{Freq: 50})
	if err == nil || !strings.Contains(err.Error(), "every one of the 1000 rows has the same time") || !strings.Contains(err.Error(), "rounded") {
		t.Errorf("every row at one time: %v, want the cause named", err)
	}
}

// TestStuckRowsNotQuantised: stamps written more coarsely than the
// sampling (2 kHz floored to the millisecond: two rows a stamp) repeat
// at every other row; with a row dropped now and then, a repeated stamp
// before a gap of a whole stamp had passed as a stale one and been moved
// by up to half a sample (found in review: 11 rows on one log). Such stamps are left to
// the quantised-stamp re-timing; one stale stamp in a hundred on the same
// sampling, stamped to the microsecond, is still found. Fails before the
// change.
func TestStuckRowsNotQuantised(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	var tq, tf []float64
	for i := 0; i < 20000; i++ {
		switch r := rng.IntN(200); {
		case r < 2: // a row dropped
			continue
		case r == 2: // a block of 2 or 3 rows dropped
			i += 1 + rng.IntN(2)
			continue
		}
		ts := 1.7e9 + float64(i)/2000
		tq = append(tq, math.Floor(ts*1000)/1000)
		tf = append(tf, math.Round(ts*1e6)/1e6)
	}
	n := len(tq)
	var b [3][]float64
	for k := range b {
		b[k] = make([]float64, n)
		for i := range b[k] {
			b[k][i] = rng.NormFloat64()
		}
	}
	if out, rows := stuckRows(tq, b, nil); out != nil || rows != nil {
		t.Errorf("millisecond stamps at 2 kHz: %d rows taken for stale stamps, want none", len(rows))
	}
	stale := 0
	for i := 50; i+1 < n; i += 100 {
		if tf[i+1]-tf[i] < 0.0006 { // the next row is the next sample
			tf[i+1] = tf[i]
			stale++
		}
	}
	if _, rows := stuckRows(tf, b, nil); len(rows) < stale*9/10 || len(rows) > stale {
		t.Errorf("microsecond stamps with %d stale ones: %d re-timed", stale, len(rows))
	}
}
