package calibrate

import (
	"fmt"
	"math"
	"sort"

	"undercurrent/ingest"
)

// Stuck time stamps: a logger whose clock fails to tick for one sample
// writes the stamp of the row before again on a reading taken one interval
// later (the values are new, only the stamp is stale). Demodulated at its
// written time, that reading sits one interval early: at 500 Hz and 50 Hz
// a tenth of a cycle. One such row per 100 put currents 31-94 sigma and
// phases up to 296 sigma off while the residuals stayed at the noise
// (found in review), since the row started a run of its own and the
// window that began there was fitted on the wrong time. Where the
// sampling around it is steady the row's time is known: its place in the
// sampling, midway between its neighbours (for k stale rows in a row, the
// k places evenly between). An exact duplicate row (the same values as
// the row before) is no stuck stamp and is left as it is: it is a copy of
// a reading at its right time.

// maxStuckRows is the longest stretch of stale stamps re-timed: k rows
// after the row whose stamp they repeat.
const maxStuckRows = 4

// quantisedShare is the share of repeated stamps among a log's steps
// beyond which they are taken for stamps coarser than the sampling, not a
// stuck clock: a clock failing to tick now and then repeats a stamp at a
// few rows in a hundred, stamps written to a quantum of two or more
// sample intervals at every other row or more often.
const quantisedShare = 0.1

// stuckTolerance is how far, in sample intervals, a step may be off the
// log's interval and still count as steady sampling around a stale stamp.
const stuckTolerance = 0.25

// stuckRows finds stale stamps in t (rows whose stamp equals the row
// before's where the sampling around them is steady; see above) and
// returns the times with those rows re-timed and the rows (0-based, in
// order); nil and nil when there is none. b are the field columns (a row
// whose values equal the row before's is a duplicate, not a stale stamp);
// g the groups (nil: none).
func stuckRows(t []float64, b [3][]float64, g []string) ([]float64, []int) {
	n := len(t)
	same := func(i, j int) bool { return g == nil || g[i] == g[j] }
	// The sampling interval: the median positive step within groups
	// (from up to 65536 steps).
	var d []float64
	repeats := 0
	for i := 1; i < n; i++ {
		if !same(i, i-1) {
			continue
		}
		s := t[i] - t[i-1]
		if s == 0 {
			repeats++
		} else if s > 0 && len(d) < 1<<16 {
			d = append(d, s)
		}
	}
	if repeats == 0 || len(d) < 4 {
		return nil, nil
	}
	if float64(repeats) > quantisedShare*float64(repeats+len(d)) {
		// Repeats this common are stamps written more coarsely than the
		// sampling (2 kHz stamped to the millisecond repeats every other
		// row), which the quantised-stamp re-timing handles: the median
		// step is then the quantum, not the interval, and a repeated
		// stamp before a row dropped looked steady (found in review: 11
		// such rows re-timed by up to half a sample on one log).
		return nil, nil
	}
	sort.Float64s(d)
	dt := d[len(d)/2]
	if !(dt > 0) || math.IsInf(dt, 0) {
		return nil, nil
	}
	steady := func(step float64, k int) bool {
		return math.Abs(step-float64(k)*dt) <= stuckTolerance*dt
	}
	dup := func(i, j int) bool {
		return b[0][i] == b[0][j] && b[1][i] == b[1][j] && b[2][i] == b[2][j]
	}
	var out []float64
	var rows []int
	prev := func(i int) float64 { // row i's time, re-timed or not
		if out != nil {
			return out[i]
		}
		return t[i]
	}
	for a := 0; a < n-1; {
		// [a, e): rows sharing a's stamp. The clock knows no groups: a
		// stale stamp may open a group (the row after a change written
		// with the stamp of the last row before it).
		e := a + 1
		for e < n && t[e] == t[a] {
			e++
		}
		k := e - a - 1 // stale rows after a
		ok := k > 0 && k <= maxStuckRows && e < n &&
			steady(t[e]-t[a], k+1) &&
			(a == 0 || steady(t[a]-prev(a-1), 1))
		for i := a + 1; ok && i < e; i++ {
			ok = !dup(i, i-1)
		}
		if ok {
			if out == nil {
				out = append([]float64(nil), t...)
			}
			for i := a + 1; i < e; i++ {
				out[i] = t[a] + float64(i-a)*(t[e]-t[a])/float64(k+1)
				rows = append(rows, i)
			}
		}
		a = e
	}
	return out, rows
}

// RetimeStuck returns s with its stale stamps re-timed to their place in
// the sampling (rows whose stamp repeats the row before's, with new
// values, where the sampling around them is steady; a shallow copy, s
// untouched) and the rows re-timed (0-based, in order). It returns s
// itself and nil when there is none (exact duplicate rows are left as
// they are). Demodulate does the same, with a warning naming the rows by
// their index; a caller that knows the rows' lines in a file calls this
// first and names them (StuckWarning). A nil s gives nil and nil.
func RetimeStuck(s *ingest.Samples) (*ingest.Samples, []int) {
	if s == nil || len(s.Bx) != len(s.Time) || len(s.By) != len(s.Time) || len(s.Bz) != len(s.Time) ||
		(s.Group != nil && len(s.Group) != len(s.Time)) {
		return s, nil
	}
	t, rows := stuckRows(s.Time, [3][]float64{s.Bx, s.By, s.Bz}, s.Group)
	if t == nil {
		return s, nil
	}
	c := *s
	c.Time = t
	return &c, rows
}

// StuckWarning words what was done about n stale stamps, the first at
// where ("line 12", say).
func StuckWarning(n int, where string) string {
	what := fmt.Sprintf("%d rows repeat the time stamp of the row before with new values", n)
	if n == 1 {
		what = "1 row repeats the time stamp of the row before with new values"
	}
	return fmt.Sprintf("%s (a stuck clock; the first on %s) where the sampling around them is steady: each was re-timed to its place in the sampling, midway between its neighbours, before demodulation, as at its written time it would be demodulated one sample interval early; fix the logger's clock", what, where)
}

// stuckColumns is RetimeStuck for DemodulateColumns: c itself, or a copy
// with the stale stamps re-timed, and the rows re-timed.
func stuckColumns(c *Columns) (*Columns, []int) {
	t, rows := stuckRows(c.Time, c.B, c.Group)
	if t == nil {
		return c, nil
	}
	r := *c
	r.Time = t
	return &r, rows
}
