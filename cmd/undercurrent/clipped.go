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
// waveform's peaks, cycle after cycle. They are left out of the fits, with
// a warning naming them first.

// clipNextRatio is how many times the readings at the next distinct value
// inside a candidate rail its own readings must be.
const clipNextRatio = 4

// clippedRows finds the readings of log s (its field columns as read,
// before any correction) pinned at an axis's extreme, and returns which
// rows to keep (nil when none is clipped) and a warning naming the rails,
// the groups and the counts, for the log path. With the magnetometer's
// range rng, nT (--range-nt; 0 for none), readings within
// live.SaturationMargin of ±rng (noise the reading noise given, 0 for
// none) are clipped too, as serve takes them with a site file's range_nt:
// a rail with readout noise on it repeats no value.
func clippedRows(path string, s *ingest.Samples, rng, noise float64) ([]bool, string) {
	n := s.Len()
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	var keep []bool
	var parts []string
	left := 0
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
		lim := rng - live.SaturationMargin(noise, rng)
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
			count, where := drop(col, func(v float64) bool { return math.Abs(v) >= lim })
			parts = append(parts, fmt.Sprintf("b%c reads within %.3g nT of the ±%.6g nT range given (--range-nt) on %d readings%s", "xyz"[k], rng-lim, rng, count, where))
		}
	}
	if n < minDiffReadings {
		if keep == nil {
			return nil, ""
		}
		return keep, clippedWarning(path, parts, left, n)
	}
	rd := make([][3]float64, n)
	for i := range n {
		rd[i] = [3]float64{cols[0][i], cols[1][i], cols[2][i]}
	}
	for _, c := range calibrate.FindClipped(rd) {
		if rng > 0 && math.Abs(c.Value) >= rng-live.SaturationMargin(noise, rng) {
			continue // named above
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
		which := "smallest"
		if c.Max {
			which = "largest"
		}
		count, where := drop(col, func(v float64) bool { return v == c.Value })
		parts = append(parts, fmt.Sprintf("b%c reads exactly %.6g nT, its %s value, on %d readings%s", "xyz"[c.Axis], c.Value, which, count, where))
	}
	if keep == nil {
		return nil, ""
	}
	return keep, clippedWarning(path, parts, left, n)
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
