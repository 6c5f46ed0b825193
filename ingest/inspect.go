package ingest

import (
	"container/heap"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow/array"
)

// Inspection summarises a log: what was mapped to what, the time span,
// the sampling, gaps, value ranges, missing values and guesses about units
// that look wrong. It is what "undercurrent inspect" prints.
type Inspection struct {
	File     string            `json:"file"`
	Format   string            `json:"format"`
	Rows     int               `json:"rows"`
	Frame    string            `json:"frame"`
	Origin   *Geodetic         `json:"origin,omitempty"`
	Columns  []ColumnStats     `json:"columns"`
	Unused   []string          `json:"unused_columns"`
	Time     TimeStats         `json:"time"`
	Meta     map[string]string `json:"meta,omitempty"`
	Warnings []string          `json:"warnings"`
	// NoTime: the log has no time column (opened with WithTimeOptional);
	// Time is empty and the time column is not counted as missing.
	NoTime bool `json:"no_time,omitempty"`
}

// ColumnStats describes one canonical column. Min, Max and Mean are in
// canonical units over the values present; nil when every value is missing.
type ColumnStats struct {
	ColumnMapping
	Min     *float64 `json:"min"`
	Max     *float64 `json:"max"`
	Mean    *float64 `json:"mean"`
	Missing int      `json:"missing"`
}

// TimeStats describes the time column. Interval is the median step
// between rows; a gap is a step longer than GapFactor times it.
type TimeStats struct {
	Start       float64 `json:"start"`
	End         float64 `json:"end"`
	StartUTC    string  `json:"start_utc,omitempty"` // when times look like Unix seconds
	EndUTC      string  `json:"end_utc,omitempty"`
	Duration    float64 `json:"duration"`
	Interval    float64 `json:"interval"`
	Rate        float64 `json:"rate"`
	Gaps        int     `json:"gaps"`
	GapsAtLeast bool    `json:"gaps_at_least,omitempty"` // Gaps is a lower bound
	Largest     []Gap   `json:"largest_gaps"`
	Backwards   int     `json:"backwards"`
	// Repeated counts the rows whose time is that of an earlier row of
	// the same group at that time stamp (with a group column: sensors
	// logged on shared stamps repeat nothing), else of the row before.
	Repeated int `json:"repeated"`
	// Quantum describes stamps quantised to a resolution coarser than the
	// sampling (RetimeQuantised, from the first rows kept for the median);
	// nil when they are not. When they fit a steady sampling, Interval and
	// Rate are that sampling's (not the median step), and a gap is a step
	// longer than both of the quantised steps as well.
	Quantum *TimeQuantum `json:"quantum,omitempty"`
}

// Gap is a long step in time, after row Row (0-based).
type Gap struct {
	Row    int     `json:"row"`
	Start  float64 `json:"start"`
	Length float64 `json:"length"`
}

// GapFactor: a step longer than GapFactor times the median step is a gap.
const GapFactor = 1.5

const (
	keepSteps = 1 << 20 // steps kept for the median
	keepGaps  = 1000    // longest steps kept
)

type gapHeap []Gap

func (h gapHeap) Len() int           { return len(h) }
func (h gapHeap) Less(i, j int) bool { return h[i].Length < h[j].Length }
func (h gapHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *gapHeap) Push(x any)        { *h = append(*h, x.(Gap)) }
func (h *gapHeap) Pop() any          { o := *h; x := o[len(o)-1]; *h = o[:len(o)-1]; return x }

// Earth's main field at the surface is about 22 000 to 67 000 nT (common
// practice); inspect flags field columns whose typical magnitude sits there
// only in another unit.
const earthMin, earthMax = 1.5e4, 8e4

// Inspect reads the whole log once, in bounded memory, and summarises it.
// Missing values and time going backwards are counted, not errors, and an
// Arrow IPC stream without its end-of-stream marker is read with a warning.
func Inspect(path string, opts ...Option) (*Inspection, error) {
	opts = append(append([]Option(nil), opts...), WithAllowMissing(true), WithAllowBackwards(true), WithAllowUnterminatedStream(true))
	r, err := Open(path, opts...)
	if err != nil {
		return nil, err
	}
	defer r.Release()
	pl := planOf(r)
	in := &Inspection{File: path, Format: pl.format, Frame: pl.outFrame().String(), Meta: pl.meta,
		Unused: []string{}, Columns: []ColumnStats{}, Time: TimeStats{Largest: []Gap{}}, Warnings: []string{}, NoTime: pl.noTime}
	used := map[int]bool{}
	for c := 0; c < nCanon; c++ {
		if pl.src[c] >= 0 {
			used[pl.src[c]] = true
		}
	}
	if pl.timeJoin >= 0 {
		used[pl.timeJoin] = true
	}
	for i, h := range pl.header {
		if !used[i] {
			in.Unused = append(in.Unused, h)
		}
	}
	maps := pl.mappings()
	n := len(pl.out)
	mins, maxs, sums := make([]float64, n), make([]float64, n), make([]float64, n)
	counts, missing := make([]int, n), make([]int, n)
	for i := range mins {
		mins[i], maxs[i] = math.Inf(1), math.Inf(-1)
	}
	var steps, mags, times []float64
	var groups []string // the group of each of times, nil without a group column
	gIdx := -1
	for i, c := range pl.out {
		if c == cGroup {
			gIdx = i
		}
	}
	gaps := &gapHeap{}
	prev := math.NaN()
	row := 0
	bIdx := [3]int{-1, -1, -1}
	for i, c := range pl.out {
		if c >= cBx && c <= cBz {
			bIdx[c-cBx] = i
		}
	}
	var vecs [][3]float64 // the field vectors of mags, for guessUnits
	// Repeats are counted per group: the groups read at the current time
	// stamp (prev), which only rows sharing that stamp add to.
	stamp := map[string]bool{}
	same := 0 // steps of zero from one row to the next, whatever the group
	for r.Next() {
		rec := r.RecordBatch()
		var groupAt func(k int) string
		if gIdx >= 0 {
			gc := rec.Column(gIdx)
			gs, _ := gc.(*array.String)
			groupAt = func(k int) string {
				switch {
				case gc.IsNull(k):
					return ""
				case gs != nil:
					return gs.Value(k)
				}
				return gc.ValueStr(k)
			}
		}
		cols := make([][]float64, n)
		for i, c := range pl.out {
			if c == cGroup {
				n, _ := emptyGroups(rec.Column(i)) // nulls and empty cells
				missing[i] += n
				continue
			}
			cols[i] = rec.Column(i).(*array.Float64).Float64Values()
			if c == cTime && pl.noTime {
				continue // no time column: not missing values
			}
			for _, v := range cols[i] {
				if math.IsNaN(v) {
					missing[i]++
					continue
				}
				mins[i], maxs[i] = math.Min(mins[i], v), math.Max(maxs[i], v)
				sums[i] += v
				counts[i]++
			}
		}
		for k, t := range cols[0] {
			if math.IsNaN(t) {
				if pl.noTime && len(mags) < keepSteps {
					// A log without time (a calibration log): its field
					// is looked at all the same.
					bx, by, bz := cols[bIdx[0]][k], cols[bIdx[1]][k], cols[bIdx[2]][k]
					if m := math.Sqrt(bx*bx + by*by + bz*bz); !math.IsNaN(m) {
						mags = append(mags, m)
						vecs = append(vecs, [3]float64{bx, by, bz})
					}
				}
				continue
			}
			if math.IsNaN(prev) || t != prev {
				clear(stamp)
			}
			if groupAt != nil {
				// The group's string aliases the batch: cloned to be kept.
				if g := groupAt(k); !stamp[g] {
					stamp[strings.Clone(g)] = true
				} else {
					in.Time.Repeated++
				}
			}
			if !math.IsNaN(prev) {
				d := t - prev
				switch {
				case d < 0:
					in.Time.Backwards++
				case d == 0:
					same++
					if groupAt == nil {
						in.Time.Repeated++
					}
				default:
					if len(steps) < keepSteps {
						steps = append(steps, d)
					}
					g := Gap{Row: row + k - 1, Start: prev, Length: d}
					if gaps.Len() < keepGaps {
						heap.Push(gaps, g)
					} else if d > (*gaps)[0].Length {
						(*gaps)[0] = g
						heap.Fix(gaps, 0)
					}
				}
			}
			prev = t
			if len(times) < keepSteps {
				times = append(times, t)
				if gIdx >= 0 {
					// Sensors interleaved on shared stamps are each
					// sampled on their own (RetimeQuantised by group).
					groups = append(groups, strings.Clone(groupAt(k)))
				}
			}
			if len(mags) < keepSteps {
				bx, by, bz := cols[bIdx[0]][k], cols[bIdx[1]][k], cols[bIdx[2]][k]
				if m := math.Sqrt(bx*bx + by*by + bz*bz); !math.IsNaN(m) {
					mags = append(mags, m)
					vecs = append(vecs, [3]float64{bx, by, bz})
				}
			}
		}
		row += int(rec.NumRows())
	}
	if err := r.Err(); err != nil {
		return nil, err
	}
	in.Rows = row
	if pl.origin != nil {
		o := *pl.origin
		in.Origin = &o
	}
	for i := range pl.out {
		cs := ColumnStats{ColumnMapping: maps[i], Missing: missing[i]}
		if counts[i] > 0 {
			mn, mx, mean := mins[i], maxs[i], sums[i]/float64(counts[i])
			cs.Min, cs.Max, cs.Mean = &mn, &mx, &mean
		}
		in.Columns = append(in.Columns, cs)
	}
	if row > 0 && in.Columns[0].Min != nil {
		ts := &in.Time
		ts.Start, ts.End = *in.Columns[0].Min, *in.Columns[0].Max
		ts.Duration = ts.End - ts.Start
		if ts.Start > 3e8 && ts.End < 4.2e9 { // 1979 to 2103: Unix seconds
			ts.StartUTC, ts.EndUTC = utcString(ts.Start), utcString(ts.End)
		}
		if len(steps) > 0 {
			ts.Interval = median(steps)
			gap := GapFactor * ts.Interval
			if _, tq := RetimeQuantised(times, groups); tq != nil {
				ts.Quantum = tq
				in.Warnings = append(in.Warnings, quantumWarning(tq, len(times) < in.Rows))
				if tq.Uniform {
					ts.Interval = tq.Interval
					gap = max(GapFactor*ts.Interval, tq.Steps[1]+0.5*tq.Quantum)
				}
			} else if _, w := CoarseStamps(times, groups); w != "" {
				// Stamps to the minute: too few steps for RetimeQuantised.
				in.Warnings = append(in.Warnings, path+": "+w)
			}
			ts.Rate = 1 / ts.Interval
			list := append([]Gap(nil), (*gaps)...)
			sort.Slice(list, func(a, b int) bool { return list[a].Length > list[b].Length })
			for _, g := range list {
				if g.Length > gap {
					ts.Gaps++
					if len(ts.Largest) < 10 {
						ts.Largest = append(ts.Largest, g)
					}
				}
			}
			ts.GapsAtLeast = ts.Gaps == keepGaps
		}
	}
	if row >= 3 && in.Time.Duration == 0 && same == row-1 && same > 0 {
		// Every row one time: the same warning as the other commands'.
		in.Warnings = append(in.Warnings, oneTimeText(row, in.Time.Start))
	}
	in.Warnings = append(in.Warnings, pl.warnings...)
	in.Warnings = append(in.Warnings, guessUnits(pl, in, mags, vecs)...)
	return in, nil
}

// utcString formats Unix seconds as ISO 8601 UTC, rounded (not truncated)
// to the millisecond shown, so the end of a log whose last sample is at
// 59.9979999 s reads .998 like its duration.
func utcString(t float64) string {
	sec := math.Floor(t)
	return unixTime(int64(sec), int64(math.Round((t-sec)*1e9))).UTC().Round(time.Millisecond).Format("2006-01-02T15:04:05.999Z07:00")
}

// TimeQuantum describes time stamps written to a resolution coarser than
// the sample interval: a logger sampling at a steady 800 Hz whose times are
// printed to the millisecond steps 1 ms and 2 ms between rows (0.25 ms
// behind and ahead of the true times in turn), one at 1600 Hz steps 0 and
// 1 ms. Read as exact, such stamps put each sample up to half a quantum
// off its time, which biases every sine fit (RetimeQuantised).
type TimeQuantum struct {
	// Quantum is the stamps' resolution, s, and Steps the two step
	// lengths the rows take, s (a whole number of quanta apart by one).
	Quantum float64    `json:"quantum"`
	Steps   [2]float64 `json:"steps"`
	// Uniform: the stamps fit a steady sampling to within one quantum in
	// each continuous run, which RetimeQuantised then restores. False when
	// they only look quantised (both steps common) but wander further: no
	// times are rebuilt and each keeps its error of up to a quantum.
	Uniform bool `json:"uniform"`
	// Interval is the sample interval, s: the least-squares slope of time
	// against row number shared by the continuous runs (each run its own
	// intercept). Zero unless Uniform.
	Interval float64 `json:"interval,omitempty"`
	// Runs counts the continuous runs of two rows or more: stretches
	// between group changes, times going back, pauses (a step longer than
	// the longer of Steps) and breaks in the pattern. Rows counts the
	// rows in them.
	Runs, Rows int `json:"-"`
	// MaxShift is the largest change RetimeQuantised makes to a time, s.
	MaxShift float64 `json:"max_shift,omitempty"`
}

// quantumMinEvidence is the fewest steps of the rarer of the two lengths,
// beyond the first of each run, that RetimeQuantised wants within runs
// that fit a steady sampling before it takes stamps as quantised. A log
// stamped exactly that misses a sample now and then also steps one and
// two intervals, but its rare long steps fall at random, and a least-squares
// line through more than a few of them leaves residuals wider than one
// interval (a random walk): only stamps of a steady sampling stay within
// one quantum of the line however many long steps they hold.
const quantumMinEvidence = 8

// quantumAmbiguousShare is the least share of the rarer step that
// RetimeQuantised wants before it takes steps of none and one quanta (rows
// stored twice?) as quantised stamps (of one and two: quantumDropShare).
// It leaves out sampling within 5% of the quantum's rate (1000 to 1050 Hz
// written to the millisecond), whose stamps are then off by an amount that
// changes only slowly along the log.
const quantumAmbiguousShare = 0.05

// quantumCoarsest is the most quanta the shorter step may hold: with steps
// of k and k+1 quanta the interval is under k+1 quanta, so a quantum is
// then over a fifth of the interval. Finer quanta are left alone.
const quantumCoarsest = 4

// quantumDropShare is the least share of the longer of steps of one and two
// quanta in stamps taken as quantised. Exact times of a logger that misses
// one sample in n step one and two intervals too, in a pattern as steady as
// that of rounded times (2000 Hz missing every 10th sample steps like
// 1800 Hz written to 0.5 ms); the least-squares line of time against row
// then has a slope of 1 + 1/(n-1) intervals, within a fifth of the shorter
// step for n > 6. A slope (and so a share of long steps) further from
// it, as 800 Hz written to the millisecond gives (1.25 ms: a quarter of the
// steps 2 ms), is taken as quantisation.
const quantumDropShare = 0.2

// droppedUnlikely tells whether stamps t stepping one and two quanta q (nk:
// how many of each) carry the marks of quantisation rather than of exact
// times missing samples: the longer step quantumDropShare of them or more,
// a quantum of a power of ten seconds (the times written to so many
// decimals; exact times of 2000 Hz step 0.5 ms), and every stamp a whole
// number of quanta (exact times of a logger started at any time are not).
func droppedUnlikely(t []float64, q, tol float64, nk [2]int) bool {
	if float64(nk[1]) < quantumDropShare*float64(nk[0]+nk[1]) {
		return false
	}
	if p := math.Pow(10, math.Round(math.Log10(q))); math.Abs(q-p) > tol {
		return false
	}
	q = math.Pow(10, math.Round(math.Log10(q)))
	off, all := 0, 0
	for _, v := range t {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		all++
		if math.Abs(v-math.Round(v/q)*q) > tol {
			off++
		}
	}
	return float64(off) <= 1e-3*float64(all)
}

// RetimeQuantised looks for time stamps quantised to a resolution coarser
// than the sample interval (TimeQuantum) in times t (group g, or nil: a
// change of group starts a new run) and, when they fit a steady sampling,
// returns the times rebuilt on it: within each continuous run, the
// least-squares line of time against row (one slope, the sample
// interval, for all runs; each run its own intercept), so that pauses
// between runs, group changes and NaN times are kept. It returns nil
// times and nil when the stamps are not quantised, and nil times with a
// TimeQuantum whose Uniform is false when they look quantised but do not
// fit a steady sampling.
//
// The stamps are taken as quantised when the steps between rows take
// two lengths k and k+1 quanta (k may be 0: repeated times), each common,
// every other step being a pause or a break; and when, within each run,
// the stamps stay within one quantum of a straight line through them,
// as rounding (or truncating) the times of a steady sampling leaves them.
// Stamps truncated rather than rounded sit half a quantum early on
// average, which the rebuilt times keep: a phase offset common to the log.
//
// Only a quantum over a fifth of the interval counts (steps of at most
// quantumCoarsest quanta): a finer one moves a time by under a tenth of an
// interval, and clock jitter of a quantum (a 10 Hz log written to the
// millisecond) is no quantisation. Steps of one and two quanta are also
// those of exact times missing samples (quantumDropShare), and are taken
// as such unless the stamps carry the marks of quantisation.
//
// With groups, each group's rows are taken in order on their own (the
// per-sensor runs of sensors whose rows interleave on shared stamps).
func RetimeQuantised(t []float64, g []string) ([]float64, *TimeQuantum) {
	order := groupOrder(g)
	if order == nil {
		return retimeQuantised(t, g)
	}
	tt, gg := make([]float64, len(t)), make([]string, len(t))
	for j, i := range order {
		tt[j], gg[j] = t[i], g[i]
	}
	out, tq := retimeQuantised(tt, gg)
	if out == nil {
		return nil, tq
	}
	res := make([]float64, len(t))
	for j, i := range order {
		res[i] = out[j]
	}
	return res, tq
}

// groupOrder is the order of rows that takes each group's rows together,
// in order, groups in order of first appearance; nil when g is nil or
// every group's rows are together already.
func groupOrder(g []string) []int {
	if g == nil {
		return nil
	}
	first := map[string]int{}
	together := true
	for i, v := range g {
		if _, ok := first[v]; !ok {
			first[v] = len(first)
		} else if v != g[i-1] {
			together = false
		}
	}
	if together {
		return nil
	}
	order := make([]int, len(g))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return first[g[order[a]]] < first[g[order[b]]] })
	return order
}

// retimeQuantised is RetimeQuantised on rows whose groups are together.
func retimeQuantised(t []float64, g []string) ([]float64, *TimeQuantum) {
	n := len(t)
	if n < 2*quantumMinEvidence {
		return nil, nil
	}
	same := func(i int) bool { return g == nil || g[i] == g[i-1] }
	// The step lengths, from up to 65536 steps at the start of the
	// log, clustered.
	var d []float64
	var tmax float64
	for i := 1; i < n; i++ {
		if a := math.Abs(t[i]); a > tmax && !math.IsInf(a, 0) {
			tmax = a
		}
		if s := t[i] - t[i-1]; s >= 0 && same(i) && len(d) < 1<<16 {
			d = append(d, s)
		}
	}
	if len(d) < 2*quantumMinEvidence {
		return nil, nil
	}
	ulp := math.Nextafter(tmax, math.Inf(1)) - tmax
	sort.Float64s(d)
	type cluster struct {
		sum float64
		n   int
	}
	var cl []cluster
	for i := 0; i < len(d); {
		j := i
		var s float64
		for j < len(d) && d[j]-d[i] <= max(1e-3*d[i], 8*ulp) {
			s += d[j]
			j++
		}
		cl = append(cl, cluster{s, j - i})
		i = j
	}
	sort.SliceStable(cl, func(a, b int) bool { return cl[a].n > cl[b].n })
	if len(cl) < 2 || cl[1].n < quantumMinEvidence {
		return nil, nil
	}
	lo, hi := cl[0].sum/float64(cl[0].n), cl[1].sum/float64(cl[1].n)
	if lo > hi {
		lo, hi = hi, lo
	}
	q := hi - lo
	tol := max(0.02*q, 8*ulp)
	m := math.Round(lo / q)
	if q < 100*ulp || math.Abs(lo-m*q) > tol || m > quantumCoarsest {
		return nil, nil
	}
	tq := &TimeQuantum{Quantum: q, Steps: [2]float64{m * q, (m + 1) * q}}
	// Both step lengths common: the stamps at least look quantised.
	looks := float64(cl[1].n) >= 0.1*float64(len(d))
	// kind classifies the step before row i: 0 or 1 for the two lengths,
	// -1 for a break (a group change, a time not a number or going back,
	// a pause, or a step off the quantum or shorter than both).
	kind := func(i int) int {
		s := t[i] - t[i-1]
		if !same(i) || !(s >= 0) {
			return -1
		}
		k := math.Round(s / q)
		if math.Abs(s-k*q) > tol || k < m || k > m+1 {
			return -1
		}
		return int(k - m)
	}
	// segment splits the log into runs that stay within one quantum of a
	// line of slope dt, and counts the evidence, the breaks in the pattern
	// (runs split where the stamps leave the band) and the steps off the
	// quantum.
	type seg struct{ lo, hi int }
	segment := func(dt float64) (segs []seg, evidence, hidden, off int) {
		start := 0
		var rmin, rmax float64
		var cnt [2]int
		flush := func(end int) {
			segs = append(segs, seg{start, end})
			evidence += max(0, min(cnt[0], cnt[1])-1)
			cnt = [2]int{}
			rmin, rmax = 0, 0
			start = end
		}
		for i := 1; i < n; i++ {
			k := kind(i)
			if k < 0 {
				if s := t[i] - t[i-1]; same(i) && s >= 0 && math.Abs(s-math.Round(s/q)*q) > tol {
					off++
				} else if same(i) && s >= 0 && math.Round(s/q) < m {
					off++
				}
				flush(i)
				continue
			}
			r := (t[i] - t[start]) - float64(i-start)*dt
			if r < rmin || r > rmax {
				if math.Max(r, rmax)-math.Min(r, rmin) > q+tol {
					hidden++
					flush(i)
					continue
				}
				rmin, rmax = math.Min(r, rmin), math.Max(r, rmax)
			}
			cnt[k]++
		}
		flush(n)
		return segs, evidence, hidden, off
	}
	// slope is the least-squares slope of time against row shared by the
	// runs segs (each its own intercept): Σ(i-ī)(t-t̄) / Σ(i-ī)², pooled.
	slope := func(segs []seg) float64 {
		var sxy, sxx float64
		for _, s := range segs {
			k := s.hi - s.lo
			if k < 3 {
				continue
			}
			mi := float64(k-1) / 2
			var mt float64
			for i := s.lo; i < s.hi; i++ {
				mt += t[i] - t[s.lo]
			}
			mt /= float64(k)
			for i := s.lo; i < s.hi; i++ {
				x := float64(i-s.lo) - mi
				sxy += x * (t[i] - t[s.lo] - mt)
				sxx += x * x
			}
		}
		return sxy / sxx
	}
	// Steps of one and two intervals, the longer rare, are also those of
	// exact stamps with samples missing, and steps of none and one those
	// of exact stamps with rows stored twice: such logs are taken as
	// they are unless the rarer step makes up quantumAmbiguousShare of
	// them.
	var nk [2]int
	for i := 1; i < n; i++ {
		if k := kind(i); k >= 0 {
			nk[k]++
		}
	}
	if m == 0 && float64(nk[0]) < quantumAmbiguousShare*float64(nk[0]+nk[1]) {
		return nil, nil
	}
	if m == 1 {
		if !droppedUnlikely(t, q, tol, nk) {
			return nil, nil
		}
		// The quantum is then a power of ten: taken as it is written.
		q = math.Pow(10, math.Round(math.Log10(q)))
		tq.Quantum, tq.Steps = q, [2]float64{q, 2 * q}
	}
	// The first slope from the runs between breaks; then the runs are
	// split where the stamps leave the band (a missing sample hidden in a
	// step of the two lengths), the slope found again from them, and the
	// runs split with it.
	var segs []seg
	start := 0
	for i := 1; i <= n; i++ {
		if i == n || kind(i) < 0 {
			segs = append(segs, seg{start, i})
			start = i
		}
	}
	dt := slope(segs)
	var evidence, hidden, off int
	for pass := range 2 {
		if !(dt > 0) {
			return nil, nil
		}
		segs, evidence, hidden, off = segment(dt)
		if pass == 0 {
			dt = slope(segs)
		}
	}
	if evidence < quantumMinEvidence || 10*hidden > evidence || float64(off) > 1e-3*float64(n) || !(dt > 0) {
		// Steps of one and two quanta off any steady line are those of
		// exact times missing samples at random: no quantisation.
		if looks && m != 1 {
			return nil, tq
		}
		return nil, nil
	}
	tq.Uniform, tq.Interval = true, dt
	out := make([]float64, n)
	for _, s := range segs {
		var a float64
		for i := s.lo; i < s.hi; i++ {
			a += (t[i] - t[s.lo]) - float64(i-s.lo)*dt
		}
		a /= float64(s.hi - s.lo)
		for i := s.lo; i < s.hi; i++ {
			out[i] = t[s.lo] + (a + float64(i-s.lo)*dt)
			if sh := math.Abs(out[i] - t[i]); sh > tq.MaxShift {
				tq.MaxShift = sh
			}
		}
		if s.hi-s.lo >= 2 {
			tq.Runs++
			tq.Rows += s.hi - s.lo
		}
	}
	return out, tq
}

// quantumWarning words what inspect found of quantised stamps; part: only
// the first rows were looked at.
func quantumWarning(tq *TimeQuantum, part bool) string {
	from := ""
	if part {
		from = fmt.Sprintf(" (from the first %d rows)", keepSteps)
	}
	if !tq.Uniform {
		return fmt.Sprintf("time: the stamps look quantised to %s s (steps of %s and %s s), coarser than the sampling, but do not fit a steady sampling%s: each time may be off by up to %s s, which turns an AC phase by 360° × frequency × that; write the times with more digits",
			short(tq.Quantum), short(tq.Steps[0]), short(tq.Steps[1]), from, short(tq.Quantum))
	}
	return fmt.Sprintf("time: the stamps are quantised to %s s, coarser than the sample interval: the steps between rows take %s and %s s, as a steady %s Hz sampling written to %s s gives (the least-squares line of time against row within %s)%s; those are %s. AC demodulation re-times the samples on that line (by up to %s s)",
		short(tq.Quantum), short(tq.Steps[0]), short(tq.Steps[1]), short(1/tq.Interval), short(tq.Quantum), runsWord(tq.Runs), from, tq.NotGaps(), short(tq.MaxShift))
}

// NotGaps words why the steps of uniform quantised stamps tq are not gaps
// or repeated rows. Steps of one and two quanta are also those of exact
// times missing samples, and it names that reading too: "not gaps or
// repeated rows" or "read as not gaps or repeated rows, though exact times
// of a 1000 Hz logger missing 20% of its samples step alike".
func (tq *TimeQuantum) NotGaps() string {
	if !tq.Uniform || math.Abs(tq.Steps[0]-tq.Quantum) > 0.02*tq.Quantum {
		return "not gaps or repeated rows"
	}
	return fmt.Sprintf("read as not gaps or repeated rows, though exact times of a %s Hz logger missing %.0f%% of its samples step alike", short(1/tq.Quantum), 100*(1-tq.Quantum/tq.Interval))
}

// runsWord is "the run" or "each of the N continuous runs".
func runsWord(n int) string {
	if n <= 1 {
		return "the one continuous run"
	}
	return fmt.Sprintf("each of %d continuous runs", n)
}

// short formats v to four significant digits.
func short(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

func median(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	return s[len(s)/2]
}

// guessUnits looks for values that only make sense in another unit. mags
// are |B| of the rows looked at, vecs their field vectors.
//
// A median |B| below the Earth's band is not by itself a sign of a wrong
// unit: a zero-field log (a sensor inside a magnetic shield, which reads
// its own offset, commonly some hundreds of nT) or a log with the Earth's
// field removed is small in nT too. Another unit is named only when nT
// cannot explain the log: when the field keeps its size while it turns in
// the sensor's axes, as the Earth's field does for a sensor carried or
// turned (turningTotalField); when it keeps its size while the sensor
// moves a metre or more (out of any shield, and steadier than a log with
// the Earth's field removed, which is the conductors' field and noise);
// or when it is below 1 pT, under the noise of a single reading of any
// field magnetometer. Otherwise the warning names those logs first. (A
// steady log in mG taken in one place without turning the sensor is told
// its unit may be wrong, not which.)
func guessUnits(pl *plan, in *Inspection, mags []float64, vecs [][3]float64) []string {
	var w []string
	if len(mags) > 0 {
		m := median(mags) // nT
		if m < earthMin || m > earthMax {
			raw := m / pl.scale[cBx]
			found, fits := false, ""
			// mG (1 mG = 100 nT) is a unit the readers accept; a log in
			// it read as nT sits at 150-800, below the band.
			for _, u := range []string{"T", "mT", "G", "uT", "mG", "nT", "pT"} {
				f, _ := unitScale(kindField, u)
				if u != pl.unit[cBx] && raw*f >= earthMin && raw*f <= earthMax {
					fits = u
					break
				}
			}
			small := m < earthMin
			notNT := !small || m < 1e-3 || turningTotalField(mags, vecs) || movedMetre(in) && steadySize(mags)
			switch {
			case fits != "" && notNT:
				w = append(w, fmt.Sprintf("field: median |B| is %.4g %s, outside the Earth's field band of 15000-80000 nT; "+
					"if these are total-field readings the columns are probably in %s (try units bx=%s,by=%s,bz=%s)",
					raw, pl.unit[cBx], fits, fits, fits, fits))
				found = true
			case fits != "":
				in := ""
				if pl.unit[cBx] != "nT" {
					in = fmt.Sprintf(" (%.4g %s)", raw, pl.unit[cBx])
				}
				w = append(w, fmt.Sprintf("field: median |B| is %.4g nT%s, outside the Earth's field band of 15000-80000 nT: right for a zero-field log (a sensor inside a magnetic shield, which reads mostly its own offset) or a log with the Earth's field removed; if these are instead total-field readings taken in the open, the field columns' unit is wrong (try units bx=U,by=U,bz=U)",
					m, in))
				found = true
			}
			if !found {
				// No unit explains it: the Earth's field removed, a
				// zero-field log, or a unit or scale the readers do not
				// know.
				in := ""
				if pl.unit[cBx] != "nT" {
					in = fmt.Sprintf(" (%.4g %s)", raw, pl.unit[cBx])
				}
				why := "right for a log with the Earth's field removed"
				if small {
					why = "right for a zero-field log (a sensor inside a magnetic shield) or a log with the Earth's field removed"
				}
				w = append(w, fmt.Sprintf("field: median |B| is %.4g nT%s, outside the Earth's field band of 15000-80000 nT, and in none of the units T, mT, G, uT, mG, nT, pT would it fall inside: %s; otherwise the field columns' unit or scale is wrong (try units bx=U,by=U,bz=U)",
					m, in, why))
			}
		}
	}
	// Times in a finer unit read as seconds are warned about by the
	// readers (plan.checkTimeUnit).
	if in.Time.Backwards > 0 {
		w = append(w, fmt.Sprintf("time: goes backwards %d times (an error unless allowed)", in.Time.Backwards))
	}
	if pl.hasPos && !pl.geodetic {
		x, y := colStats(in, ColX), colStats(in, ColY)
		if x != nil && y != nil && x.Min != nil && y.Min != nil && DegreesLike(*x.Min, *x.Max, *y.Min, *y.Max) {
			w = append(w, "positions: x and y span less than 0.05 and look like longitude and latitude in degrees (try columns lon=...,lat=...)")
		}
	}
	var miss []string
	for _, c := range in.Columns {
		if c.Missing > 0 {
			miss = append(miss, fmt.Sprintf("%s %d", c.Column, c.Missing))
		}
	}
	if len(miss) > 0 {
		w = append(w, "missing values: "+strings.Join(miss, ", "))
	}
	return w
}

// DegreesLike reports whether positions x in [xmin, xmax] and y in
// [ymin, ymax], read as metres, look like longitude and latitude in
// degrees: both within the ranges of longitude and latitude, y more than
// a degree from the equator, and both spanning less than 0.05 (about 5 km
// as degrees, 5 cm as metres) but not nothing. A survey in metres moves
// more than 5 cm; lat/lon read as x, y put the whole survey inside a few
// centimetres and its currents millions of times off.
func DegreesLike(xmin, xmax, ymin, ymax float64) bool {
	return math.Abs(xmin) <= 180 && math.Abs(xmax) <= 180 && math.Abs(ymin) <= 90 && math.Abs(ymax) <= 90 &&
		xmax-xmin < 0.05 && ymax-ymin < 0.05 && (xmax-xmin)+(ymax-ymin) > 0 && math.Abs(ymin) > 1
}

// turningTotalField reports whether the field of a log keeps its size
// while its direction turns in the sensor's axes, as the Earth's field
// does for a sensor that is carried or turned: the middle 80% of |B|
// span at most 10% of its median (steadySize), and the middle 80% of the
// components span a box whose diagonal is at least 0.3 of it (a chord of
// 2 sin(θ/2): a turn of 17° or more, which a change of size alone, along
// one direction, cannot make). An offset read in a shield stays put in the sensor's axes,
// and a log with the Earth's field removed changes its size as it changes
// direction, so neither does both.
func turningTotalField(mags []float64, vecs [][3]float64) bool {
	if len(vecs) != len(mags) || !steadySize(mags) {
		return false
	}
	_, mid, _ := percentiles(mags)
	diag := 0.0
	for k := range 3 {
		c := make([]float64, len(vecs))
		for i, v := range vecs {
			c[i] = v[k]
		}
		lo, _, hi := percentiles(c)
		diag += (hi - lo) * (hi - lo)
	}
	return math.Sqrt(diag) >= 0.3*mid
}

// TurningTotalField is turningTotalField for a caller outside the
// package: mags are |B| of the readings looked at, vecs their field
// vectors.
func TurningTotalField(mags []float64, vecs [][3]float64) bool {
	return turningTotalField(mags, vecs)
}

// steadySize reports whether the middle 80% of |B| (two readings or more)
// span at most 10% of its median, as a total field's do.
func steadySize(mags []float64) bool {
	if len(mags) < 2 {
		return false
	}
	lo, mid, hi := percentiles(mags)
	return mid > 0 && hi-lo <= 0.1*mid
}

// movedMetre reports whether the log's positions span a metre or more in
// x or y.
func movedMetre(in *Inspection) bool {
	for _, c := range []string{ColX, ColY} {
		if s := colStats(in, c); s != nil && s.Min != nil && *s.Max-*s.Min >= 1 {
			return true
		}
	}
	return false
}

// percentiles returns the 10th, 50th and 90th percentiles of v (by rank).
func percentiles(v []float64) (p10, p50, p90 float64) {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	n := len(s)
	return s[n/10], s[n/2], s[min(n-1, n*9/10)]
}

func colStats(in *Inspection, name string) *ColumnStats {
	for i := range in.Columns {
		if in.Columns[i].Column == name {
			return &in.Columns[i]
		}
	}
	return nil
}
