package live

import (
	"fmt"
	"math"
	"strings"
)

// A conductor's share of the current: where one source's current divides
// between parallel paths (a tram's return current between its return
// cable, the rails' earth and a pipe), Kirchhoff's current law makes the
// paths' currents add up to the source's, and each path takes a share
// set by the paths' resistances. The source's current comes and goes
// (trams start, coast and brake) but the shares stay put until a path
// changes: a pipe whose share of the return triples has a bond or a
// coating fault, though its current stays under any fixed limit while
// the trams draw little. A conductor's max_share judges
//
//	share = |I_c| / D,  D = sum over the asset's conductors of |I_k|
//	                    (or |I_o| of the conductor share_of names),
//
// with its standard deviation by first-order propagation (the delta
// method; H. H. Ku, J. Res. Natl. Bur. Stand. 70C, 1966, for a ratio)
// through the window's current covariance C
// (Estimate.CurrentCovariance): var = g' C g, g_k = d share / d I_k =
// (sign(I_c) [k = c] - share sign(I_k) [k in D]) / D. It is raised when
// share - shareSigmas sigma is above max_share, held as a condition
// (latchedKinds), and cleared when share + shareSigmas sigma has been
// under shareClearFraction of max_share in clearAfter judged windows in
// a row; a window whose denominator is not above share_floor, or not
// shareMinSigmas times its own sigma (between trams: the currents are
// noise about zero and their ratio means nothing), neither continues nor
// clears it (needsLevel), so a fault lasting through many trams is one
// alarm. A conductor's min_share is judged the same way the other way
// round (AlarmLowShare): raised when share + shareSigmas sigma is under
// it (a return cable whose share falls as a leak to earth beside it
// grows, or a bonded sheath gone open), cleared past a deadband of the
// same width seen from the other paths' side (shareBounds).

// shareSigmas is how many standard deviations the share must be above
// max_share (below min_share) to raise the alarm, and past the deadband
// to clear it.
const shareSigmas = 3

// shareClearFraction: a held share is cleared once it is under this
// fraction of max_share (a limit of 0.1 clears under 0.09), by
// shareSigmas, in clearAfter judged windows in a row. A share that wavers
// about the limit from one tram to the next (the paths' resistances
// changing with the load) is then one condition, not one per tram.
// min_share's deadband is the same seen from the other side
// (shareBounds).
const shareClearFraction = 0.9

// shareMinSigmas: a share is judged only in a window whose denominator is
// at least this many times its own sigma. The first-order sigma of a
// ratio needs a denominator far from zero: the terms the delta method
// drops grow as (sigma_D/D)^2. At 10 sigma the share's sigma is about 2%
// low against a Monte Carlo of the ratio (TestShareSigmaMonteCarlo:
// 2.1%, for a share of 0.25 of a 20 A cable), far from zero under 1%.
const shareMinSigmas = 10

// shareValue is a conductor's share of the current in one window.
type shareValue struct {
	share, sigma float64
	// of names the denominator (the conductor share_of names, or the
	// asset's conductors joined by "+"), denom is it, A, and denomSigma
	// its sigma.
	of                string
	denom, denomSigma float64
}

// shareOf is conductor entry cc's share in the solved estimate e (its
// currents and covariance; without a covariance, from an estimator that
// does not give one, the currents' sigmas taken as uncorrelated). ok is
// false when the estimate lacks a conductor it needs.
func shareOf(e *Estimate, cc *ConductorConfig) (v shareValue, ok bool) {
	n := len(e.Conductors)
	i := -1
	in := make([]bool, n) // conductor k is in the denominator
	var names []string
	for k, c := range e.Conductors {
		if c.Name == cc.Name {
			i = k
		}
		if cc.ShareOf == "" || c.Name == cc.ShareOf {
			in[k] = true
			names = append(names, c.Name)
		}
	}
	if i < 0 || len(names) == 0 {
		return v, false
	}
	C := e.CurrentCovariance
	if len(C) != n {
		C = make([][]float64, n)
		for k, c := range e.Conductors {
			C[k] = make([]float64, n)
			C[k][k] = c.CurrentSigma * c.CurrentSigma
		}
	}
	quad := func(g []float64) float64 {
		var q float64
		for a := range n {
			for b := range n {
				q += g[a] * C[a][b] * g[b]
			}
		}
		return math.Max(0, q)
	}
	sign := func(x float64) float64 {
		switch {
		case x > 0:
			return 1
		case x < 0:
			return -1
		}
		return 0
	}
	h := make([]float64, n) // dD/dI_k
	for k, c := range e.Conductors {
		if in[k] {
			v.denom += math.Abs(c.Current)
			h[k] = sign(c.Current)
		}
	}
	v.of = strings.Join(names, "+")
	v.denomSigma = math.Sqrt(quad(h))
	if !(v.denom > 0) {
		return v, true
	}
	v.share = math.Abs(e.Conductors[i].Current) / v.denom
	g := make([]float64, n) // d share/dI_k
	for k := range n {
		g[k] = -v.share * h[k] / v.denom
	}
	g[i] += sign(e.Conductors[i].Current) / v.denom
	v.sigma = math.Sqrt(quad(g))
	return v, true
}

// shareBound is one of a conductor's limits on its share: max_share,
// raised above it (AlarmShare), or min_share, raised below it
// (AlarmLowShare).
type shareBound struct {
	kind, key string
	limit     float64
	low       bool
	// clear is the share that a held condition must be past, by
	// shareSigmas, to be quiet (see shareAlarms).
	clear float64
	// cause says in plain words what moves a path's share this way.
	cause string
}

// shareBounds are the limits that conductor entry cc gives (a limit of
// 0 is off). max_share's deadband is shareClearFraction of the limit;
// min_share's is the same deadband seen from the other side: a share s
// of the asset's conductors together under min_share m is the others'
// share 1-s over 1-m, quiet under shareClearFraction (1-m), so s above
// 1 - shareClearFraction (1-m) (0.64 for 0.6); a share of share_of's
// current under m is share_of's over this one's above 1/m, quiet under
// shareClearFraction/m, so s above m/shareClearFraction.
func shareBounds(cc *ConductorConfig) []shareBound {
	var out []shareBound
	if cc.MaxShare != nil && *cc.MaxShare > 0 {
		m := *cc.MaxShare
		out = append(out, shareBound{kind: AlarmShare, key: "max_share", limit: m, clear: shareClearFraction * m,
			cause: "a bond, a joint or a coating fault"})
	}
	if cc.MinShare != nil && *cc.MinShare > 0 {
		m := *cc.MinShare
		clear := 1 - shareClearFraction*(1-m)
		if cc.ShareOf != "" {
			clear = m / shareClearFraction
		}
		out = append(out, shareBound{kind: AlarmLowShare, key: "min_share", limit: m, low: true, clear: clear,
			cause: "a bond or a joint gone open on this path, or a leak to earth beside it"})
	}
	return out
}

// past is how far share is beyond the bound, in the direction that
// raises it (negative: within it).
func (b *shareBound) past(share float64) float64 {
	if b.low {
		return b.limit - share
	}
	return share - b.limit
}

// shareAlarms judges the max_share and min_share of each conductor that
// gives them in the solved estimate e, sets the shares judged as levels
// for the latch, and returns the alarms raised.
func (p *processor) shareAlarms(w *window, e *Estimate) []Alarm {
	var out []Alarm
	for ci := range p.asset.Conductors {
		cc := &p.asset.Conductors[ci]
		bounds := shareBounds(cc)
		if len(bounds) == 0 {
			continue
		}
		v, ok := shareOf(e, cc)
		floor := 0.0
		if cc.ShareFloor != nil {
			floor = *cc.ShareFloor
		}
		if !ok || !(v.denom > floor) || !(v.denom >= shareMinSigmas*v.denomSigma) {
			continue // not judged: a held condition stays as it was
		}
		if math.IsNaN(v.share) || math.IsInf(v.share, 0) || math.IsNaN(v.sigma) || math.IsInf(v.sigma, 0) {
			continue
		}
		for _, b := range bounds {
			if al, ok := p.judgeShare(w, cc, &b, v); ok {
				out = append(out, al)
			}
		}
	}
	return out
}

// judgeShare judges conductor cc's share v, in a window where it is
// judged, against bound b: it sets the level and whether the share is
// quiet for the latch, and returns the alarm when the share is beyond
// the limit by more than shareSigmas sigma.
func (p *processor) judgeShare(w *window, cc *ConductorConfig, b *shareBound, v shareValue) (Alarm, bool) {
	key := latchKey(b.kind, cc.Name)
	p.setLevel(b.kind, cc.Name, v.share)
	if p.shareQuiet == nil {
		p.shareQuiet = map[string]bool{}
	}
	// Quiet: within the deadband's edge by shareSigmas sigma.
	quiet := v.share+shareSigmas*v.sigma < b.clear
	if b.low {
		quiet = v.share-shareSigmas*v.sigma > b.clear
	}
	p.shareQuiet[key] = quiet
	if b.past(v.share) <= shareSigmas*v.sigma {
		return Alarm{}, false
	}
	what := "the current of conductor " + v.of
	if cc.ShareOf == "" {
		what = "the asset's conductors' currents together (" + v.of + ")"
	}
	by := ""
	if v.sigma > 0 {
		by = fmt.Sprintf(" by %.3g times its uncertainty", b.past(v.share)/v.sigma)
	}
	side := "above"
	if b.low {
		side = "below"
	}
	al := p.alarm(w, b.kind, cc.Name, v.share, b.limit,
		fmt.Sprintf("conductor %s carries %.4g ± %.2g of %s: %.4g A of %.4g A, %s its %s %.4g%s (a path's share of a current that divides between parallel paths changes when a path's resistance does: %s)",
			cc.Name, v.share, v.sigma, what, v.share*v.denom, v.denom, side, b.key, b.limit, by, b.cause))
	al.Sigma, al.ShareOf, al.ShareOfCurrent = v.sigma, v.of, v.denom
	return al, true
}
