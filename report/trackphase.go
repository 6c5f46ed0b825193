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
		a, b, ok := alongPhases(s, m)
		if !ok {
			continue
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
// (trackPhase) and, for a return path, its ReturnShare and NetToEarthA
// (trackReturn).
func (d *Document) addTrackPhases() {
	for i := range d.Conductors {
		t := &d.Conductors[i]
		t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = nil, nil
		t.ReturnShare, t.ReturnShareSigma, t.NetToEarthA, t.NetToEarthSigmaA = nil, nil, nil, nil
		if p, sg, _, ok := trackPhase(d, t); ok {
			t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = &p, &sg
			if math.Abs(p) > 90 {
				if sh, ssh, net, snet, ok := trackReturn(d, t); ok {
					t.ReturnShare, t.ReturnShareSigma, t.NetToEarthA, t.NetToEarthSigmaA = &sh, &ssh, &net, &snet
				}
			}
		}
	}
}

// trackReturn is, for further conductor t carrying current back beside
// conductor 1 (an earth return along a pipe or a sheath, read within 90°
// of anti-phase), the share of conductor 1's current it carries back,
// -Re(I/I1) = |I| cos(Δ-180°)/|I1| for its phasor I at Δ from conductor
// 1's I1, and the magnitude of their phasor sum |I1 + I|, the net current
// that returns by other paths (remote earth), A; each over the groups
// trackPhase uses (both read along conductor 1's direction), with its
// sigma from the currents' and phases' sigmas (first order, their
// correlation in the fit left out, as trackPhase does), averaged with
// inverse-variance weights and widened by the Birge ratio when the
// groups scatter beyond their sigmas. ok is false where no group has
// both, or either conductor is a go-and-return pair read as its net.
func trackReturn(d *Document, t *Track) (share, shareSigma, net, netSigma float64, ok bool) {
	if d.Route == nil || d.Route.PairNet || t.Route.PairNet {
		return 0, 0, 0, 0, false
	}
	main := map[string]Station{}
	for _, s := range d.Route.Stations {
		if s.Used && s.Phase != nil && s.PhaseSigma != nil {
			main[s.Key] = s
		}
	}
	var shares, sw1, nets, sw2 []float64
	for _, s := range t.Route.Stations {
		m, found := main[s.Key]
		if !s.Used || !found || s.Phase == nil || s.PhaseSigma == nil {
			continue
		}
		a, b, ok := alongPhases(s, m)
		if !ok {
			continue
		}
		i1, i2 := math.Abs(m.Current), math.Abs(s.Current)
		if !(i1 > 0) {
			continue
		}
		dl := (a - b) * math.Pi / 180
		sd := math.Hypot(*s.PhaseSigma, *m.PhaseSigma) * math.Pi / 180
		c, sn := math.Cos(dl), math.Sin(dl)
		r := i2 / i1
		sh := -r * c
		ssh := math.Sqrt(sq(c/i1*s.CurrentSigma) + sq(r*c/i1*m.CurrentSigma) + sq(r*sn*sd))
		n := math.Sqrt(math.Max(0, i1*i1+i2*i2+2*i1*i2*c))
		var sgn float64
		if n > 0 {
			sgn = math.Sqrt(sq((i1+i2*c)/n*m.CurrentSigma) + sq((i2+i1*c)/n*s.CurrentSigma) + sq(i1*i2*sn/n*sd))
		} else {
			sgn = math.Hypot(m.CurrentSigma, s.CurrentSigma)
		}
		if !(ssh > 0) || !(sgn > 0) || math.IsInf(ssh, 0) || math.IsInf(sgn, 0) {
			continue
		}
		shares, sw1 = append(shares, sh), append(sw1, 1/(ssh*ssh))
		nets, sw2 = append(nets, n), append(sw2, 1/(sgn*sgn))
	}
	if len(shares) == 0 {
		return 0, 0, 0, 0, false
	}
	share, shareSigma = birgeMean(shares, sw1)
	net, netSigma = birgeMean(nets, sw2)
	return share, shareSigma, net, netSigma, true
}

func sq(x float64) float64 { return x * x }

// birgeMean is the inverse-variance mean of xs (weights ws) and its
// sigma, widened by the Birge ratio when they scatter beyond their sigmas.
func birgeMean(xs, ws []float64) (mean, sigma float64) {
	var sw, swx float64
	for i, x := range xs {
		sw, swx = sw+ws[i], swx+ws[i]*x
	}
	mean = swx / sw
	sigma = math.Sqrt(1 / sw)
	if len(xs) > 1 {
		var chi2 float64
		for i, x := range xs {
			chi2 += ws[i] * (x - mean) * (x - mean)
		}
		if r := chi2 / float64(len(xs)-1); r > 1 {
			sigma *= math.Sqrt(r)
		}
	}
	return mean, sigma
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

// alongPhases gives the phases of station s and of conductor 1's station m
// at one place, each read along m's direction with its current's sign
// taken in; ok is false when the two lines cross too steeply to compare.
func alongPhases(s, m Station) (a, b float64, ok bool) {
	cos := s.Direction[0]*m.Direction[0] + s.Direction[1]*m.Direction[1]
	if math.Abs(cos) < crossPhaseCos {
		return 0, 0, false
	}
	a = *s.Phase
	if s.Current < 0 {
		a += 180
	}
	if cos < 0 {
		a += 180
	}
	b = *m.Phase
	if m.Current < 0 {
		b += 180
	}
	return a, b, true
}
