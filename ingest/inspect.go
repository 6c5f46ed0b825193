package ingest

import (
	"container/heap"
	"fmt"
	"math"
	"sort"
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
	Repeated    int     `json:"repeated"`
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
	var steps, mags []float64
	gaps := &gapHeap{}
	prev := math.NaN()
	row := 0
	bIdx := [3]int{-1, -1, -1}
	for i, c := range pl.out {
		if c >= cBx && c <= cBz {
			bIdx[c-cBx] = i
		}
	}
	for r.Next() {
		rec := r.RecordBatch()
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
					}
				}
				continue
			}
			if !math.IsNaN(prev) {
				d := t - prev
				switch {
				case d < 0:
					in.Time.Backwards++
				case d == 0:
					in.Time.Repeated++
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
			if len(mags) < keepSteps {
				bx, by, bz := cols[bIdx[0]][k], cols[bIdx[1]][k], cols[bIdx[2]][k]
				if m := math.Sqrt(bx*bx + by*by + bz*bz); !math.IsNaN(m) {
					mags = append(mags, m)
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
			ts.Rate = 1 / ts.Interval
			list := append([]Gap(nil), (*gaps)...)
			sort.Slice(list, func(a, b int) bool { return list[a].Length > list[b].Length })
			for _, g := range list {
				if g.Length > GapFactor*ts.Interval {
					ts.Gaps++
					if len(ts.Largest) < 10 {
						ts.Largest = append(ts.Largest, g)
					}
				}
			}
			ts.GapsAtLeast = ts.Gaps == keepGaps
		}
	}
	in.Warnings = append(in.Warnings, pl.warnings...)
	in.Warnings = append(in.Warnings, guessUnits(pl, in, mags)...)
	return in, nil
}

// utcString formats Unix seconds as ISO 8601 UTC, rounded (not truncated)
// to the millisecond shown, so the end of a log whose last sample is at
// 59.9979999 s reads .998 like its duration.
func utcString(t float64) string {
	sec := math.Floor(t)
	return unixTime(int64(sec), int64(math.Round((t-sec)*1e9))).UTC().Round(time.Millisecond).Format("2006-01-02T15:04:05.999Z07:00")
}

func median(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	return s[len(s)/2]
}

// guessUnits looks for values that only make sense in another unit.
func guessUnits(pl *plan, in *Inspection, mags []float64) []string {
	var w []string
	if len(mags) > 0 {
		m := median(mags) // nT
		if m < earthMin || m > earthMax {
			raw := m / pl.scale[cBx]
			found := false
			// mG (1 mG = 100 nT) is a unit the readers accept; a log in
			// it read as nT sits at 150-800, below the band.
			for _, u := range []string{"T", "mT", "G", "uT", "mG", "nT", "pT"} {
				f, _ := unitScale(kindField, u)
				if u != pl.unit[cBx] && raw*f >= earthMin && raw*f <= earthMax {
					w = append(w, fmt.Sprintf("field: median |B| is %.4g %s, outside the Earth's field band of 15000-80000 nT; "+
						"if these are total-field readings the columns are probably in %s (try units bx=%s,by=%s,bz=%s)",
						raw, pl.unit[cBx], u, u, u, u))
					found = true
					break
				}
			}
			if !found {
				// No unit explains it: the Earth's field removed, or a
				// unit or scale the readers do not know.
				in := ""
				if pl.unit[cBx] != "nT" {
					in = fmt.Sprintf(" (%.4g %s)", raw, pl.unit[cBx])
				}
				w = append(w, fmt.Sprintf("field: median |B| is %.4g nT%s, outside the Earth's field band of 15000-80000 nT, and in none of the units T, mT, G, uT, mG, nT, pT would it fall inside: right for a log with the Earth's field removed; otherwise the field columns' unit or scale is wrong (try units bx=U,by=U,bz=U)",
					m, in))
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
		if x != nil && y != nil && x.Min != nil && y.Min != nil &&
			math.Abs(*x.Min) <= 180 && math.Abs(*x.Max) <= 180 && math.Abs(*y.Min) <= 90 && math.Abs(*y.Max) <= 90 &&
			*x.Max-*x.Min < 0.05 && *y.Max-*y.Min < 0.05 && (*x.Max-*x.Min)+(*y.Max-*y.Min) > 0 && math.Abs(*y.Min) > 1 {
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

func colStats(in *Inspection, name string) *ColumnStats {
	for i := range in.Columns {
		if in.Columns[i].Column == name {
			return &in.Columns[i]
		}
	}
	return nil
}
