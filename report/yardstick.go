package report

import (
	"math"
	"sort"
)

// The yardstick that calls a group's fit poor when the reading noise was
// not given.
//
// Each fit then estimates the noise from its own residuals (Result.Sigma),
// and says nothing of its quality by itself: it is judged against the
// survey's reference noise (Group.ReferenceNoise, the route's poor-fit
// check on ReferenceChi2/DOF). That reference had been the median of the
// groups' estimates, which is fragile where the groups split into fits
// that meet their noise and fits the straight-line model misses: on the
// demo they lay at 0.7-2.0 nT and 3.7-71 nT, 16 and 15 of 31, and one
// traverse's fit reaching its noise moved the median from 3.7 to 2.0 nT
// and added six "misses ... more than the noise allows" findings on
// traverses whose fits had not changed.
//
// When the groups' noise was measured apart from their fits
// (Fit.MeasuredNoise, else BuildSettings.MeasuredNoise: for AC the
// windows' own sine-fit residuals, for DC the fourth differences of
// successive readings, which the Earth's field and the conductors' smooth
// fields barely touch), each fit is judged against its own noise: its
// misfit ratio is Result.Sigma over that noise, and the survey's
// reference ratio is the lower quartile of the groups' ratios, at least 1
// (as the route's strain check, inverse/route strain.go, takes it). A
// group's reference noise is the reference ratio times its own measured
// noise. The quartile stays among the fits that meet their noise while
// they are over a quarter of the groups, so that one fit changing moves it
// by one rank within them, not from one kind to the other; the ratio
// takes in, as the norm, what every fit misses beyond the measured noise
// (a hand-held sensor's slow tilt wander, which the differences do not
// see, made exact DC fits miss by 2.3 times it; the demo's best AC fits
// miss by 1.3 times the windows' noise); and a group read with more noise
// than the others (beside a road) is judged against its own, not called
// poor for it. A misfit over three quarters of the groups share is taken
// as the norm: sharedMisfit warns of it.
//
// Without measured noise on at least minReferenceGroups groups the
// reference is the median of the groups' estimates, as before, and with
// fewer groups than that there is none (the route's poor-fit check is
// off).
//
// Result.Sigma and the measured noise are both per real component of a
// reading: per axis for DC; for AC per real and per imaginary part of a
// phasor (the fit's degrees of freedom count both, and the windows'
// noise is per component).

// minReferenceGroups is the fewest groups with a noise estimate from which
// a reference noise is taken.
const minReferenceGroups = 3

// referenceQuantile is the quantile of the groups' misfit ratios taken as
// the survey's reference ratio (inverse/route strainRef).
const referenceQuantile = 0.25

// yardstick is the reference noise of Build's fits (see above).
type yardstick struct {
	// given is BuildSettings.Noise: each fit is measured against the
	// noise its problem was given, or this.
	given float64
	// ratio is the reference misfit ratio and fallback the measured noise
	// of a group that has none of its own, nT; ratio is 0 when the
	// groups' noise was not measured.
	ratio, fallback float64
	// median is the median of the groups' own noise estimates, nT, the
	// reference without measured noise; 0 when there is none.
	median float64
}

// yardstickOf returns the reference noise of fits for Build.
func yardstickOf(fits []Fit, bs *BuildSettings) yardstick {
	if bs.Noise > 0 {
		return yardstick{given: bs.Noise}
	}
	var sig, own []float64
	for i := range fits {
		if r := fits[i].Result; r != nil && r.Sigma > 0 {
			sig = append(sig, r.Sigma)
			if m := fits[i].MeasuredNoise; m > 0 && finite(m) {
				own = append(own, m)
			}
		}
	}
	var y yardstick
	if len(sig) < minReferenceGroups {
		return y
	}
	y.median = median(sig)
	y.fallback = bs.MeasuredNoise
	if !(y.fallback > 0) || !finite(y.fallback) {
		y.fallback = 0
		if len(own) > 0 {
			y.fallback = median(own)
		}
	}
	if y.fallback == 0 {
		return y
	}
	var ratios []float64
	for i := range fits {
		if r := fits[i].Result; r != nil && r.Sigma > 0 && finite(r.Sigma) {
			ratios = append(ratios, r.Sigma/y.noise(&fits[i]))
		}
	}
	if len(ratios) < minReferenceGroups {
		return y
	}
	sort.Float64s(ratios)
	// Nearest rank: the smallest ratio at or above the quantile.
	y.ratio = math.Max(1, ratios[int(math.Ceil(referenceQuantile*float64(len(ratios))))-1])
	return y
}

// noise is fit f's measured noise, or the survey's when it has none, nT.
func (y yardstick) noise(f *Fit) float64 {
	if m := f.MeasuredNoise; m > 0 && finite(m) {
		return m
	}
	return y.fallback
}

// set reports whether there is a reference noise.
func (y yardstick) set() bool {
	return y.given > 0 || y.ratio > 0 || y.median > 0
}

// of returns fit f's reference noise, nT; 0 when there is none.
func (y yardstick) of(f *Fit) float64 {
	switch {
	case y.given > 0:
		// With the noise given, each fit is measured against its own (an
		// AC group's windows may hold fewer samples than another's).
		if f.Problem != nil && f.Problem.Sigma > 0 {
			return f.Problem.Sigma
		}
		return y.given
	case y.ratio > 0:
		return y.ratio * y.noise(f)
	}
	return y.median
}
