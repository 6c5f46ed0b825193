package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse"
	"undercurrent/report"
)

// alongGain is the fall in chi-square (in the readings' own noise, measured from
// reading to reading) a fit with a background changing along the traverse
// (inverse.BackgroundAlong) must make over the uniform background's before it is
// kept. On plain DC scenarios (no far source; in review, 7 surveys of 21
// traverses each, 201 readings a traverse) the fall stayed under 30; a 15 A
// traction return 40 m to the side made it about 10,000.
const alongGain = 50

// alongShiftK is how far, in the along fit's sigmas, the strongest line's current
// or depth must move for the along fit to be kept: where the term does not move
// them, the uniform background's smaller sigmas stand (the along fit's current
// sigma is about 1.4 times the uniform one's on a 16 m traverse over a 1.3 m deep
// main).
const alongShiftK = 1.0

// alongShare and alongMin are the route-wide guard on the along refits: the
// background changing along the traverse is taken for every DC group or for
// none, and only where at least alongMin groups, and alongShare of those the
// refit was tried on, each need it (chooseAlong's gain and shift) with terms
// that agree (alongAgree). A far line to the side reaches every traverse
// alike; a cable's end, a tee, a bend or a cart's sensors make a misfit on a
// few traverses that the three terms per group would otherwise soak up (in
// review, 12 tests of this package failed with a per-group choice).
const (
	alongShare = 0.75
	alongMin   = 4
)

// alongAgreeK and alongAgreeRel bound how far a group's along terms may lie
// from the route's trend in them (a straight line in the group's order, which
// holds a far line parallel to the route or slowly converging on it): within
// alongAgreeK of the terms' combined sigmas plus alongAgreeRel of the trend's
// size, per axis. On the rail cases (15 and 60 A, 40 m off) every group agreed.
const (
	alongAgreeK   = 3.0
	alongAgreeRel = 0.25
)

// chooseAlong refits a DC group with a background that changes linearly along
// the traverse (inverse.BackgroundAlong, three columns more) and keeps that
// fit as the group's candidate (g.along) with whether the group's readings
// need it (g.alongNeed): chi-square lower by alongGain or more and the
// strongest line's current or depth moved by alongShiftK of its sigmas or
// more. Whether the candidates are taken is decided for the route at once
// (decideAlong). A far line to the side (a traction return, another cable
// tens of metres away) has a 1/r field whose change along a 16 m traverse a
// uniform background cannot hold; it then went into the line's current and
// depth (12% low and 0.15 m shallow for a 15 A rail return 40 m from a 1.5 A
// main, all 21 fits sound).
func chooseAlong(g *group, set *inverse.Settings, noise float64) {
	g.along, g.alongNeed = nil, false
	if g.err != nil || g.res == nil || len(g.res.Sources) == 0 || set.Background != inverse.BackgroundUniform || len(set.Above) > 0 || len(g.fields) < 20 {
		return
	}
	n := g.measuredNoise(false)
	if !(n > 0) {
		return
	}
	s := *set
	s.Background = inverse.BackgroundAlong
	r, err := inverse.FitLines(g.problem(false, noise), &s)
	if err != nil || len(r.Sources) == 0 || len(r.Along) != 3 {
		return
	}
	g.along = r
	m := float64(3 * len(g.fields))
	gain := (g.res.RMS*g.res.RMS - r.RMS*r.RMS) * m / (n * n)
	if !(gain > alongGain) {
		return
	}
	a, b := g.res.Sources[0], r.Sources[0]
	g.alongNeed = math.Abs(a.Current-b.Current) > alongShiftK*b.CurrentSigma || math.Abs(a.Depth-b.Depth) > alongShiftK*b.DepthSigma
}

// decideAlong takes the along refits (chooseAlong) for every group that has
// one, or for none: only when at least alongMin groups and alongShare of the
// groups refitted need the term, and alongShare of those refitted have terms
// that agree with the route's trend in them (alongAgreeing). It returns
// whether it took them.
func decideAlong(groups []*group) bool {
	take := wantAlong(groups)
	for _, g := range groups {
		if g.along == nil {
			continue
		}
		if take {
			g.res, g.bg = g.along, inverse.BackgroundAlong
		}
		g.along = nil
	}
	return take
}

// wantAlong is decideAlong's choice without taking it: whether the groups'
// along refits would be taken.
func wantAlong(groups []*group) bool {
	var tried, need []*group
	for _, g := range groups {
		if g.along == nil {
			continue
		}
		tried = append(tried, g)
		if g.alongNeed {
			need = append(need, g)
		}
	}
	return len(need) >= alongMin && float64(len(need)) >= alongShare*float64(len(tried)) &&
		float64(alongAgreeing(tried, need)) >= alongShare*float64(len(tried))
}

// dropAlong drops the groups' along refits: the uniform-background fits stand.
func dropAlong(groups []*group) {
	for _, g := range groups {
		g.along = nil
	}
}

// lineAboveFirst runs the line-above search (report.FindLineAbove) on the
// uniform-background fits when the route would take the along refits
// (wantAlong), and reports whether it takes a line above; the along term
// then stays off. An overhead line is a far line reaching every traverse
// alike, so the along term takes up much of its field (up to 77 nT per metre
// in review: a 50 A line 11.7 m over the sensors); the fits' misfit then
// falls below the level that starts the search, and the line was never
// found nor reported apart. Where the search takes none, its reason is kept
// for the warnings (sv.aboveWhy) and the along term is weighed as before.
// The search runs again in report.Build on the fits reported, so a survey
// with a line above pays for it twice.
func lineAboveFirst(o *locateOptions, sv *survey) bool {
	sv.aboveWhy = ""
	if sv.ac || !wantAlong(sv.groups) {
		return false
	}
	fits := make([]report.Fit, 0, len(sv.groups))
	for _, g := range sv.groups {
		f := report.Fit{Key: g.key, Problem: g.problem(false, sv.groupNoise(g, o.noise)), Result: g.res, Err: g.err, Settings: o.fitSettings()}
		f.Settings.Background = g.bg
		f.MeasuredNoise = g.measuredNoise(false)
		fits = append(fits, f)
	}
	la, why := report.FindLineAbove(fits, &report.BuildSettings{
		SensorHeight:  sv.datum,
		Noise:         sv.fitNoise(o.noise),
		MeasuredNoise: medianOf(sv.windowSigma) + dcMeasuredNoise(sv),
		LineAbove:     true,
	})
	if la != nil {
		return true
	}
	sv.aboveWhy = why
	return false
}

// saysLineAboveWhy reports whether warnings already say why a line above
// was not taken.
func saysLineAboveWhy(warnings []string) bool {
	for _, w := range warnings {
		if strings.Contains(w, "(--line-above) was not taken") {
			return true
		}
	}
	return false
}

// alongAgreeing counts the groups of tried whose along terms lie within
// alongAgreeK sigmas plus alongAgreeRel of the trend's size of a straight line
// in the groups' order, fitted per axis (weighted by the terms' sigmas) to the
// groups that need the term (need). A far line gives terms the same on every
// traverse, or changing smoothly along the route; misfits local to a few
// traverses do not.
func alongAgreeing(tried, need []*group) int {
	idx := make(map[*group]float64, len(tried))
	for i, g := range tried {
		idx[g] = float64(i)
	}
	var trend [3][2]float64 // per axis: value at index 0, change per group
	for k := range 3 {
		var sw, sx, sy, sxx, sxy float64
		for _, g := range need {
			sg := g.along.AlongSigma[k]
			if !(sg > 0) {
				continue
			}
			w := 1 / (sg * sg)
			x, y := idx[g], g.along.Along[k]
			sw += w
			sx += w * x
			sy += w * y
			sxx += w * x * x
			sxy += w * x * y
		}
		if !(sw > 0) {
			return 0
		}
		det := sw*sxx - sx*sx
		if det > 1e-12*sw*sxx {
			b := (sw*sxy - sx*sy) / det
			trend[k] = [2]float64{(sy - b*sx) / sw, b}
		} else {
			trend[k] = [2]float64{sy / sw, 0}
		}
	}
	agree := 0
	for _, g := range tried {
		x := idx[g]
		var size float64
		var at [3]float64
		for k := range 3 {
			at[k] = trend[k][0] + trend[k][1]*x
			size += at[k] * at[k]
		}
		size = math.Sqrt(size)
		ok := true
		for k := range 3 {
			if math.Abs(g.along.Along[k]-at[k]) > alongAgreeK*g.along.AlongSigma[k]+alongAgreeRel*size {
				ok = false
			}
		}
		if ok {
			agree++
		}
	}
	return agree
}

// alongWarning names the groups whose fits took a background changing along
// the traverse, with the largest change seen, or "" for none.
func alongWarning(groups []*group) string {
	var keys []string
	var most float64
	for _, g := range groups {
		if g.bg != inverse.BackgroundAlong || g.res == nil || len(g.res.Along) != 3 {
			continue
		}
		keys = append(keys, g.key)
		a := g.res.Along
		most = math.Max(most, math.Sqrt(a[0]*a[0]+a[1]*a[1]+a[2]*a[2]))
	}
	if len(keys) == 0 {
		return ""
	}
	sort.Strings(keys)
	count := len(keys)
	if len(keys) > 8 {
		keys = append(keys[:8], "...")
	}
	return fmt.Sprintf("%d group(s) (%s) needed a background field changing steadily along the traverse, up to %.2g nT per metre, and were fitted with one: a far source to the side (a traction return, another cable or a line tens of metres off) or a drift in time that the base station did not take out. Without that term its change along the traverse would have gone into the conductor's current and depth; their sigmas are somewhat wider for it. Look for the source, and survey longer traverses or a second line beside these to confirm",
		count, strings.Join(keys, ", "), most)
}
