package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse"
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

// chooseAlong refits a DC group with a background that changes linearly along
// the traverse (inverse.BackgroundAlong, three columns more) and keeps that fit
// where the readings need it: chi-square lower by alongGain or more and the
// strongest line's current or depth moved by alongShiftK of its sigmas or more.
// A far line to the side (a traction return, another cable tens of metres away)
// has a 1/r field whose change along a 16 m traverse a uniform background cannot
// hold; it then went into the line's current and depth (12% low and 0.15 m
// shallow for a 15 A rail return 40 m from a 1.5 A main, all 21 fits sound).
func chooseAlong(g *group, set *inverse.Settings, noise float64) {
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
	if err != nil || len(r.Sources) == 0 {
		return
	}
	m := float64(3 * len(g.fields))
	gain := (g.res.RMS*g.res.RMS - r.RMS*r.RMS) * m / (n * n)
	if !(gain > alongGain) {
		return
	}
	a, b := g.res.Sources[0], r.Sources[0]
	moved := math.Abs(a.Current-b.Current) > alongShiftK*b.CurrentSigma || math.Abs(a.Depth-b.Depth) > alongShiftK*b.DepthSigma
	if !moved {
		return
	}
	g.res, g.bg = r, inverse.BackgroundAlong
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
