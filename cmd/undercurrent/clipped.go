package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/report/live"
)

// Readings clipped at the magnetometer's range.
//
// A fluxgate driven past its range over a heavy cable reads its rail: a
// walked log's readings then sit at one value on an axis for a run of
// samples wherever the field exceeds it. Those readings are not the field,
// and the fits took them as such: a 600 A line 0.8 m down under a ±100000
// nT sensor (119 readings pinned) fitted "sound" at 200 to 280 times the
// noise, with a phantom second line, a false fall in current, and a
// warning that the sensor's axes were turned and it needed calibrating;
// the same survey at 50 Hz read 10 sigma deep and blamed two cores of a
// pair (found in review). calibrate's test for a rail (calibrate.FindClipped:
// an axis's extreme value repeated at least three times and four times as
// often as the values near it) names them, with two further conditions for
// a walked log, whose smooth anomaly has an extreme too: the readings at
// the value are at least clipNextRatio times as many as share the next
// value inside it (logged to a coarse resolution, a smooth peak's top
// value is held by about 2.4 times as many readings as the next one down,
// a rail by far more; unrounded readings repeat no value but a rail). A
// walked DC log holds them in runs over the conductor, an AC log at the
// waveform's peaks, cycle after cycle. A rail is at the sensor's range,
// which its three axes share, so it is also about the largest |reading|
// of any axis (clipShareRange), on an axis whose trace varies over many
// resolution steps (clipMinSteps). Beyond a quarter of the log
// (clipMaxShare), where a quiet background logged to a coarse resolution
// can hold an axis's extreme as often, the readings are left out only
// where the trace is cut there: the readings beside each run at the value
// lie clipCutSteps resolution steps or more inside it (railCut). They are
// left out of the fits, with a warning naming them first.

// clipNextRatio is how many times the readings at the next distinct value
// inside a candidate rail its own readings must be.
const clipNextRatio = 4

// clipShareRange: a three-axis magnetometer's axes share one range, so a
// rail, at the range, is at least about the largest |reading| on any axis
// (this fraction of it, for gains and offsets that differ between the
// axes by a few per cent). A quiet axis logged to a whole nanotesla holds
// one value on most readings, its extreme: -300 nT held by 2781 of 3381
// readings was taken as a rail while bz read 46000 nT in the same rows,
// and 82% of the log was left out (found in review).
const clipShareRange = 0.95

// clipMinSteps: a rail is a flat top within a varying trace, so the axis
// spans at least this many of its resolution steps (the smallest gap
// between its distinct values); an axis whose whole span is a few steps
// is one the sensor's resolution, not its range, holds still.
const clipMinSteps = 10

// clipMaxShare is the largest share of a log's readings the exact-repeat
// test leaves out on its own. Past it a rail must also be cut
// (clipCutSteps), else the readings are kept and a warning says so;
// --range-nt leaves them out. Before, every rail past it was kept: a
// 500 A line 1.3 m under a sensor of ±65000 nT range, whose bz the Earth's
// field already holds at -45000 nT, railed 43% of 10 m traverses, and
// the fits, kept on them, read 401 ± 10 A "sound" with a phantom second
// line; at 3000 A 98% of the log railed and the fits missed by 18600 nT
// with no warning of the misfit (found in review).
const clipMaxShare = 0.25

// clipCutSteps: a rail cuts a trace that would run on past it, so the
// readings entering and leaving a run at the rail lie anywhere between it
// and one reading's change inside it, on the median about half that
// change (a 500 A line's field crossing a ±65000 nT rail changes by
// hundreds of nT from one reading to the next). A trace reaching its own
// extreme, a smooth peak or a flat background the anomaly leaves,
// flattens there and is entered one resolution step at a time. A rail
// crossed by a few steps per reading (a coarse resolution, a slow
// crossing) is not told from those and is kept past clipMaxShare.
const clipCutSteps = 3

// clippedRows finds the readings of log s (its field columns as read,
// before any correction) pinned at an axis's extreme, and returns which
// rows to keep (nil when none is left out), a warning naming the rails,
// the groups and the counts, for the log path, and a note when repeats
// that look like a rail are kept (clipMaxShare). With the magnetometer's
// range rng, nT (--range-nt; 0 for none), readings within
// live.SaturationMargin of ±rng (noise the reading noise given, 0 for
// none) are clipped too, as serve takes them with a site file's range_nt:
// a rail with readout noise on it repeats no value; a reading beyond ±rng
// by more than that margin is a usage error, as no sensor reads past its
// range: the range given is not this sensor's.
func clippedRows(path string, s *ingest.Samples, rng, noise float64) ([]bool, string, string, error) {
	n := s.Len()
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	var keep []bool
	var parts []string
	left := 0
	where := func(i int) string {
		if s.Group != nil {
			return fmt.Sprintf("%s of %s", s.Group[i], path)
		}
		return fmt.Sprintf("reading %d of %s", i+1, path)
	}
	drop := func(col []float64, at func(v float64) bool) (int, string) {
		if keep == nil {
			keep = make([]bool, n)
			for i := range keep {
				keep[i] = true
			}
		}
		per := map[string]int{}
		var order []string
		count := 0
		for i, v := range col {
			if !at(v) {
				continue
			}
			count++
			if keep[i] {
				keep[i] = false
				left++
			}
			g := ""
			if s.Group != nil {
				g = s.Group[i]
			}
			if _, ok := per[g]; !ok {
				order = append(order, g)
			}
			per[g]++
		}
		if s.Group == nil {
			return count, ""
		}
		sort.SliceStable(order, func(a, b int) bool { return per[order[a]] > per[order[b]] })
		var gs []string
		for _, g := range order[:min(len(order), 8)] {
			gs = append(gs, fmt.Sprintf("%s %d", g, per[g]))
		}
		if len(order) > 8 {
			gs = append(gs, "...")
		}
		return count, " (" + strings.Join(gs, ", ") + ")"
	}
	if rng > 0 {
		margin := live.SaturationMargin(noise, rng)
		// A reading beyond the range: the range given is wrong (another
		// sensor's, another unit). Before, such readings were counted as
		// "within N nT of the range" and left out, all of a log's when
		// the range was under every reading (found in review).
		worst, wk, wi := 0.0, -1, 0
		for k, col := range cols {
			for i, v := range col {
				if a := math.Abs(v); a > rng+margin && a > worst {
					worst, wk, wi = a, k, i
				}
			}
		}
		if wk >= 0 {
			return nil, "", "", usageErrorf("--range-nt %.6g is below |b%c| = %.6g nT read at %s: the range given is not this sensor's (no sensor reads beyond its range); give the range of the magnetometer that made this log, or leave --range-nt out", rng, "xyz"[wk], worst, where(wi))
		}
		lim := rng - margin
		for k, col := range cols {
			hit := false
			for _, v := range col {
				if math.Abs(v) >= lim {
					hit = true
					break
				}
			}
			if !hit {
				continue
			}
			count, groups := drop(col, func(v float64) bool { return math.Abs(v) >= lim })
			parts = append(parts, fmt.Sprintf("b%c reads within %.3g nT of the ±%.6g nT range given (--range-nt) on %d readings%s", "xyz"[k], margin, rng, count, groups))
		}
	}
	result := func(note string) ([]bool, string, string, error) {
		if keep == nil {
			return nil, "", note, nil
		}
		return keep, clippedWarning(path, parts, left, n), note, nil
	}
	if n < minDiffReadings {
		return result("")
	}
	rd := make([][3]float64, n)
	maxAbs := 0.0
	for i := range n {
		rd[i] = [3]float64{cols[0][i], cols[1][i], cols[2][i]}
		for k := range 3 {
			maxAbs = math.Max(maxAbs, math.Abs(cols[k][i]))
		}
	}
	type rail struct {
		c    calibrate.ClipRun
		step float64
		jump float64 // railCut, past clipMaxShare
	}
	var rails []rail
	for _, c := range calibrate.FindClipped(rd) {
		if rng > 0 && math.Abs(c.Value) >= rng-live.SaturationMargin(noise, rng) {
			continue // named above
		}
		if math.Abs(c.Value) < clipShareRange*maxAbs {
			continue // inside the range another axis reads to
		}
		col := cols[c.Axis]
		at := 0
		next, nextN := 0.0, 0
		for _, v := range col {
			if v == c.Value {
				at++
				continue
			}
			inside := (c.Max && v < c.Value) || (!c.Max && v > c.Value)
			if !inside {
				continue
			}
			switch {
			case nextN == 0 || (c.Max && v > next) || (!c.Max && v < next):
				next, nextN = v, 1
			case v == next:
				nextN++
			}
		}
		if at < 3 || at < clipNextRatio*nextN {
			continue
		}
		step, span := resolution(col)
		if span < clipMinSteps*step {
			continue // a few resolution steps: no trace to be cut
		}
		rails = append(rails, rail{c: c, step: step})
	}
	if len(rails) == 0 {
		return result("")
	}
	// Rows the rails would leave out, beyond those left out already.
	out := 0
	for i := range n {
		if keep != nil && !keep[i] {
			continue
		}
		for _, r := range rails {
			if cols[r.c.Axis][i] == r.c.Value {
				out++
				break
			}
		}
	}
	note := ""
	many := float64(out) > clipMaxShare*float64(n)
	if many {
		// Over a quarter of the log: only rails that cut the trace.
		var cut, kept []rail
		var seen []string
		for _, r := range rails {
			if r.jump = railCut(cols[r.c.Axis], s.Group, r.c.Value, r.step); r.jump >= clipCutSteps {
				cut = append(cut, r)
				continue
			}
			kept = append(kept, r)
			seen = append(seen, fmt.Sprintf("b%c reads exactly %.6g nT, its %s value, on %d readings", "xyz"[r.c.Axis], r.c.Value, extremeWord(r.c.Max), r.c.N))
		}
		if len(kept) > 0 {
			// The rows the kept rails hold, beyond those left out already.
			held := 0
			for i := range n {
				if keep != nil && !keep[i] {
					continue
				}
				for _, r := range kept {
					if cols[r.c.Axis][i] == r.c.Value {
						held++
						break
					}
				}
			}
			r := kept[0]
			note = fmt.Sprintf("%s: %s"+keptRailsSep+"%d of %d readings; but the readings beside them lie a median %.3g of its resolution steps (%.3g nT on b%c) from that value, as where a trace reaches its own extreme (a smooth peak, or a quiet background logged to a coarse resolution) rather than where a rail cuts it, so they are kept in the fits. If %.6g nT is the sensor's range, they are not the field and every fit on them is wrong: give --range-nt %.6g to leave them out",
				path, strings.Join(seen, "; "), held, n, r.jump, r.step, "xyz"[r.c.Axis], math.Abs(r.c.Value), math.Abs(r.c.Value))
		}
		rails = cut
	}
	for _, r := range rails {
		c := r.c
		count, groups := drop(cols[c.Axis], func(v float64) bool { return v == c.Value })
		cutWords := ""
		if many {
			cutWords = fmt.Sprintf(", entered and left with jumps of a median %.3g nT (%.3g of its resolution steps) as a trace cut at a rail is", r.jump*r.step, r.jump)
		}
		parts = append(parts, fmt.Sprintf("b%c reads exactly %.6g nT, its %s value, on %d readings%s%s", "xyz"[c.Axis], c.Value, extremeWord(c.Max), count, groups, cutWords))
	}
	return result(note)
}

// keptRailsSep ends the rails' names in clippedRows's note on rails kept
// in the fits: the text before it names them for the shared-misfit
// warning (keptRails).
const keptRailsSep = ", as a magnetometer held at its range would, on "

// keptRails returns the rails a clippedRows note names, with the log's
// path ("cut.csv: bz reads exactly -45800 nT, its smallest value, on 480
// readings"); "" for no note.
func keptRails(note string) string {
	if i := strings.Index(note, keptRailsSep); i >= 0 {
		return note[:i]
	}
	return ""
}

// railCut returns the median distance, in resolution steps of step nT,
// from v of the readings of col beside each run of readings at v: the
// reading before the run and the one after it, in the log's order and in
// the run's group (group nil: one group). 0 when no run has a neighbour.
func railCut(col []float64, group []string, v, step float64) float64 {
	same := func(i, j int) bool { return group == nil || group[i] == group[j] }
	var d []float64
	for i := range col {
		if col[i] != v {
			continue
		}
		if i > 0 && col[i-1] != v && same(i, i-1) {
			d = append(d, math.Abs(col[i-1]-v)/step)
		}
		if i+1 < len(col) && col[i+1] != v && same(i, i+1) {
			d = append(d, math.Abs(col[i+1]-v)/step)
		}
	}
	if len(d) == 0 {
		return 0
	}
	sort.Float64s(d)
	if m := len(d) / 2; len(d)%2 == 0 {
		return (d[m-1] + d[m]) / 2
	} else {
		return d[m]
	}
}

// extremeWord names an axis's extreme for the warnings.
func extremeWord(top bool) string {
	if top {
		return "largest"
	}
	return "smallest"
}

// resolution returns the smallest gap between the distinct values of col
// (its resolution, when logged to one) and the span of its values.
func resolution(col []float64) (step, span float64) {
	v := append([]float64(nil), col...)
	sort.Float64s(v)
	step = math.Inf(1)
	for i := 1; i < len(v); i++ {
		if d := v[i] - v[i-1]; d > 0 && d < step {
			step = d
		}
	}
	if len(v) > 0 {
		span = v[len(v)-1] - v[0]
	}
	return step, span
}

// clippedWarning is clippedRows's warning for the log path: the rails
// found (parts), and left of its n readings left out.
func clippedWarning(path string, parts []string, left, n int) string {
	return fmt.Sprintf("%s: readings clipped at the magnetometer's range: %s; the field there is beyond what the sensor can read, so these readings are not the field: %d of %d readings were left out of the fits (their other axes too). Where the field is strongest, over the conductor, fewer readings remain; a sensor with a larger range, or held higher, reads it whole",
		path, strings.Join(parts, "; "), left, n)
}

// clippedACBase ends the warning of an AC log with clipped readings: the
// waveform's remaining readings, cut at one side of its peaks, no longer
// average to the steady field, so it is not compared with the base
// record's (basefield.go), which blamed the sensor's axes and calibration
// for the cut (found in review).
const clippedACBase = "; the readings left no longer average to the steady field, so its direction and size are not compared with the base record's for this log"

// clippedGapTimes returns the times of the readings of s kept (keep) right
// after rows left out: an AC log's demodulation takes the gaps before them
// for the readings clipped, not for pauses of the logger's clock
// (calibrate.DemodSettings.LeftOut).
func clippedGapTimes(s *ingest.Samples, keep []bool) []float64 {
	var t []float64
	for i := 1; i < len(keep) && i < len(s.Time); i++ {
		if keep[i] && !keep[i-1] {
			t = append(t, s.Time[i])
		}
	}
	return t
}

// clippedGapWhy and clippedGapFix word the AC windows lost to the gaps
// that clipped readings left out make (calibrate.DemodSettings): before,
// such a log was told to fix its logger's time stamps (found in review).
const (
	clippedGapWhy = "readings clipped at the magnetometer's range were left out (see the warning on them), where the field is strongest, over the conductor: the windows lost are those nearest it, which weigh most in the fits"
	clippedGapFix = "a magnetometer with a larger range, or held higher, reads the field there whole"
)
