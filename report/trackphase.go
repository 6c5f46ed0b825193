package report

import (
	"fmt"
	"math"
)

// crossPhaseCos is the least |cosine| of the angle in plan between a
// further conductor and conductor 1 at which trackPhase compares their
// phases: nearer square than 60°, which way the further one's current
// runs "along" conductor 1 is a convention, not a relation.
const crossPhaseCos = 0.5

// trackPhase is the phase of further conductor t's AC current less
// conductor 1's, degrees in (-180, 180], and its one-sigma uncertainty,
// with n the number of groups it is taken over: the groups where both
// conductors' stations are used and carry a phase. Each station's phase
// is turned by 180° where its current is negative or its direction runs
// against conductor 1's in plan, so that both currents are read as
// flowing along conductor 1 (groups where the two cross nearer square
// than crossPhaseCos allows are left out). Phases are referenced to one
// time origin (Source.Phase), so a difference within one group is free of any error
// in the demodulation frequency, which turns both alike. The per-group
// differences, each with the two phases' sigmas in quadrature (the fit's
// correlation between them is not in the stations, and leaving it out
// errs wide), are unwrapped about the first and averaged with inverse
// variance weights; the mean's sigma is widened by the Birge ratio
// sqrt(chi2/(n-1)) when the groups scatter more than their sigmas allow
// (Birge, Phys. Rev. 40:207-227, 1932). ok is false for DC or when no
// group has both.
func trackPhase(d *Document, t *Track) (phase, sigma float64, n int, ok bool) {
	if d.Route == nil {
		return 0, 0, 0, false
	}
	main := map[string]Station{}
	for _, s := range d.Route.Stations {
		if s.Used && s.Phase != nil && s.PhaseSigma != nil {
			main[s.Key] = s
		}
	}
	var diffs, ws []float64
	for _, s := range t.Route.Stations {
		m, found := main[s.Key]
		if !s.Used || !found || s.Phase == nil || s.PhaseSigma == nil {
			continue
		}
		sg := math.Hypot(*s.PhaseSigma, *m.PhaseSigma)
		if !(sg > 0) || math.IsInf(sg, 0) {
			continue
		}
		cos := s.Direction[0]*m.Direction[0] + s.Direction[1]*m.Direction[1]
		if math.Abs(cos) < crossPhaseCos {
			continue
		}
		a := *s.Phase
		if s.Current < 0 {
			a += 180
		}
		if cos < 0 {
			a += 180
		}
		b := *m.Phase
		if m.Current < 0 {
			b += 180
		}
		diff := wrapDeg(a - b)
		if len(diffs) > 0 {
			diff = diffs[0] + wrapDeg(diff-diffs[0])
		}
		diffs, ws = append(diffs, diff), append(ws, 1/(sg*sg))
	}
	if len(diffs) == 0 {
		return 0, 0, 0, false
	}
	sw, swx := 0.0, 0.0
	for i, x := range diffs {
		sw, swx = sw+ws[i], swx+ws[i]*x
	}
	mean := swx / sw
	sigma = math.Sqrt(1 / sw)
	if len(diffs) > 1 {
		chi2 := 0.0
		for i, x := range diffs {
			chi2 += ws[i] * (x - mean) * (x - mean)
		}
		if r := chi2 / float64(len(diffs)-1); r > 1 {
			sigma *= math.Sqrt(r)
		}
	}
	return wrapDeg(mean), sigma, len(diffs), true
}

// wrapDeg wraps an angle in degrees into (-180, 180].
func wrapDeg(a float64) float64 {
	a = math.Mod(a, 360)
	switch {
	case a > 180:
		a -= 360
	case a <= -180:
		a += 360
	}
	return a
}

// addTrackPhases sets each further conductor's PhaseFromConductor1
// (trackPhase).
func (d *Document) addTrackPhases() {
	for i := range d.Conductors {
		t := &d.Conductors[i]
		t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = nil, nil
		if p, sg, _, ok := trackPhase(d, t); ok {
			t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = &p, &sg
		}
	}
}

// stationPhase words station s's AC phase, " ∠-110.0 ± 0.02°"; "" for DC.
// An AC station without a phase (a go-and-return pair whose net current
// is within its noise, phaseless) reads " (phase not determined)".
func stationPhase(d *Document, s Station) string {
	if s.Phase == nil || s.PhaseSigma == nil {
		if d != nil && d.Signal.Mode == SignalAC && s.Used {
			return " (phase not determined)"
		}
		return ""
	}
	return " ∠" + pm(*s.Phase, *s.PhaseSigma) + "°"
}

// PhaseAngleWords says what an AC current's phase angle (∠) in a summary
// or the terminal table is measured against, for a crew that would take
// it for the supply's phase: the reference of results.json's phase_deg
// (GeoPhaseReference) in plain words.
const PhaseAngleWords = "in degrees against a reference timed from the log's clock, not the supply's phases: compare them between conductors and along the route"

// PhaseAngleWordsWithinGroups is PhaseAngleWords where groups were fitted
// with phase ramps (Signal.PhasesWithinGroups): the reference then turns
// from group to group. Before, a 152 Hz tracer demodulated 0.0008 Hz off
// the frequency its groups' ramps agreed on turned 12.8° a group, 172.5°
// to 121.2° along the route at sigmas of 0.05°, under a header telling to
// compare them along the route (found in review).
const PhaseAngleWordsWithinGroups = "in degrees against a reference timed from the log's clock, not the supply's phases: compare them between the conductors of a group, not along the route (the groups were fitted with phase ramps, see the warnings)"

// PhaseWords is the words on the phase angles for the signal sig:
// PhaseAngleWords, or PhaseAngleWordsWithinGroups.
func PhaseWords(sig Signal) string {
	if sig.PhasesWithinGroups {
		return PhaseAngleWordsWithinGroups
	}
	return PhaseAngleWords
}

// trackPhaseClause words further conductor t's phase relative to
// conductor 1 for its summary sentence (as results.json's
// phase_from_conductor_1_deg gives it): ", its phase -120.0 ± 0.02° from
// conductor 1's (both read along conductor 1's direction)"; "" for DC or when it is not known.
func trackPhaseClause(t *Track) string {
	if t.PhaseFromConductor1 == nil || t.PhaseFromConductor1Sigma == nil {
		return ""
	}
	return fmt.Sprintf(", its phase %s° from conductor 1's (both read along conductor 1's direction)", pm(*t.PhaseFromConductor1, *t.PhaseFromConductor1Sigma))
}
