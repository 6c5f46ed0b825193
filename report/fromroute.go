package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/inverse/route"
)

// SetRoute records the along-route analysis r in d: it fills d.Route,
// gives every group its chainage, turns each group's line sources to point
// along increasing chainage (negating current, or adding 180 degrees to the
// phase, and flipping azimuth, dip, offset, span and the profile's offsets
// to match), puts d.Groups in route order (groups
// with no station keep their order, after the others), and adds r's
// findings to d.Findings, which it then sorts with SortFindings. Cover is
// reported per station when the document's depth reference knows the
// ground (DepthBelowGround, or a non-zero sensor height).
func (d *Document) SetRoute(r *route.Route) {
	if r == nil {
		return
	}
	d.Route = d.routeOf(r)
	pos := map[string]int{}
	for i, p := range r.Stations {
		if _, dup := pos[p.Key]; !dup {
			pos[p.Key] = i
		}
	}
	// turned[key] holds a group's problem text before and after its
	// strongest line's DC current was turned (turnProblemCurrent), so that
	// the route's findings about that group, which quote the problem as
	// the fit first worded it, are worded again with it.
	turned := map[string][2]string{}
	for i := range d.Groups {
		g := &d.Groups[i]
		k, ok := pos[g.Key]
		if !ok {
			continue
		}
		c := r.Stations[k].Chainage
		g.Chainage = &c
		// A bend nearby tilts the line the route follows here
		// (route.BendDoubt): its sigmas as the route widened them, in
		// the group's results too.
		if bd := r.Stations[k].Bend; bd != nil && len(g.Sources) > 0 && g.Sources[0].Kind == KindLine {
			s := &g.Sources[0]
			s.DipSigma, s.DepthSigma, s.CurrentSigma = bd.DipSigma, bd.DepthSigma, bd.CurrentSigma
			if bd.Kinked {
				s.Notes = append(s.Notes, fmt.Sprintf("dip and depth uncertainties widened for a bend nearby: the dip of the conductor's elevations (not its cover) at the stations changes from %.3g deg before this one to %.3g deg after it, and the fitted dip, %s deg, may lie anywhere between (the fit's own sigmas: dip %s deg, depth %s m)",
					bd.SlopeBefore, bd.SlopeAfter, PlusMinus(bd.FitDip, bd.FitDipSigma), route.SigmaText(bd.FitDipSigma), route.SigmaText(bd.FitDepthSigma)))
			} else {
				s.Notes = append(s.Notes, fmt.Sprintf("dip, depth and current uncertainties widened for a bend nearby: the fitted dip %s deg departs from the dip of the conductor's elevations (not its cover) at the neighbouring stations, %s deg (the fit's own sigmas: dip %s deg, depth %s m, current %s A)",
					PlusMinus(bd.FitDip, bd.FitDipSigma), PlusMinus(bd.RouteDip, bd.RouteDipSigma), route.SigmaText(bd.FitDipSigma), route.SigmaText(bd.FitDepthSigma), route.SigmaText(bd.FitCurrentSigma)))
			}
		}
		// A misfit well over the noise, or a current step nearby: the
		// model's error the route counts in the station's sigmas
		// (route.ModelDoubt, route.StepNear), in the group's results too.
		if len(g.Sources) > 0 && g.Sources[0].Kind == KindLine {
			widenForModel(&g.Sources[0], &r.Stations[k])
		}
		// Turn the group's conductors along the route too, so that the
		// document reads the same way everywhere.
		t := r.Stations[k].Dir
		for j := range g.Sources {
			s := &g.Sources[j]
			if s.Kind == KindDipole || s.Direction[0]*t[0]+s.Direction[1]*t[1] >= 0 {
				continue
			}
			flipSource(s)
			if j == 0 && g.Profile != nil {
				flipProfile(g.Profile)
			}
			if j == 0 && s.Phase == nil {
				// A DC current changed sign: a problem that gives it
				// (no current found), says so too.
				if from, to, ok := turnProblemCurrent(g.Problem, s); ok {
					turned[g.Key] = [2]string{from, to}
					g.Problem = strings.Replace(g.Problem, from, to, 1)
				}
			}
		}
	}
	sort.SliceStable(d.Groups, func(i, j int) bool {
		a, b := d.Groups[i].Chainage, d.Groups[j].Chainage
		if a == nil || b == nil {
			return a != nil && b == nil
		}
		return *a < *b
	})
	for _, f := range r.Findings {
		nf := findingOf(f)
		if f.Kind == route.KindPoorFit {
			// The poor-fit finding of a failed fit quotes its problem:
			// the same current, with the same sign, as the group's
			// problem and sources[0].current_a give it. Before, the
			// finding kept the sign the fit had before its line was
			// turned along the route ("0.0023 ± 0.0023 A" in the
			// finding, "-0.0023 ± 0.0023 A" in the group's problem and
			// the table).
			for _, k := range f.Keys {
				if t, ok := turned[k]; ok {
					nf.Message = strings.Replace(nf.Message, t[0], t[1], 1)
				}
			}
		}
		d.Findings = append(d.Findings, nf)
	}
	SortFindings(d.Findings)
}

// routeOf converts the along-route analysis r into the document's Route,
// without touching d: stations in route order with their chainage, point,
// direction along increasing chainage and current, used when their fit is
// sound and not taken for a magnetised object, and cover per station whose
// fit is sound (used or not) when the document's depth reference knows the
// ground (DepthBelowGround, or a non-zero sensor height).
func (d *Document) routeOf(r *route.Route) *Route {
	ref := d.DepthReference
	groundKnown := ref.Kind == DepthBelowGround || ref.SensorHeight > 0
	out := &Route{Length: r.Length, Stations: make([]Station, len(r.Stations))}
	if r.SmallestStep > 0 {
		v := r.SmallestStep
		out.SmallestStepSeen = &v
	}
	for i, p := range r.Stations {
		s := Station{
			Key:          p.Key,
			Chainage:     p.Chainage,
			Point:        p.Point,
			Direction:    p.Dir,
			Current:      p.Current,
			CurrentSigma: p.CurrentSigma,
			Depth:        p.Depth,
			DepthSigma:   p.DepthSigma,
			Used:         p.OK && !p.Dipole,
			UnderCentre:  p.OK && p.UnderCentre,
		}
		if p.AC && !phaseless(&p.Station) {
			ph, phs := p.Phase, p.PhaseSigma
			s.Phase, s.PhaseSigma = &ph, &phs
		}
		// Cover for every station whose fit is sound, an object's and one
		// past the conductor's end as well as a used one, as results.csv
		// and route.geojson give it beside its depth; a failed fit's
		// station has none (withoutFailedEstimates clears its depth).
		if groundKnown && p.OK {
			c := p.Depth
			if ref.Kind == DepthBelowSensors {
				c -= ref.SensorHeight
			}
			cs := math.Hypot(p.DepthSigma, ref.GroundSigma)
			s.Cover, s.CoverSigma = &c, &cs
		}
		if r.FirstWalk != "" && s.Used {
			v, sig := p.FirstWalkCurrent, p.FirstWalkCurrentSigma
			s.CurrentFirstWalk, s.CurrentFirstWalkSigma = &v, &sig
		}
		// The sigma the route's neighbour tests take, where it is not the
		// fit's (a poor fit's taken back from its widening).
		if rs := p.RouteSigma(); s.Used && rs != p.CurrentSigma {
			if r.FirstWalk != "" {
				rs = p.FirstWalkRouteSigma
			}
			s.RouteCurrentSigma = &rs
		}
		out.Stations[i] = s
	}
	if r.FirstWalk != "" {
		out.FirstWalk, out.RepeatGap = r.FirstWalk, r.RepeatGap()
	}
	var steps [][2]float64
	anomalous := map[string]bool{}
	for _, f := range r.Findings {
		switch f.Kind {
		case route.KindCurrentStep:
			steps = append(steps, [2]float64{f.From, f.To})
		case route.KindCurrentAnomaly:
			// Keys are the station and its two neighbours (the route's
			// anomaly); the station's repeats of other walks with it.
			if len(f.Keys) == 3 {
				k := f.Keys[1]
				anomalous[k] = true
				for _, rk := range f.Repeats[k] {
					anomalous[rk] = true
				}
			}
		}
	}
	out.setScatter(steps, anomalous)
	return out
}

// phaseless reports whether AC station p is a go-and-return pair's whose
// net current is within its noise (within currentK sigma of zero, as
// buildPair judges the group's pair): such a phasor has no phase to
// speak of, and the station gives none, as the group's pair lists "net
// current phase" as unidentifiable. Before, the station kept the phase
// the fit gave the noise: a balanced pair carrying no net current read
// "0.023 ± 0.027 A ∠42 ± 13°" at one traverse and ∠-148 ± 11° at the
// next, in the route and in both summaries, and those phases entered the
// further conductor's phase from conductor 1 (trackPhase), whose
// scatter-widened sigma they inflated.
func phaseless(p *route.Station) bool {
	return p.AC && p.PairNet && !(math.Abs(p.Current) > currentK(true)*p.CurrentSigma)
}

// MinScatterStations and MinScatterTriples are the fewest used stations
// on a route, and runs of three successive used stations (triples) left
// after those across a step or holding a current anomaly are left out,
// from which Route.StationScatterCurrent and StationScatterDepth are
// given: six stations, as the five pairs of successive stations asked
// before, and three departures to take a median of. Successive
// departures share stations and are correlated, so the scaled median is
// rougher than 1.17/sqrt(n) for n independent values (Rousseeuw & Croux,
// 1993) says: its standard deviation was 0.74 of the true sigma at three
// triples (0.68 for three either side of a step), 0.62 at four (0.54 for
// five pairs) and 0.22 at 39, in a Monte Carlo of independent normal
// errors evenly spaced (100000 routes; 40000 at three); rough, but far
// nearer the truth than the fits' own sigmas when the model error
// dominates. Before, four triples were asked: nine stations with a step
// bracketed by the third and sixth (open/pair-beside-cable-loss.toml's
// pair) kept three and gave no spread, where five pairs had given
// 0.008 A, and eleven stations with two current anomalies kept three
// (testdata/scenarios/wrenbeck-dive.toml); each side's departures are
// valid, and they are pooled. A route of five stations, three triples
// with no step, still gives none: there the three departures span the
// whole route and a curving track reads as their scatter (a tee's branch
// followed over five traverses gave 0.10-0.34 A for station errors of
// about 0.5 A).
const (
	MinScatterStations = 6
	MinScatterTriples  = 3
)

// madScale turns a median absolute deviation into a normal standard
// deviation: 1/Phi^-1(0.75).
const madScale = 1.482602218505602

// setScatter sets the robust between-station scatter of current and depth
// of r (see Route.StationScatterCurrent) from runs of three successive
// used stations, each station's departure from the straight line through
// its two neighbours, leaving out triples whose chainage span overlaps
// one of steps (the chainage brackets of reported current steps) and
// triples that hold a station keyed in anomalous (the route's current
// anomalies). Stations not used (a failed fit, a magnetised object) are
// not in any triple: the triple spans across them.
//
// A station whose error is E enters three triples, by E/k in its own
// and about E/(2k) in each neighbour's (k below), so the median of the
// departures breaks down once about one used station in six is in error.
// On a route of eleven stations two current anomalies, each 0.28 A low
// among station errors of 0.013 A, spoiled six of nine triples and made
// the spread 0.11-0.16 A, and routeCoverDoubt, adding it in quadrature,
// no longer doubted the shallow, anomalous station that gave the least
// cover (found in review). The route has found such stations already,
// departing from both neighbours alike; their triples are left out as
// the triples across a step are (there, at nine seeds, 0.0015-0.05 A). An error
// the route does not find (a poor fit within its widened sigma, a real
// bend of depth within two intervals) still counts.
//
// Before, it took the differences of successive stations, which hold the
// route's real trend as well as the stations' errors: on a cathodically
// protected pipe whose current fell by 0.0013 A/m, 25 m between stations,
// the spread was 0.031-0.032 A, the real fall between stations, against
// station errors of 0.0043-0.0067 A, and the depth's 0.05 m the pipe's
// real undulation against 0.002-0.007 m (found in review). A departure
// from the line through the neighbours cancels any trend straight over
// two intervals: there now 0.0041-0.0063 A. A trend that bends within two
// intervals still counts: that pipe's depth, 0.4 m up and down over
// 450 m, gives 0.009-0.011 m.
func (r *Route) setScatter(steps [][2]float64, anomalous map[string]bool) {
	r.StationScatterCurrent, r.StationScatterDepth, r.StationScatterTriples = nil, nil, 0
	var used []Station
	for _, s := range r.Stations {
		if s.Used {
			used = append(used, s)
		}
	}
	var dI, dD []float64
	for i := 1; i+1 < len(used); i++ {
		a, b, c := used[i-1], used[i], used[i+1]
		span := c.Chainage - a.Chainage
		if !(span > 0) {
			continue // three repeats at one chainage: no line through them
		}
		straddles := false
		for _, st := range steps {
			if a.Chainage < st[1] && c.Chainage > st[0] {
				straddles = true
			}
		}
		if straddles || anomalous[a.Key] || anomalous[b.Key] || anomalous[c.Key] {
			continue
		}
		// b's weight on a: the line through a and c at b's chainage is
		// w a + (1-w) c. Under independent station errors of one sigma
		// the departure b - (w a + (1-w) c) has the standard deviation
		// sigma sqrt(1 + w^2 + (1-w)^2) (Gasser, Sroka & Jennen-Steinmetz,
		// Biometrika 73(3):625-633, 1986), by which it is divided.
		w := (c.Chainage - b.Chainage) / span
		k := math.Sqrt(1 + w*w + (1-w)*(1-w))
		// At the first walk's level when the walks' currents differ
		// (Route.FirstWalk): a station beside its repeat of another walk
		// read the change between the walks, 10% of the current on a
		// re-walk at a rectifier turned up, given as every station's
		// realistic spread (found in review).
		ia, _ := a.levelCurrent()
		ib, _ := b.levelCurrent()
		ic, _ := c.levelCurrent()
		dI = append(dI, math.Abs(ib-(w*ia+(1-w)*ic))/k)
		dD = append(dD, math.Abs(b.Depth-(w*a.Depth+(1-w)*c.Depth))/k)
	}
	if len(used) < MinScatterStations || len(dI) < MinScatterTriples {
		return
	}
	ci := madScale * median(dI)
	cd := madScale * median(dD)
	r.StationScatterCurrent, r.StationScatterDepth, r.StationScatterTriples = &ci, &cd, len(dI)
}

// findingOf converts one finding of the route analysis.
func findingOf(f route.Finding) Finding {
	nf := Finding{
		Kind:         string(f.Kind),
		Severity:     string(f.Severity),
		ChainageFrom: f.From,
		ChainageTo:   f.To,
		Position:     f.Position,
		Message:      f.Message,
	}
	// Each station's repeats after it (a route walked again): the
	// groups whose readings the finding used.
	for _, k := range f.Keys {
		nf.Groups = append(nf.Groups, k)
		nf.Groups = append(nf.Groups, f.Repeats[k]...)
	}
	for _, v := range f.Values {
		nf.Values = append(nf.Values, Value{Name: v.Name, Value: v.Value, Sigma: v.Sigma, Unit: v.Unit})
	}
	return nf
}

// flipSource describes the same line conductor with its direction reversed.
func flipSource(s *Source) {
	for a := range s.Direction {
		s.Direction[a] = -s.Direction[a]
	}
	if s.Phase != nil {
		p := math.Mod(*s.Phase+360, 360) - 180 // +180 wrapped to [-180, 180)
		s.Phase = &p
	} else {
		s.Current = -s.Current
	}
	s.Azimuth = math.Mod(s.Azimuth+180, 360)
	s.Dip = -s.Dip
	s.Offset = -s.Offset
	s.Span = [2]float64{-s.Span[1], -s.Span[0]}
}

// flipProfile negates the offsets of p (measured across a reversed
// direction) and keeps them increasing.
func flipProfile(p *Profile) {
	n := len(p.Offset)
	for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
		p.Positions[i], p.Positions[j] = p.Positions[j], p.Positions[i]
		p.Offset[i], p.Offset[j] = p.Offset[j], p.Offset[i]
		p.Measured[i], p.Measured[j] = p.Measured[j], p.Measured[i]
		p.Predicted[i], p.Predicted[j] = p.Predicted[j], p.Predicted[i]
	}
	for i := range p.Offset {
		p.Offset[i] = -p.Offset[i]
	}
}

// SortFindings orders findings most pressing first (warning, caution,
// info), then by chainage.
func SortFindings(fs []Finding) {
	sort.SliceStable(fs, func(i, j int) bool {
		a, b := severityRank(fs[i].Severity), severityRank(fs[j].Severity)
		if a != b {
			return a < b
		}
		return fs[i].ChainageFrom < fs[j].ChainageFrom
	})
}

func severityRank(s string) int {
	switch s {
	case SeverityWarning:
		return 0
	case SeverityCaution:
		return 1
	}
	return 2
}

// widenForModel widens the sigmas of s, a line source, as the route
// widened those of its station p for the model's error (p.Model, a misfit
// well over the noise; p.StepNear, a current step nearby), and notes it.
// The route's stations of conductor 1 and of every further conductor's
// track are so widened, and the line each stands for carries the same
// sigmas in the group's results.
func widenForModel(s *Source, p *route.Placed) {
	if md := p.Model; md != nil {
		s.CurrentSigma, s.DepthSigma = md.Widen(s.CurrentSigma, s.Current), md.Widen(s.DepthSigma, s.Depth)
		s.DipSigma *= md.Birge
		s.OffsetSigma *= md.Birge
		s.AzimuthSigma *= md.Birge
		s.Notes = append(s.Notes, route.ModelNote(md))
	}
	if sn := p.StepNear; sn != nil {
		s.CurrentSigma, s.DepthSigma = sn.Widen(s.CurrentSigma, s.Current), sn.WidenDepth(s.DepthSigma, s.Depth)
		s.Notes = append(s.Notes, route.StepNote(sn))
	}
}
