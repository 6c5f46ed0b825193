package main

import (
	"fmt"
	"math"
	"math/bits"
	"sort"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// baseJoinNT is how closely two base files must agree, nT on each axis,
// where they hold a reading at the same time: IAGA-2002 values are given
// to 0.01 nT, and two files of one station's record hold the same values.
const baseJoinNT = 0.01

// joinBaseLogs joins the base logs given by repeated --base flags (each in
// time order, its repeated rows left out) into one record in time order.
// Observatory files hold one day each, so a survey across midnight UTC
// needs two; before, a repeated --base kept only the last file, without a
// word, and the survey was refused as not covered.
//
// The rows of all files are taken, whatever the order the files are
// given in. Where files hold a reading at the same time it must be the
// same (within baseJoinNT, a value missing in one taken from the other),
// and files whose spans overlap must share readings there; files of two
// stations (IAGA-2002 codes that differ), of two horizontal frames, that
// disagree in an overlap, or whose level steps where one ends and the next
// begins (checkBaseJunctions) are refused: each station's record, and a
// logger's after a restart, departs from its own level, so joining them
// puts a step in the correction.
func joinBaseLogs(parts []*ingest.Samples) (*ingest.Samples, error) {
	if len(parts) == 1 {
		return parts[0], nil
	}
	for _, p := range parts {
		if p.Len() == 0 || p.NoTime {
			return nil, fmt.Errorf("base log %s has no times: several base logs are joined in time order", p.Source)
		}
	}
	first := parts[0]
	for _, p := range parts[1:] {
		a, b := first.Meta["iaga_code"], p.Meta["iaga_code"]
		if a != "" && b != "" && !strings.EqualFold(a, b) {
			return nil, fmt.Errorf("--base %s (station %s) and --base %s (station %s) are records of two stations: each departs from its own level, so joined they would put a step into the correction; give one station's files", first.Source, a, p.Source, b)
		}
		if first.Meta["horizontal_frame"] != p.Meta["horizontal_frame"] {
			return nil, fmt.Errorf("--base %s and --base %s give the horizontal field in different axes (%s against %s): give files of one kind (the same elements and data type)", first.Source, p.Source, frameName(first.Meta["horizontal_frame"]), frameName(p.Meta["horizontal_frame"]))
		}
		if p.Frame != first.Frame {
			return nil, fmt.Errorf("--base %s and --base %s are in different frames", first.Source, p.Source)
		}
	}
	if len(parts) > 64 {
		return nil, usageErrorf("%d base logs given: at most 64 are joined", len(parts))
	}
	type row struct {
		t       float64
		b       [3]float64
		x, y, z float64
		f       float64
		in      uint64 // the files holding a reading at this time, a bit each
	}
	pos := true
	hasF := true
	for _, p := range parts {
		pos = pos && p.X != nil && p.Y != nil && p.Z != nil
		hasF = hasF && p.F != nil
	}
	// Every file's rows, in time order; at one time, in the order given.
	// The rows of all files are taken (the union), so the order of the
	// files on the command line does not matter: before, files were
	// joined one after another, and a row only the later file held inside
	// the earlier one's span was refused while a row only the earlier one
	// held was taken, so one order of two files was refused and the other
	// accepted.
	var all []row
	for fi, p := range parts {
		for i, t := range p.Time {
			if math.IsNaN(t) {
				continue
			}
			r := row{t: t, b: [3]float64{p.Bx[i], p.By[i], p.Bz[i]}, x: math.NaN(), y: math.NaN(), z: math.NaN(), f: math.NaN(), in: 1 << fi}
			if pos {
				r.x, r.y, r.z = p.X[i], p.Y[i], p.Z[i]
			}
			if hasF {
				r.f = p.F[i]
			}
			all = append(all, r)
		}
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].t < all[j].t })
	ft := fmtGapTime
	names := make([]string, len(parts))
	for i, p := range parts {
		names[i] = p.Source
	}
	firstOf := func(in uint64) string { return names[bits.TrailingZeros64(in)] }
	var rows []row
	for _, r := range all {
		n := len(rows)
		if n == 0 || math.Abs(rows[n-1].t-r.t) > 1e-6 {
			rows = append(rows, r)
			continue
		}
		// A reading at the same time in two files: the same reading, or
		// refused.
		k := &rows[n-1]
		for c := 0; c < 3; c++ {
			a, b := k.b[c], r.b[c]
			switch {
			case !finiteNT(a) && finiteNT(b):
				k.b[c] = b // missing in one, recorded in the other
			case finiteNT(a) && finiteNT(b) && math.Abs(a-b) > baseJoinNT:
				return nil, joinDisagreeError(firstOf(k.in), firstOf(r.in), r.t, k.b, r.b, first.Meta["horizontal_frame"] != "")
			}
		}
		if !finiteNT(k.f) {
			k.f = r.f
		}
		k.in |= r.in
	}
	// Files whose spans overlap must share readings there: two loggers
	// whose readings interleave without a common time are two records,
	// and joined they would put a saw-tooth of their levels into the
	// correction.
	span := func(fi int) (lo, hi float64) {
		lo, hi = math.Inf(1), math.Inf(-1)
		for _, t := range parts[fi].Time {
			if !math.IsNaN(t) {
				lo, hi = math.Min(lo, t), math.Max(hi, t)
			}
		}
		return lo, hi
	}
	for a := range parts {
		for b := a + 1; b < len(parts); b++ {
			alo, ahi := span(a)
			blo, bhi := span(b)
			lo, hi := math.Max(alo, blo), math.Min(ahi, bhi)
			if lo > hi {
				continue
			}
			both, ina, inb := uint64(1)<<a|uint64(1)<<b, 0, 0
			shared := false
			other := math.NaN()
			for _, r := range rows {
				if r.t < lo-1e-6 || r.t > hi+1e-6 {
					continue
				}
				switch {
				case r.in&both == both:
					shared = true
				case r.in&(1<<a) != 0:
					ina++
				case r.in&(1<<b) != 0:
					inb++
				}
				if r.in&both != both && math.IsNaN(other) {
					other = r.t
				}
			}
			if !shared && ina > 0 && inb > 0 {
				return nil, fmt.Errorf("base logs %s and %s overlap (%s to %s) with readings at other times and none at a common time (%s in one only): they are not one record; give files that follow one another, or only one of them",
					names[a], names[b], ft(lo), ft(hi), ft(other))
			}
		}
	}
	// Where one file's readings end and another's begin, the record must
	// go on at its level: a logger restarted or moved between two files
	// reads another level, and joined without a word the step went into
	// the correction and was taken for a turn of the conductor.
	jt, jin := make([]float64, len(rows)), make([]uint64, len(rows))
	var jb [3][]float64
	for c := range jb {
		jb[c] = make([]float64, len(rows))
	}
	for i, r := range rows {
		jt[i], jin[i] = r.t, r.in
		for c := range jb {
			jb[c][i] = r.b[c]
		}
	}
	if err := checkBaseJunctions(jt, jb, jin, names); err != nil {
		return nil, err
	}
	out := &ingest.Samples{
		Source:        strings.Join(names, " + "),
		Frame:         first.Frame,
		Origin:        first.Origin,
		Meta:          first.Meta,
		InFrame:       first.InFrame,
		InFrameStated: first.InFrameStated,
		TimeSaidUTC:   true,
	}
	// The joined record's times may be local when any file's may
	// (zoneShiftHint).
	for _, p := range parts {
		out.NaiveTime = out.NaiveTime || p.NaiveTime
		out.TimeSaidUTC = out.TimeSaidUTC && p.TimeSaidUTC
	}
	n := len(rows)
	out.Time = make([]float64, n)
	out.Bx, out.By, out.Bz = make([]float64, n), make([]float64, n), make([]float64, n)
	if pos {
		out.X, out.Y, out.Z = make([]float64, n), make([]float64, n), make([]float64, n)
	}
	if hasF {
		out.F = make([]float64, n)
	}
	for i, r := range rows {
		out.Time[i] = r.t
		out.Bx[i], out.By[i], out.Bz[i] = r.b[0], r.b[1], r.b[2]
		if pos {
			out.X[i], out.Y[i], out.Z[i] = r.x, r.y, r.z
		}
		if hasF {
			out.F[i] = r.f
		}
	}
	return out, nil
}

// frameName words an IAGA-2002 horizontal frame for messages.
func frameName(f string) string {
	if f == "" {
		return "east and north as read"
	}
	return f
}

func finiteNT(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// baseStepNT is the smallest step where one base file ends and the next
// begins that is refused, nT on an axis: a few nT, more than a magnetometer's
// noise and the 0.01 nT of an IAGA-2002 value, and well under the 10-100 nT
// a fluxgate logger's level moves when it is restarted or set down again.
// A larger step is refused only when the record itself does not change as
// much over as long nearby (baseStepTimes its largest change).
const (
	baseStepNT    = 2.0
	baseStepTimes = 3.0
)

// checkBaseJunctions looks where the readings of one base file end and
// another's begin (rows k-1 and k held by no file in common) for a step in
// the record's level: the change across the junction, on each axis,
// against the record's own largest change over as long within
// calibrate.LineWindow either side (spans inside one file). t, b and in
// are the joined record's times, field (east, north, up; NaN missing)
// and the files holding each row, a bit each; names are the files.
func checkBaseJunctions(t []float64, b [3][]float64, in []uint64, names []string) error {
	firstOf := func(in uint64) string { return names[bits.TrailingZeros64(in)] }
	axes := [3]string{"east", "north", "up"}
	for k := 1; k < len(t); k++ {
		if in[k-1]&in[k] != 0 {
			continue
		}
		var steps []string
		var excess, allowed, dt float64
		for c := range 3 {
			ia, ib := k-1, k
			for ia >= 0 && !finiteNT(b[c][ia]) {
				ia--
			}
			for ib < len(t) && !finiteNT(b[c][ib]) {
				ib++
			}
			if ia < 0 || ib == len(t) || t[ib]-t[ia] > calibrate.LineWindow {
				continue
			}
			d := t[ib] - t[ia]
			jump := b[c][ib] - b[c][ia]
			most := recordChange(t, b[c], in, t[ia], t[ib], d)
			lim := math.Max(baseStepNT, baseStepTimes*most)
			steps = append(steps, fmt.Sprintf("%+.2f nT %s", jump, axes[c]))
			if e := math.Abs(jump) - lim; e > excess {
				excess, allowed, dt = e, most, d
			}
		}
		if excess == 0 {
			continue
		}
		return fmt.Errorf("base logs %s and %s do not join at one level: from %s to %s (%g s) the field steps by %s, where within an hour the record itself changes by at most %.2f nT over as long; a logger restarted or moved between its files reads another level, and joined the step would go into the correction as a change of the field along the survey (a bend or a current step that is not there): give one record at one level (subtract the step from one file), or correct each part of the survey with its own base file",
			firstOf(in[k-1]), firstOf(in[k]), fmtGapTime(t[k-1]), fmtGapTime(t[k]), math.Round(dt*1e3)/1e3, strings.Join(steps, ", "), allowed)
	}
	return nil
}

// recordChange is the largest change of one component v over spans d
// long (within half a sample) whose ends one file holds and that do not
// straddle [t0, t1], starting within calibrate.LineWindow of it; 0 when
// there is none.
func recordChange(t, v []float64, in []uint64, t0, t1, d float64) float64 {
	lo := sort.SearchFloat64s(t, t0-calibrate.LineWindow)
	hi := sort.SearchFloat64s(t, t1+calibrate.LineWindow)
	tol := 0.5 * d
	if hi-lo > 1 {
		tol = math.Min(tol, 0.5*(t[hi-1]-t[lo])/float64(hi-lo-1))
	}
	stride := max(1, (hi-lo)/4000)
	most := 0.0
	for i := lo; i < hi; i += stride {
		if !finiteNT(v[i]) {
			continue
		}
		j := sort.SearchFloat64s(t, t[i]+d-tol)
		if j >= len(t) || math.Abs(t[j]-t[i]-d) > tol || !finiteNT(v[j]) || in[i]&in[j] == 0 {
			continue
		}
		if t[i] < t1 && t[j] > t0 {
			continue // straddles the junction
		}
		most = math.Max(most, math.Abs(v[j]-v[i]))
	}
	return most
}

// joinDisagreeError words two base files' readings that differ at one
// time: their values (east, north, up, 0.01 nT) and by how much the
// horizontal and vertical field differ.
func joinDisagreeError(a, b string, t float64, va, vb [3]float64, iaga bool) error {
	// To 0.01 nT, without a sign on a zero.
	r2 := func(x float64) float64 { return math.Round(x*100)/100 + 0 }
	dh := r2(math.Hypot(vb[0], vb[1]) - math.Hypot(va[0], va[1]))
	dz := r2(vb[2] - va[2])
	dv := math.Hypot(math.Hypot(va[0]-vb[0], va[1]-vb[1]), dz)
	hint := ""
	if iaga {
		hint = " (an observatory's one-minute values are filtered from its one-second ones, so its minute file and second file hold different readings: give one of them)"
	}
	return fmt.Errorf("base logs %s and %s overlap and disagree: at %s they give %.2f, %.2f, %.2f nT and %.2f, %.2f, %.2f nT (east, north, up), %.2f nT apart (horizontal intensity %+.2f nT, vertical %+.2f nT), where readings of one record agree within %g nT: they are not the same record; give one record of one station%s",
		a, b, fmtGapTime(t), va[0], va[1], va[2], vb[0], vb[1], vb[2], dv, dh, dz, baseJoinNT, hint)
}
