package report

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"undercurrent/inverse"
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

// returnPhaseTolDeg is how far from anti-phase to conductor 1 a further
// conductor's phase may lie, with three of its sigmas added (phaseWithin),
// for it to be read as a return path of conductor 1's current. A return along a pipe, a
// sheath or a parallel cable is driven by conductor 1's own current: it
// is anti-phase but for the difference in impedance angle (X/R) between
// it and the other return paths (remote earth), which for metallic paths
// a few metres apart at mains and tracer frequencies turns it a few
// degrees to a few tens (15° in the earth-return scenario the tests use).
// 30° keeps those and leaves out the phases of a three-phase set, 60°
// off anti-phase, and other circuits at arbitrary phases (the demo's LV
// feeder at 135°, 45° off): before, anything within 90° of anti-phase was
// called a return (found in review).
const returnPhaseTolDeg = 30

// polyphaseTolDeg is how far from ±120° to conductor 1 two further
// conductors' phases may lie, beyond three sigmas, for the three to be
// read as the phases of one three-phase set (polyphaseSet). Unbalanced
// loads turn the currents' phases from 120° by their power factors' spread
// (tens of degrees at most); the same 30° as returnPhaseTolDeg keeps a set
// apart from a return, 60° away.
const polyphaseTolDeg = 30

// phaseNear is whether phase p (sigma sg), degrees, lies within tol of
// want beyond three sigmas, with the sigma small enough (3 sigma under
// tol) that the reading tells a return (180°) from a three-phase partner
// (±120°), 60° apart.
func phaseNear(p, sg, want, tol float64) bool {
	return 3*sg < tol && math.Abs(wrapDeg(p-want)) <= tol+3*sg
}

// phaseWithin is whether phase p (sigma sg), degrees, lies within tol of
// want at three sigmas: |p - want| + 3 sg <= tol. A return share asserts
// the conductor is conductor 1's return, so its phase must be inside the
// tolerance at three sigmas, not merely not excluded from it: phaseNear's
// tol + 3 sg let a phase of 142.9 ± 2.7°, a separate feeder 40° off
// anti-phase, carry back "8.9 %" (found in review).
func phaseWithin(p, sg, want, tol float64) bool {
	return math.Abs(wrapDeg(p-want))+3*sg <= tol
}

// returnWordTolDeg is how far from anti-phase, at three sigmas, a further
// conductor's phase may lie for its summary to say why it is not read as a
// return (ReturnOffDeg): past returnPhaseTolDeg, or not within it at three
// sigmas, yet near enough that a return through an inductive path may lie
// there; beyond it nothing is said.
const returnWordTolDeg = 45

// addTrackPhases sets each further conductor's PhaseFromConductor1
// (trackPhase); for the two further conductors that with conductor 1 make
// a three-phase set (polyphaseSet), the set's residual on the later of
// the two; and for conductor 1's return paths, each one's ReturnShare,
// and the NetToEarthA they leave (trackReturn; phasorSum over all of them
// where there are several, ReturnSet). A return path is a conductor
// outside any such set whose phase lies within returnPhaseTolDeg of
// anti-phase at three sigmas (phaseWithin); one not so read but within
// returnWordTolDeg gets ReturnOffDeg, for the summary to say why. Before,
// only the best such partner got a share, and its pairwise net counted
// a second return's current as gone to remote earth (12.44 A said for
// 6.45 A), and a phase 40° off with a sigma of 2.7° passed (found in
// review).
func (d *Document) addTrackPhases() { d.addTrackPhasesWith(nil) }

// addTrackPhasesWith is addTrackPhases with the groups' fits by key, whose
// covariances give a three-phase set's residual its sigmas
// (polyphaseResidual); nil takes the stations' sigmas as independent.
func (d *Document) addTrackPhasesWith(fits map[string]*inverse.Result) {
	for i := range d.Conductors {
		t := &d.Conductors[i]
		t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = nil, nil
		t.ReturnShare, t.ReturnShareSigma, t.NetToEarthA, t.NetToEarthSigmaA = nil, nil, nil, nil
		t.PolyphaseSet, t.PolyphaseResidualA, t.PolyphaseResidualSigmaA = nil, nil, nil
		t.PolyphaseResidualPhaseDeg, t.PolyphaseResidualPhaseSigmaDeg = nil, nil
		t.ReturnSet, t.ReturnOffDeg, t.ReturnOffSigmaDeg = nil, nil, nil
		if p, sg, _, ok := trackPhase(d, t); ok {
			t.PhaseFromConductor1, t.PhaseFromConductor1Sigma = &p, &sg
		}
	}
	inSet := map[int]bool{}
	if a, b, ok := d.polyphaseSet(); ok {
		inSet[a], inSet[b] = true, true
		last := &d.Conductors[a]
		if d.Conductors[b].Number > last.Number {
			last = &d.Conductors[b]
		}
		if ps, ok := polyphaseResidual(d, fits, &d.Conductors[a], &d.Conductors[b]); ok {
			set := []int{1, d.Conductors[a].Number, d.Conductors[b].Number}
			sort.Ints(set)
			last.PolyphaseSet, last.PolyphaseResidualA, last.PolyphaseResidualSigmaA = set, &ps.Res, &ps.Sigma
			if ps.PhaseOK {
				last.PolyphaseResidualPhaseDeg, last.PolyphaseResidualPhaseSigmaDeg = &ps.Phase, &ps.PhaseSigma
			}
		}
	}
	var rets []int
	for i := range d.Conductors {
		t := &d.Conductors[i]
		if inSet[i] || t.PhaseFromConductor1 == nil {
			continue
		}
		p, sg := *t.PhaseFromConductor1, *t.PhaseFromConductor1Sigma
		off := math.Abs(wrapDeg(p - 180))
		if phaseWithin(p, sg, 180, returnPhaseTolDeg) {
			if sh, ssh, net, snet, ok := trackReturn(d, t); ok {
				t.ReturnShare, t.ReturnShareSigma = &sh, &ssh
				t.NetToEarthA, t.NetToEarthSigmaA = &net, &snet
				rets = append(rets, i)
			}
			continue
		}
		if off-3*sg <= returnWordTolDeg && !t.Route.PairNet && d.Route != nil && !d.Route.PairNet {
			o, so := off, sg
			t.ReturnOffDeg, t.ReturnOffSigmaDeg = &o, &so
		}
	}
	if len(rets) < 2 {
		return
	}
	// Several returns: each keeps its share of conductor 1's current, and
	// the net that returns by other paths is the phasor sum of conductor 1's
	// current and all of theirs, given on the last of them; the pairwise
	// nets would each count the other returns' current as gone to earth.
	ts := make([]*Track, len(rets))
	set := []int{1}
	for k, i := range rets {
		ts[k] = &d.Conductors[i]
		set = append(set, d.Conductors[i].Number)
		ts[k].NetToEarthA, ts[k].NetToEarthSigmaA = nil, nil
	}
	sort.Ints(set)
	last := ts[0]
	for _, t := range ts {
		if t.Number > last.Number {
			last = t
		}
	}
	for _, t := range ts {
		t.ReturnSet = set
	}
	if r, sr, ok := phasorSum(d, ts...); ok {
		last.NetToEarthA, last.NetToEarthSigmaA = &r, &sr
	}
}

// polyphaseSet is the indices in d.Conductors of the two further
// conductors whose phases from conductor 1 lie near +120° and -120°
// (polyphaseTolDeg, phaseNear), the lowest-numbered (strongest) of each
// where more do: with
// conductor 1 they are read as the phases of one three-phase set (or of
// separate circuits on those phases, which the phases cannot tell apart).
// ok is false when there is no such pair.
func (d *Document) polyphaseSet() (a, b int, ok bool) {
	a, b = -1, -1
	for i := range d.Conductors {
		t := &d.Conductors[i]
		if t.PhaseFromConductor1 == nil || t.Route.PairNet {
			continue
		}
		p, sg := *t.PhaseFromConductor1, *t.PhaseFromConductor1Sigma
		switch {
		case phaseNear(p, sg, 120, polyphaseTolDeg) && (a < 0 || t.Number < d.Conductors[a].Number):
			a = i
		case phaseNear(p, sg, -120, polyphaseTolDeg) && (b < 0 || t.Number < d.Conductors[b].Number):
			b = i
		}
	}
	return a, b, a >= 0 && b >= 0
}

// polyphaseResidual is a three-phase circuit's residual: the phasor sum
// of conductor 1's and further conductors ta's and tb's currents,
// I1 + Ia + Ib, what returns by a neutral, earth or conductors outside
// the survey. Each group where all three were used with phases (all read
// along conductor 1's direction, alongPhases) gives its magnitude and its
// phase from conductor 1's, with first-order sigmas from the covariance
// of the three lines' complex currents in the group's fit (fits, by group
// key; stationCov): the cores' currents are strongly correlated in one
// fit, and their sum is far better determined than each. Before, the
// stations' own sigmas were combined as if independent, and the residual
// of 200/150/120 A cores read 70.00 ± 2.9 A (± 10-12 A in trefoil) where
// seeds scattered by 0.005 A, and no phase was given (found in review).
// The groups' residual phasors, each referred to conductor 1's phase at
// its group, are averaged with inverse-covariance weights and the
// magnitude and phase taken of the mean (phasorSumOf); before, the
// groups' magnitudes were averaged, each biased up near zero, and a
// balanced set read 0.0137 ± 0.0033 A for 0 (found in review). The phase
// is given only where the residual lies three sigmas or more from zero.
// ok is false where no group has all three, or conductor 1 is a pair read
// as its net.
func polyphaseResidual(d *Document, fits map[string]*inverse.Result, ta, tb *Track) (ps phasorSumResult, ok bool) {
	return phasorSumOf(d, fits, ta, tb)
}

// phasorSumResult is phasorSumOf's answer: the magnitude of a phasor sum,
// A, and its sigma, and, when PhaseOK, its phase from conductor 1's,
// degrees in (-180, 180], and its sigma.
type phasorSumResult struct {
	Res, Sigma        float64
	Phase, PhaseSigma float64
	PhaseOK           bool
}

// phasorSum is the magnitude of the phasor sum of conductor 1's current
// and further conductors ts' currents, |I1 + ΣIk|, A, and its sigma, as
// phasorSumOf gives it without the fits' covariances: first order in the
// stations' current and phase sigmas with their correlations in the fit
// left out, the magnitude of the stations' Birge-widened mean phasor.
func phasorSum(d *Document, ts ...*Track) (res, sigma float64, ok bool) {
	ps, ok := phasorSumOf(d, nil, ts...)
	return ps.Res, ps.Sigma, ok
}

// phasorSumOf is the phasor sum of conductor 1's current and further
// conductors ts' currents over the groups where all were used with
// phases, each read along conductor 1's direction: each group's sum
// referred to conductor 1's phase there, with its 2 x 2 covariance, first
// order, from the covariance of the lines' complex currents (stationCov:
// the group's fit's where fits has it and its lines are found there, else
// the stations' own sigmas taken as independent); the groups' phasors
// averaged with inverse-covariance weights; and the mean's magnitude and
// its phase from conductor 1's, each sigma widened by its own Birge ratio
// when the groups scatter beyond their sigmas along the mean or across
// it. Averaging the phasors, not their magnitudes, leaves a sum near zero
// unbiased to within its own sigma: a magnitude's mean is about 1.25 of
// its sigma, which an average of magnitudes keeps while its sigma falls
// by the root of the groups' count.
func phasorSumOf(d *Document, fits map[string]*inverse.Result, ts ...*Track) (out phasorSumResult, ok bool) {
	if d.Route == nil || d.Route.PairNet {
		return out, false
	}
	main := map[string]Station{}
	for _, s := range d.Route.Stations {
		if s.Used && s.Phase != nil && s.PhaseSigma != nil {
			main[s.Key] = s
		}
	}
	at := func(t *Track) map[string]Station {
		m := map[string]Station{}
		for _, s := range t.Route.Stations {
			if s.Used && s.Phase != nil && s.PhaseSigma != nil {
				m[s.Key] = s
			}
		}
		return m
	}
	others := make([]map[string]Station, len(ts))
	for k, t := range ts {
		others[k] = at(t)
	}
	var zs []complex128
	var cs [][2][2]float64
	for _, m := range d.Route.Stations {
		if _, found := main[m.Key]; !found {
			continue
		}
		lines := []phasorLine{{i: math.Abs(m.Current), si: m.CurrentSigma, sp: *m.PhaseSigma}}
		all := true
		for _, o := range others {
			x, found := o[m.Key]
			if !found {
				all = false
				break
			}
			pa, p1, ok := alongPhases(x, m)
			if !ok {
				all = false
				break
			}
			lines[0].p = p1
			lines = append(lines, phasorLine{math.Abs(x.Current), x.CurrentSigma, pa, *x.PhaseSigma})
		}
		if !all {
			continue
		}
		c := stationCov(fits[m.Key], lines)
		var sum complex128
		for _, q := range lines {
			sum += q.phasor()
		}
		p1 := lines[0].phasor()
		a1 := cmplx.Abs(p1)
		if !(a1 > 0) {
			continue
		}
		// z = S e^{-iφ1}: the sum referred to conductor 1's phase here,
		// since the absolute phase turns along the route when the grid's
		// frequency is off the one demodulated. dz = e^{-iφ1} dS - i z dφ1,
		// dφ1 = h1·dI1, h1 square to I1 over |I1|: every line's (re, im)
		// turned by -φ1, and conductor 1's also through its phase.
		u := cmplx.Conj(p1) / complex(a1, 0)
		z := sum * u
		rot := [2][2]float64{{real(u), -imag(u)}, {imag(u), real(u)}}
		h1 := [2]float64{-imag(p1) / a1 / a1, real(p1) / a1 / a1}
		v := [2]float64{imag(z), -real(z)}
		cz := jacForm(c, len(lines), func(k int) [2][2]float64 {
			if k > 0 {
				return rot
			}
			var j [2][2]float64
			for x := range 2 {
				for y := range 2 {
					j[x][y] = rot[x][y] + v[x]*h1[y]
				}
			}
			return j
		})
		if _, ok := inv2(cz); !ok {
			continue
		}
		zs, cs = append(zs, z), append(cs, cz)
	}
	if len(zs) == 0 {
		return out, false
	}
	// The phasors' mean, each weighted by its inverse covariance.
	var w [2][2]float64
	var wz [2]float64
	for g, z := range zs {
		wg, _ := inv2(cs[g])
		for x := range 2 {
			wz[x] += wg[x][0]*real(z) + wg[x][1]*imag(z)
			for y := range 2 {
				w[x][y] += wg[x][y]
			}
		}
	}
	cm, ok := inv2(w)
	if !ok {
		return out, false
	}
	mean := complex(cm[0][0]*wz[0]+cm[0][1]*wz[1], cm[1][0]*wz[0]+cm[1][1]*wz[1])
	r := cmplx.Abs(mean)
	// Its magnitude's sigma along the mean (g) and its phase's across it
	// (h), each widened by its own Birge ratio where the stations scatter
	// beyond their sigmas that way (conductor 1's phase, poorly fixed in
	// trefoil, may scatter the phasors across more than along).
	g := [2]float64{1, 0}
	if r > 0 {
		g = [2]float64{real(mean) / r, imag(mean) / r}
	}
	h := [2]float64{-g[1], g[0]}
	along := func(e [2]float64) float64 {
		vr := form2(cm, e)
		if n := len(zs); n > 1 {
			var chi2 float64
			for k, z := range zs {
				d := (real(z)-real(mean))*e[0] + (imag(z)-imag(mean))*e[1]
				chi2 += d * d / form2(cs[k], e)
			}
			if b := chi2 / float64(n-1); b > 1 {
				vr *= b
			}
		}
		return vr
	}
	out.Res, out.Sigma = r, math.Sqrt(along(g))
	if r > 0 && out.Res >= 3*out.Sigma {
		sp := math.Sqrt(along(h)) / r * 180 / math.Pi
		if sp > 0 && !math.IsInf(sp, 0) {
			out.Phase, out.PhaseSigma, out.PhaseOK = cmplx.Phase(mean)*180/math.Pi, sp, true
		}
	}
	return out, true
}

// inv2 is the inverse of the 2 x 2 covariance c, and whether it has one
// (positive definite, finite).
func inv2(c [2][2]float64) (w [2][2]float64, ok bool) {
	det := c[0][0]*c[1][1] - c[0][1]*c[1][0]
	if !(det > 0) || math.IsInf(det, 0) || !(c[0][0] > 0) {
		return w, false
	}
	return [2][2]float64{{c[1][1] / det, -c[0][1] / det}, {-c[1][0] / det, c[0][0] / det}}, true
}

// form2 is e' c e for the 2 x 2 covariance c.
func form2(c [2][2]float64, e [2]float64) float64 {
	return e[0]*(c[0][0]*e[0]+c[0][1]*e[1]) + e[1]*(c[1][0]*e[0]+c[1][1]*e[1])
}

// phasorLine is one line's current at a station, read along conductor
// 1's direction: RMS current i, A, and phase p, degrees, with sigmas si and
// sp.
type phasorLine struct{ i, si, p, sp float64 }

func (q phasorLine) phasor() complex128 { return cmplx.Rect(q.i, q.p*math.Pi/180) }

// jacForm is Σ_jk J_j C_jk J_k' for the 2n x 2n covariance c of n lines'
// (real, imaginary) parts and the 2 x 2 Jacobian J(k) of a phasor in each
// line's: that phasor's covariance.
func jacForm(c []float64, n int, jac func(k int) [2][2]float64) (out [2][2]float64) {
	for j := range n {
		jj := jac(j)
		for k := range n {
			jk := jac(k)
			for x := range 2 {
				for y := range 2 {
					cxy := c[(2*j+x)*2*n+2*k+y]
					for a := range 2 {
						for b := range 2 {
							out[a][b] += jj[a][x] * cxy * jk[b][y]
						}
					}
				}
			}
		}
	}
	return out
}

// stationCov is the 2n x 2n covariance (row-major) of the n lines' complex
// currents at one station, read along conductor 1's direction (real and
// imaginary parts of each in turn). Where res, the group's fit, holds each
// line's complex current (inverse.Result.LineCurrents, found by the
// line's current's magnitude, one line each) with its covariance, it is
// that covariance turned into the station's phasors (P = u c, |u| = 1:
// the orientation of each line's direction) and each line's block scaled
// so that its variance is its station's (the station's sigmas may be
// widened beyond the fit's, and are kept); the correlations between the
// lines are the fit's. Otherwise the lines are taken as independent, each
// with its current's sigma along its phasor and its phase's across it.
func stationCov(res *inverse.Result, lines []phasorLine) []float64 {
	n := len(lines)
	c := make([]float64, 4*n*n)
	if fitCov(res, lines, c) {
		return c
	}
	clear(c)
	for k, q := range lines {
		th := q.p * math.Pi / 180
		g := [2]float64{math.Cos(th), math.Sin(th)}
		h := [2]float64{-g[1], g[0]}
		st := q.i * q.sp * math.Pi / 180
		for x := range 2 {
			for y := range 2 {
				c[(2*k+x)*2*n+2*k+y] = sq(q.si)*g[x]*g[y] + sq(st)*h[x]*h[y]
			}
		}
	}
	return c
}

// fitCov fills c with the fit's covariance of lines' complex currents as
// stationCov describes, and reports whether it could.
func fitCov(res *inverse.Result, lines []phasorLine, c []float64) bool {
	if res == nil || res.Covariance == nil || len(res.LineCurrents) == 0 {
		return false
	}
	idx := make(map[string]int, len(res.ParamNames))
	for i, name := range res.ParamNames {
		idx[name] = i
	}
	if dim, _ := res.Covariance.Dims(); dim != len(res.ParamNames) {
		return false
	}
	n := len(lines)
	type at struct {
		re, im int
		u      complex128
		f      float64
	}
	ls := make([]at, n)
	used := map[int]bool{}
	for k, q := range lines {
		pk := q.phasor()
		if !(q.i > 0) {
			return false
		}
		l := -1
		for j, cj := range res.LineCurrents {
			if math.Abs(cmplx.Abs(cj)-q.i) <= 1e-9*q.i {
				if l >= 0 {
					return false // two lines of that magnitude: not told apart
				}
				l = j
			}
		}
		if l < 0 || used[l] {
			return false
		}
		used[l] = true
		u := pk / res.LineCurrents[l]
		if math.Abs(cmplx.Abs(u)-1) > 1e-6 {
			return false
		}
		re, okRe := idx[fmt.Sprintf("line%d.current.re", l+1)]
		im, okIm := idx[fmt.Sprintf("line%d.current.im", l+1)]
		if !okRe || !okIm {
			return false
		}
		ls[k] = at{re: re, im: im, u: u}
	}
	// Each line's block turned by u: [Re P, Im P] = M [Re c, Im c].
	rot := func(u complex128) [2][2]float64 {
		return [2][2]float64{{real(u), -imag(u)}, {imag(u), real(u)}}
	}
	for j := range n {
		mj := rot(ls[j].u)
		for k := range n {
			mk := rot(ls[k].u)
			ij, ik := [2]int{ls[j].re, ls[j].im}, [2]int{ls[k].re, ls[k].im}
			for x := range 2 {
				for y := range 2 {
					var v float64
					for a := range 2 {
						for b := range 2 {
							v += mj[x][a] * res.Covariance.At(ij[a], ik[b]) * mk[y][b]
						}
					}
					c[(2*j+x)*2*n+2*k+y] = v
				}
			}
		}
	}
	// Each line's variance (the block's trace) brought to its station's.
	for k, q := range lines {
		tr := c[(2*k)*2*n+2*k] + c[(2*k+1)*2*n+2*k+1]
		want := sq(q.si) + sq(q.i*q.sp*math.Pi/180)
		if !(tr > 0) || !(want > 0) || math.IsInf(want, 0) {
			return false
		}
		ls[k].f = math.Sqrt(want / tr)
	}
	for j := range 2 * n {
		for k := range 2 * n {
			c[j*2*n+k] *= ls[j/2].f * ls[k/2].f
		}
	}
	return true
}

// trackReturn is, for further conductor t carrying current back beside
// conductor 1 (an earth return along a pipe or a sheath, read near
// anti-phase: addTrackPhases), the share of conductor 1's current it carries back,
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
