package main

import (
	"math"
)

// The noise of DC readings measured apart from the fits.
//
// An AC window measures its own noise (the residuals of its sine fit); a DC
// fit had no such yardstick, and a misfit that every group shares (a
// go-and-return pair fitted on every traverse as one line aside, missing by
// twenty times the reading noise) passed as sound, each fit measured
// against the others. Successive readings along a traverse give one: the
// fourth difference x[i-2] - 4 x[i-1] + 6 x[i] - 4 x[i+1] + x[i+2] of
// independent readings of noise sigma has variance (1 + 16 + 36 + 16 + 1)
// sigma² = 70 sigma², while the field of a conductor, sampled densely,
// changes smoothly from one reading to the next. The second difference,
// used first (variance 6 sigma²), still saw the field's own curvature: two
// same-way cables 0.3 m apart 1.3 m under readings 0.1 m apart, with 2 nT
// of noise, read 2.5 nT, and their one-line fit, missing by 2.7 nT RMS,
// passed as at the noise; the fourth difference reads 2.0 nT there (found
// in review; simulated white noise alone gives the two measures alike
// spreads, 9 and 10% on 300 values). The scale of the differences
// is taken robustly, as their median absolute value over the median
// absolute value of a standard normal variable (0.6745), so that the few
// differences where the field curves sharply (right over a shallow
// conductor) and spikes do not set it: they raise it only when they are
// over half the readings, which errs towards a larger noise and a warning
// not given.
//
// Noise that is not independent from reading to reading (the slow wander
// of a hand-held sensor's tilt) is not seen by the differences; the shared
// misfit warning it feeds (report sharedMisfit) therefore also requires
// a DC misfit to be over 10% of the signal (report dcMisfitShare; 1% for
// AC, whose windows measure their own noise).

// minDiffReadings is the fewest readings of a group whose fourth
// differences are taken as a noise measure: the median of fewer than 30
// differences is too loose (its relative standard error, 1.25/sqrt(n) for a
// normal sample, over 20%).
const minDiffReadings = 32

// diffNoise returns the noise per axis of the readings f, taken in the
// order given (the log's), from their fourth differences; 0 when there
// are too few readings or they are not finite.
func diffNoise(f [][3]float64) float64 {
	if len(f) < minDiffReadings {
		return 0
	}
	d := make([]float64, 0, 3*(len(f)-4))
	for i := 2; i+2 < len(f); i++ {
		for k := range 3 {
			v := f[i-2][k] - 4*f[i-1][k] + 6*f[i][k] - 4*f[i+1][k] + f[i+2][k]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0
			}
			d = append(d, math.Abs(v))
		}
	}
	return medianOf(d) / madNormal / math.Sqrt(70)
}

// tracksNoise is diffNoise taken along each of the tracks given (indices
// into f in the log's order: sensorTracks, the sensors of a pole or cart
// logged in turn), their differences pooled; 0 as diffNoise. Across the
// rows of two sensors 0.5 m apart on a pole the differences read 165 nT
// of noise on readings with 2 (found in review).
func tracksNoise(f [][3]float64, tracks [][]int) float64 {
	if len(tracks) == 1 {
		return diffNoise(f)
	}
	var d []float64
	for _, tr := range tracks {
		if len(tr) < minDiffReadings {
			continue
		}
		for i := 2; i+2 < len(tr); i++ {
			for k := range 3 {
				v := f[tr[i-2]][k] - 4*f[tr[i-1]][k] + 6*f[tr[i]][k] - 4*f[tr[i+1]][k] + f[tr[i+2]][k]
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return 0
				}
				d = append(d, math.Abs(v))
			}
		}
	}
	if len(d) == 0 {
		return 0
	}
	return medianOf(d) / madNormal / math.Sqrt(70)
}

// madNormal is the median of |Z| for a standard normal Z, Phi^-1(0.75).
const madNormal = 0.6744897501960817

// measuredNoise is the group's noise measured apart from its fit, nT: for
// AC the median of its windows' own noise, for DC its diffNoise along each
// sensor's track (tracksNoise); 0 when
// not measured. Each group is judged against its own: traverses beside a
// road read with four times the noise of the rest were named as fits that
// do not describe the field when judged against the survey's median
// (found in review).
func (g *group) measuredNoise(ac bool) float64 {
	if ac {
		return medianOf(g.wsigma)
	}
	return g.memo.noise(g.points, g.fields)
}

// dcMeasuredNoise is the median over the DC groups of each group's
// measuredNoise, nT; 0 for an AC survey or when no group has enough readings.
func dcMeasuredNoise(sv *survey) float64 {
	if sv.ac {
		return 0
	}
	var v []float64
	for _, g := range sv.groups {
		if s := g.measuredNoise(false); s > 0 {
			v = append(v, s)
		}
	}
	return medianOf(v)
}
