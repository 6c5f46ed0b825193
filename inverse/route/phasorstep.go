package route

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strconv"
)

// Phasor steps of an AC route.
//
// Kirchhoff's current law holds for phasors: the current that leaves an AC
// conductor between two stations is the phasor difference of the currents
// either side, I_up - I_down (both along increasing chainage), whatever its
// phase. Current leaving through an earth fault or a bond need not be in
// phase with the line's (an induced pipe current, a fault through a
// capacitive or inductive path), so the RMS magnitude alone can fall, stay
// or even rise where current leaves: 30 A at 0° with 10 A at 90° leaving
// reads 31.62 A at -18.43° beyond, which the magnitude step search read
// as 1.65 A "joining"; 30 A at 0° turning to 30 A at 30° (15.5 A
// leaving) was not reported at all (found in review, simulated).
//
// phasorSteps looks for changes of phase along the route beyond the
// stations' phase sigmas and sizes each as the phasor difference of the
// levels either side. The phases of different stations are comparable only
// while the frequency demodulated at is the field's: an error of δf Hz
// turns every phase by 360·δf·t degrees, a ramp in time. The ramp is
// estimated from the successive differences of phase (their median per
// second, or per metre of chainage when the stations' times are not known)
// and taken out; its uncertainty enters the sized step's sigma. A phase
// that wanders between stations more than their sigmas say (a grid
// frequency that wanders during the survey) is measured as an excess
// scatter of the differences (from their median absolute deviation, robust
// to the steps themselves) and added to every interval's sigma: where it
// is large the phases between stations are not comparable and no phasor
// step is reported (the magnitude steps stand alone). A frequency that
// steps during the survey (a grid after a change of load, phase
// continuous) turns the later stations' phases steadily, which the single
// ramp leaves as a run of equal jumps (a 0.5 mHz step read as 11 A
// leaving a clean 20 A route; found in review, simulated): a run with
// phasorSteadyIntervals or more successive intervals turning at one rate
// is taken as a ramp, not a step (steadyTurn), and no step is reported
// across stations whose groups were fitted with phase ramps of different
// frequencies (mixedFrequency).
//
// A phasor step replaces the magnitude step or change found over the same
// stretch: its wording gives the current leaving with its angle to the
// line current. A change of magnitude with the phase unmoved (an in-phase
// loss, DC) is left to the magnitude search.

// phasorSideStations is the most stations each side whose phasors set a
// level.
const phasorSideStations = 4

// phasorAlpha is the route-wide rate of false phase jumps the interval test
// allows (it sets the threshold by the number of intervals tested).
const phasorAlpha = 0.001

// phasorSteps returns st (the magnitude step search's findings) with the
// phasor steps of the AC stations ps (route order, repeats combined) put
// in place of the magnitude findings over the same stretch. tau is the
// route's between-station scatter of current, A (scatter.go).
func phasorSteps(ps []Placed, st []Finding, set *Settings, tau float64) []Finding {
	var u []*Placed
	for k := range ps {
		p := &ps[k]
		if !p.usable() {
			continue
		}
		if !p.AC || p.PairNet {
			return st
		}
		u = append(u, p)
	}
	n := len(u)
	if n < 6 {
		return st
	}
	// Station times: their start times when all are known, else chainage.
	t := make([]float64, n)
	timed := true
	for _, p := range u {
		if p.Start.IsZero() {
			timed = false
		}
	}
	for i, p := range u {
		if timed {
			t[i] = p.Start.Sub(u[0].Start).Seconds()
		} else {
			t[i] = p.Chainage
		}
	}
	// Successive differences of phase and their ramp.
	m := n - 1
	d := make([]float64, m)
	var rates []float64
	for i := 0; i < m; i++ {
		d[i] = wrapDeg(u[i+1].Phase - u[i].Phase)
		if dt := t[i+1] - t[i]; dt > 0 {
			rates = append(rates, d[i]/dt)
		}
	}
	if len(rates) < 3 {
		return st
	}
	ramp := phasorMedian(rates)
	// The ramp's sigma: the spread of the rates (MAD), as for a median.
	rampSigma := 1.2533 * 1.4826 * phasorMAD(rates, ramp) / math.Sqrt(float64(len(rates)))
	e := make([]float64, m)
	v := make([]float64, m) // the interval's variance from the stations' sigmas
	for i := 0; i < m; i++ {
		e[i] = wrapDeg(d[i] - ramp*(t[i+1]-t[i]))
		v[i] = u[i].PhaseSigma*u[i].PhaseSigma + u[i+1].PhaseSigma*u[i+1].PhaseSigma
	}
	spread := 1.4826 * phasorMAD(e, phasorMedian(e))
	excess := math.Sqrt(math.Max(0, spread*spread-phasorMedian(v)))
	// A phase test at a route-wide false rate of phasorAlpha, and never
	// below StepK.
	kz := math.Max(set.stepK(), math.Sqrt2*math.Erfinv(1-phasorAlpha/float64(m)))
	jump := make([]bool, m)
	for i := 0; i < m; i++ {
		s := math.Sqrt(v[i] + excess*excess)
		jump[i] = s > 0 && math.Abs(e[i]) > kz*s
	}
	var out []Finding
	drop := make([]bool, len(st))
	for i := 0; i < m; {
		if !jump[i] {
			i++
			continue
		}
		j := i
		for j+1 < m && jump[j+1] {
			j++
		}
		// Stations ia..ib bracket the run of jumps i..j.
		ia, ib := i, j+1
		// The levels are not taken across another run.
		lo := 0
		for k := i - 1; k >= 0; k-- {
			if jump[k] {
				lo = k + 1
				break
			}
		}
		hi := n - 1
		for k := j + 2; k < m; k++ {
			if jump[k] {
				hi = k
				break
			}
		}
		// A steady turn over a run of stations is a change of frequency
		// (a ramp that starts partway), not a step; and phases are not
		// compared across stations whose groups were fitted at different
		// frequencies.
		if steadyTurn(e, v, t, excess, i, j, kz) || mixedFrequency(u, max(lo, ia-phasorSideStations), min(hi, ib+phasorSideStations)) {
			i = j + 1
			continue
		}
		if f, ok := phasorFinding(u, t, ia, ib, lo, hi, ramp, rampSigma, excess, tau, set); ok {
			for k := range st {
				g := &st[k]
				if (g.Kind == KindCurrentStep || g.Kind == KindCurrentChange) && g.From < f.To+1e-6 && g.To > f.From-1e-6 {
					drop[k] = true
				}
			}
			out = append(out, f)
		}
		i = j + 1
	}
	if len(out) == 0 {
		return st
	}
	var kept []Finding
	for k := range st {
		if !drop[k] {
			kept = append(kept, st[k])
		}
	}
	return append(kept, out...)
}

// phasorSteadyIntervals is the fewest successive intervals turning at one
// rate that make a run of phase jumps a ramp rather than a step.
const phasorSteadyIntervals = 3

// steadyTurn reports whether the run of phase jumps i..j (e the intervals'
// phase differences with the route's ramp taken out, v their variances
// from the stations' sigmas, t the stations' times) holds
// phasorSteadyIntervals or more successive intervals that turn the same
// way at one rate (each within kz sigma of their weighted mean rate): the
// phase keeps turning beyond the first jump instead of settling at a new
// level, as after a step of the grid frequency partway through the survey
// (phase continuous: a ramp that starts there). A current leaving between
// two stations turns the phase across the transition only (a few depths
// wide), the stations beyond sitting at the new phase; its intervals'
// turns rise and fall with the share of the transition each spans.
func steadyTurn(e, v, t []float64, excess float64, i, j int, kz float64) bool {
	for a := i; a+phasorSteadyIntervals-1 <= j; a++ {
		for b := j; b-a+1 >= phasorSteadyIntervals; b-- {
			var sw, swr float64
			sign := 0.0
			same := true
			for k := a; k <= b; k++ {
				dt := t[k+1] - t[k]
				if dt <= 0 {
					same = false
					break
				}
				if sign == 0 {
					sign = math.Copysign(1, e[k])
				} else if math.Copysign(1, e[k]) != sign {
					same = false
					break
				}
				s2 := (v[k] + excess*excess) / (dt * dt)
				if s2 <= 0 {
					same = false
					break
				}
				sw += 1 / s2
				swr += e[k] / dt / s2
			}
			if !same {
				continue
			}
			mean := swr / sw
			steady := true
			for k := a; k <= b && steady; k++ {
				dt := t[k+1] - t[k]
				s := math.Sqrt(v[k]+excess*excess) / dt
				steady = math.Abs(e[k]/dt-mean) <= kz*s
			}
			if steady {
				return true
			}
		}
	}
	return false
}

// phasorFreqK is the number of sigmas by which two groups' frequencies
// must differ for their phases not to be compared.
const phasorFreqK = 4

// mixedFrequency reports whether the stations u[lo..hi] were demodulated
// at different frequencies by their groups' own estimates: a group fitted
// with a phase ramp (Station.PhaseRampHz) beside one fitted without, or
// with another ramp, beyond phasorFreqK sigmas. The phase between such
// groups turns by their frequency difference times the time between them,
// which the route's single ramp does not take out, so a phasor step
// across them is not reported (the magnitude steps stand). Groups all at
// the one offset (a steadily off frequency) are compared through the
// route's ramp as before. A group fitted without a ramp is taken at the
// frequency demodulated at, with the sigma of the ramped group it is
// compared with.
func mixedFrequency(u []*Placed, lo, hi int) bool {
	for a := lo; a <= hi; a++ {
		for b := a + 1; b <= hi; b++ {
			p, q := u[a], u[b]
			if p.PhaseRampHz == 0 && q.PhaseRampHz == 0 {
				continue
			}
			sp, sq := p.PhaseRampSigmaHz, q.PhaseRampSigmaHz
			if p.PhaseRampHz == 0 {
				sp = sq
			}
			if q.PhaseRampHz == 0 {
				sq = sp
			}
			if math.Abs(p.PhaseRampHz-q.PhaseRampHz) > phasorFreqK*math.Hypot(sp, sq) {
				return true
			}
		}
	}
	return false
}

// phasorFit is the transition model fitted to the phasors of a run's
// stations and their neighbours: P(x) = D + (U - D) f(x_f - x; H) +
// g (x - x_f), f the share of a semi-infinite line (plateau.go), U and D
// the levels either side (complex, A) and g a shared complex trend.
type phasorFit struct {
	xf, h   float64
	c       [3]complex128
	cov     [3][3]float64 // per component (real and imaginary alike)
	chi2    float64
	n       int
	nBefore int
	nAfter  int
}

// fitPhasors fits the transition at xf with width h to phasors p at
// chainages x with per-component variances v; false when singular.
func fitPhasors(x []float64, p []complex128, v []float64, xf, h float64) (phasorFit, bool) {
	f := phasorFit{xf: xf, h: h, n: len(x)}
	lv := lvFit{xf: xf, h: h}
	var a [3][3]float64
	var r [3]complex128
	row := func(i int) [3]float64 {
		w := lv.frac(x[i])
		return [3]float64{w, 1 - w, x[i] - xf}
	}
	for i := range x {
		z := row(i)
		if z[0] > 0.5 {
			f.nBefore++
		} else {
			f.nAfter++
		}
		for j := 0; j < 3; j++ {
			r[j] += complex(z[j]/v[i], 0) * p[i]
			for k := 0; k < 3; k++ {
				a[j][k] += z[j] * z[k] / v[i]
			}
		}
	}
	inv, ok := invert(a, 3)
	if !ok {
		return f, false
	}
	f.cov = inv
	for j := 0; j < 3; j++ {
		for k := 0; k < 3; k++ {
			f.c[j] += complex(inv[j][k], 0) * r[k]
		}
	}
	for i := range x {
		z := row(i)
		m := f.c[0]*complex(z[0], 0) + f.c[1]*complex(z[1], 0) + f.c[2]*complex(z[2], 0)
		d := p[i] - m
		f.chi2 += (real(d)*real(d) + imag(d)*imag(d)) / v[i]
	}
	return f, true
}

// phasorFinding sizes the change of phasor between the stations u[ia] and
// u[ib] (the run of phase jumps) by fitting the transition (phasorFit) to
// the run's sound stations and up to phasorSideStations sound ones beyond
// each end (not before lo nor after hi), the phases turned back by the
// ramp first, and words it; false when the current leaving or the turn of
// phase is not beyond StepK of its sigma.
func phasorFinding(u []*Placed, t []float64, ia, ib, lo, hi int, ramp, rampSigma, excess, tau float64, set *Settings) (Finding, bool) {
	rad := math.Pi / 180
	tm := (t[ia] + t[ib]) / 2
	var x, v []float64
	var p []complex128
	var tb, ta float64 // mean times of the stations before and after
	var nb, na int
	add := func(k int) {
		q := u[k]
		// A station whose fit misses its readings by more than the
		// noise allows sets no level beyond the run; within the run
		// (the stations beside the change read part of it, as a
		// semi-infinite line, and the straight-line fit misses them
		// for that) it is kept with its sigmas widened by its misfit,
		// as the magnitude steps keep their bracketing stations
		// (plateau.go levelStations, misfitSigma): near a route's end
		// the run's stations may be all the far side has.
		w := 1.0
		if !clean(q, set) {
			if k < ia || k > ib {
				return
			}
			if q.DOF > 0 && q.Chi2 > 0 {
				w = math.Sqrt(math.Max(1, q.Chi2/float64(q.DOF)))
			}
		}
		x = append(x, q.Chainage)
		p = append(p, cmplx.Rect(q.Current, (q.Phase-ramp*(t[k]-tm))*rad))
		ps := q.Current * math.Hypot(w*q.PhaseSigma, excess/math.Sqrt2) * rad
		cs := w * q.CurrentSigma
		v = append(v, (cs*cs+tau*tau+ps*ps)/2)
		switch {
		case k <= ia:
			tb += t[k]
			nb++
		case k >= ib:
			ta += t[k]
			na++
		}
	}
	for k := max(lo, ia-phasorSideStations); k <= min(hi, ib+phasorSideStations); k++ {
		add(k)
	}
	if nb == 0 || na == 0 || len(x) < 4 {
		return Finding{}, false
	}
	tb /= float64(nb)
	ta /= float64(na)
	xa, xb := u[ia].Chainage, u[ib].Chainage
	sp := typicalSpacing(u)
	var fits []phasorFit
	best := -1
	for gx := 0; gx < gridX; gx++ {
		xf := xa + (xb-xa)*float64(gx)/float64(gridX-1)
		for gh := -1; gh < gridH; gh++ {
			h := 0.0
			if gh >= 0 {
				h = sp * minWidth * math.Pow(maxWidth/minWidth, float64(gh)/float64(gridH-1))
			}
			f, ok := fitPhasors(x, p, v, xf, h)
			if !ok || f.nBefore == 0 || f.nAfter == 0 {
				continue
			}
			fits = append(fits, f)
			if best < 0 || f.chi2 < fits[best].chi2 {
				best = len(fits) - 1
			}
		}
	}
	if best < 0 {
		return Finding{}, false
	}
	fb := fits[best]
	dof := 2*len(x) - 8
	scale := 1.0
	if dof > 0 {
		scale = math.Max(1, fb.chi2/float64(dof))
	}
	U, D := fb.c[0], fb.c[1]
	L := U - D
	// Per-component covariances of U, D and L, widened by the Birge ratio;
	// the ramp's error turns D against U.
	cUU, cDD, cUD := fb.cov[0][0]*scale, fb.cov[1][1]*scale, fb.cov[0][1]*scale
	turnRamp := rampSigma * (ta - tb) * rad * cmplx.Abs(D)
	cDD += turnRamp * turnRamp
	cLL := cUU + cDD - 2*cUD
	cLU := cUU - cUD
	aL, aU, aD := cmplx.Abs(L), cmplx.Abs(U), cmplx.Abs(D)
	if aL == 0 || aU == 0 || aD == 0 {
		return Finding{}, false
	}
	mag, magSigma := aL, math.Sqrt(cLL)
	ang := wrapDeg((cmplx.Phase(L) - cmplx.Phase(U)) / rad)
	dot := func(a, b complex128) float64 { return real(a * cmplx.Conj(b)) }
	angVar := cLL/(aL*aL) + cUU/(aU*aU) - 2*cLU*dot(L, U)/(aL*aL*aU*aU)
	turn := wrapDeg((cmplx.Phase(D) - cmplx.Phase(U)) / rad)
	turnVar := cDD/(aD*aD) + cUU/(aU*aU) - 2*cUD*dot(D, U)/(aD*aD*aU*aU)
	// The location and width of the transition: the spread of the sizes
	// over the grid points within the scale of the minimum.
	var mLo, mHi, aLo, aHi = mag, mag, 0.0, 0.0
	xLo, xHi := fb.xf, fb.xf
	for _, f := range fits {
		if f.chi2 > fb.chi2+scale {
			continue
		}
		xLo, xHi = math.Min(xLo, f.xf), math.Max(xHi, f.xf)
		l := f.c[0] - f.c[1]
		m := cmplx.Abs(l)
		mLo, mHi = math.Min(mLo, m), math.Max(mHi, m)
		da := wrapDeg((cmplx.Phase(l)-cmplx.Phase(f.c[0]))/rad - ang)
		aLo, aHi = math.Min(aLo, da), math.Max(aHi, da)
	}
	magSigma = math.Max(magSigma, (mHi-mLo)/2)
	angSigma := math.Max(math.Sqrt(math.Max(angVar, 0))/rad, (aHi-aLo)/2)
	turnSigma := math.Sqrt(math.Max(turnVar, 0)) / rad
	// A turn of phase beyond StepK of its sigma is itself current leaving
	// (a phasor cannot turn unless another leaves it: at least |U| sin of
	// the turn). Its size may still be loose where the far side's level
	// rests on a station read partway through the change (the change in
	// a route's last or first interval: the transition's place and width
	// then trade against that level); it is reported with its sigma and
	// said to be loose, but only when a station within the run reads
	// part of the turn (ib > ia+1), as the field of current leaving
	// does a few depths either side of it. A run of one interval at
	// the route's end whose size is loose is also what a step of the
	// grid frequency before the last station gives (phase continuous,
	// no partial reading), and is left to the magnitude steps.
	if !(math.Abs(turn) > set.stepK()*turnSigma) {
		return Finding{}, false
	}
	loose := !(mag > set.stepK()*magSigma)
	if loose && ib-ia < 2 {
		return Finding{}, false
	}
	a, b := u[ia], u[ib]
	// The interval whose phasors differ most holds most of the change.
	big, bigSize := ia, -1.0
	for k := ia; k < ib; k++ {
		p, q := u[k], u[k+1]
		if s := cmplx.Abs(cmplx.Rect(p.Current, p.Phase*rad) - cmplx.Rect(q.Current, q.Phase*rad)); s > bigSize {
			big, bigSize = k, s
		}
	}
	ampU, ampD := aU, aD
	phU, phD := cmplx.Phase(U)/rad, cmplx.Phase(D)/rad
	sU, sD := math.Sqrt(cUU), math.Sqrt(cDD)
	level := math.Max(ampU, ampD)
	kind, severity := KindCurrentStep, SeverityWarning
	head := "current leaves the conductor"
	if set.trendWindow() > 0 && mag < set.minStep()*level {
		kind, severity = KindCurrentChange, SeverityInfo
		head = fmt.Sprintf("a change of current of %s%% (under the %s%% taken as a step: more likely the model's error than current leaving or joining)",
			strconv.FormatFloat(100*mag/level, 'f', 2, 64), strconv.FormatFloat(100*set.minStep(), 'g', 3, 64))
	}
	msg := fmt.Sprintf("%s between %s (chainage %.1f m) and %s (%.1f m): %s A at %s° to the line current, the phasor difference of the levels either side (%s A ∠%s° and %s A ∠%s°): the phase turns by %s° where the RMS current changes by %s A, so the RMS currents alone do not measure it; if it is fed from the start of the route (if fed from the far end, as much joins it at that angle)",
		head, label(a), a.Chainage, label(b), b.Chainage, pm(mag, magSigma), pm(ang, angSigma),
		pm(ampU, sU), pm(phU, sU/ampU/rad), pm(ampD, sD), pm(phD, sD/ampD/rad),
		pm(turn, turnSigma), pm(ampD-ampU, math.Sqrt(cUU+cDD)))
	if ib-ia > 1 {
		msg += fmt.Sprintf("; most of the change between %s and %s", label(u[big]), label(u[big+1]))
	}
	// The place of the change: the transition's location, to the spread
	// of the locations the fit allows (one grid step at least), when that
	// is under a quarter of the bracket.
	atSigma := math.Max((xHi-xLo)/2, (xb-xa)/float64(gridX-1))
	resolved := atSigma < 0.25*(xb-xa)
	if resolved {
		msg += fmt.Sprintf("; most likely at chainage %s m", pm(fb.xf, atSigma))
	}
	msg += fmt.Sprintf("; levels fitted with the transition from %d and %d stations", fb.nBefore, fb.nAfter)
	if loose {
		msg += fmt.Sprintf(" (the size is loose, under %s sigma: too few stations past the change read its far level in full; the turn of phase is sure)", strconv.FormatFloat(set.stepK(), 'g', 3, 64))
	}
	if ramp != 0 {
		what := fmt.Sprintf("%s° per metre of chainage", strconv.FormatFloat(ramp, 'g', 2, 64))
		if !u[0].Start.IsZero() {
			what = fmt.Sprintf("%s° per second, as a frequency %s Hz off the one demodulated at gives", strconv.FormatFloat(ramp, 'g', 2, 64), strconv.FormatFloat(ramp/360, 'g', 2, 64))
		}
		msg += fmt.Sprintf(", the phases turned back first by the phase ramp along the route (%s)", what)
	}
	if excess > 0 {
		msg += fmt.Sprintf("; the phases of neighbouring stations differ by %s° more than their sigmas say, which the sigmas here include", SigmaText(excess))
	}
	f := Finding{
		Kind:     kind,
		Severity: severity,
		From:     a.Chainage,
		To:       b.Chainage,
		Position: legPoint(u[big], u[big+1], 0.5),
		Message:  msg,
		Values: []Value{
			{Name: "current leaving", Value: mag, Sigma: magSigma, Unit: "A"},
			{Name: "angle to line current", Value: ang, Sigma: angSigma, Unit: "deg"},
			{Name: "current before", Value: ampU, Sigma: sU, Unit: "A"},
			{Name: "phase before", Value: phU, Sigma: sU / ampU / rad, Unit: "deg"},
			{Name: "current after", Value: ampD, Sigma: sD, Unit: "A"},
			{Name: "phase after", Value: phD, Sigma: sD / ampD / rad, Unit: "deg"},
			{Name: "phase turn", Value: turn, Sigma: turnSigma, Unit: "deg"},
		},
	}
	if resolved {
		f.Position = pointAt(u[ia:ib+1], fb.xf)
		f.Values = append(f.Values, Value{Name: "location (chainage)", Value: fb.xf, Sigma: atSigma, Unit: "m"})
	}
	for k := ia; k <= ib; k++ {
		f.Keys = append(f.Keys, u[k].Key)
	}
	return f, true
}

// phasorMedian returns the median of xs (not modified); 0 for none.
func phasorMedian(xs []float64) float64 {
	if len(xs) == 0 {
		return 0
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	h := len(s) / 2
	if len(s)%2 == 1 {
		return s[h]
	}
	return (s[h-1] + s[h]) / 2
}

// phasorMAD is the median absolute deviation of xs about c.
func phasorMAD(xs []float64, c float64) float64 {
	a := make([]float64, len(xs))
	for i, x := range xs {
		a[i] = math.Abs(x - c)
	}
	return phasorMedian(a)
}
