package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

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
// Where files overlap in time they must hold the same readings (the same
// times, the same values within baseJoinNT, a value missing in one taken
// from the other); files of two stations (IAGA-2002 codes that differ),
// of two horizontal frames, or that disagree in an overlap are refused:
// each station's record departs from its own level, so joining them puts
// a step in the correction.
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
			return nil, usageErrorf("--base %s (station %s) and --base %s (station %s) are records of two stations: each departs from its own level, so joined they would put a step into the correction; give one station's files", first.Source, a, p.Source, b)
		}
		if first.Meta["horizontal_frame"] != p.Meta["horizontal_frame"] {
			return nil, usageErrorf("--base %s and --base %s give the horizontal field in different axes (%s against %s): give files of one kind (the same elements and data type)", first.Source, p.Source, frameName(first.Meta["horizontal_frame"]), frameName(p.Meta["horizontal_frame"]))
		}
		if p.Frame != first.Frame {
			return nil, usageErrorf("--base %s and --base %s are in different frames", first.Source, p.Source)
		}
	}
	// Earliest first.
	order := append([]*ingest.Samples(nil), parts...)
	start := func(s *ingest.Samples) float64 {
		for _, t := range s.Time {
			if !math.IsNaN(t) {
				return t
			}
		}
		return math.Inf(1)
	}
	sort.SliceStable(order, func(i, j int) bool { return start(order[i]) < start(order[j]) })

	type row struct {
		t       float64
		b       [3]float64
		x, y, z float64
		f       float64
	}
	pos := true
	hasF := true
	for _, p := range parts {
		pos = pos && p.X != nil && p.Y != nil && p.Z != nil
		hasF = hasF && p.F != nil
	}
	var rows []row
	var from []string // the file of each row, for messages
	ft := fmtBaseTime
	for _, p := range order {
		last := math.Inf(-1)
		if n := len(rows); n > 0 {
			last = rows[n-1].t
		}
		for i, t := range p.Time {
			if math.IsNaN(t) {
				continue
			}
			r := row{t: t, b: [3]float64{p.Bx[i], p.By[i], p.Bz[i]}, x: math.NaN(), y: math.NaN(), z: math.NaN(), f: math.NaN()}
			if pos {
				r.x, r.y, r.z = p.X[i], p.Y[i], p.Z[i]
			}
			if hasF {
				r.f = p.F[i]
			}
			if t > last {
				rows = append(rows, r)
				from = append(from, p.Source)
				continue
			}
			// In the span of the files before: the same reading, or
			// refused.
			k := sort.Search(len(rows), func(k int) bool { return rows[k].t >= t })
			if k == len(rows) || math.Abs(rows[k].t-t) > 1e-6 {
				return nil, fmt.Errorf("base logs %s and %s overlap (up to %s) with readings at other times (%s in %s only): they are not one record; give files that follow one another, or only one of them",
					from[len(from)-1], p.Source, ft(last), ft(t), p.Source)
			}
			for c := 0; c < 3; c++ {
				a, b := rows[k].b[c], r.b[c]
				switch {
				case !finiteNT(a) && finiteNT(b):
					rows[k].b[c] = b // missing in one, recorded in the other
				case finiteNT(a) && finiteNT(b) && math.Abs(a-b) > baseJoinNT:
					return nil, fmt.Errorf("base logs %s and %s overlap and disagree: at %s they give %g, %g, %g nT and %g, %g, %g nT (east, north, up): they are not the same record; give one record of one station",
						from[k], p.Source, ft(t), rows[k].b[0], rows[k].b[1], rows[k].b[2], r.b[0], r.b[1], r.b[2])
				}
			}
		}
	}
	names := make([]string, len(parts))
	for i, p := range parts {
		names[i] = p.Source
	}
	out := &ingest.Samples{
		Source:        strings.Join(names, " + "),
		Frame:         first.Frame,
		Origin:        first.Origin,
		Meta:          first.Meta,
		InFrame:       first.InFrame,
		InFrameStated: first.InFrameStated,
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
