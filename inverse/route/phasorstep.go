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
// in place of the magnitude findings over the same stretch. The sizes
// take no route-wide scatter of current or phase: they measure their own
// on the transition fit's residuals (phasorFinding).
func phasorSteps(ps []Placed, st []Finding, set *Settings) []Finding {
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
	// The ramp the sizes turn the phases back by, from the intervals
	// clear of the runs of jumps: the stations beside a change read part
	// of it (a few depths either side), and the intervals beside a jump
	// turn by that share, many sigmas on a precise route, which shifts
	// the median of all the intervals' rates (by some three times its
	// spread for a 5° turn read with 0.012° phase sigmas, simulated).
	// Its sigma is that of a median of the rates; the successive
	// differences telescope, so this overstates the spread of the median
	// (1.35 times on those routes), which leaves room for what remains
	// of the shift. With fewer than three clear intervals the route's
	// ramp stands.
	sizeRamp, sizeRampSigma := ramp, rampSigma
	var rc []float64
	for i := 0; i < m; i++ {
		if jump[i] || (i > 0 && jump[i-1]) || (i+1 < m && jump[i+1]) {
			continue
		}
		if dt := t[i+1] - t[i]; dt > 0 {
			rc = append(rc, d[i]/dt)
		}
	}
	if len(rc) >= 3 {
		sizeRamp = phasorMedian(rc)
		sizeRampSigma = 1.2533 * 1.4826 * phasorMAD(rc, sizeRamp) / math.Sqrt(float64(len(rc)))
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
		if f, ok := phasorFinding(u, t, ia, ib, lo, hi, sizeRamp, sizeRampSigma, excess, set); ok {
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

// phasorFinding sizes the change of phasor between the stations u[ia] and
// u[ib] (the run of phase jumps) by fitting the transition (phasorFit) to
// the run's sound stations and up to phasorSideStations sound ones beyond
// each end (not before lo nor after hi), the phases turned back by the
// ramp first (whose sigma rampSigma enters the sizes' sigmas), and words
// it; false when the turn of phase is not beyond StepK of its sigma.
// excess is the route's excess scatter of phase, for the wording.
func phasorFinding(u []*Placed, t []float64, ia, ib, lo, hi int, ramp, rampSigma, excess float64, set *Settings) (Finding, bool) {
	rad := math.Pi / 180
	tm := (t[ia] + t[ib]) / 2
	var obs []phasorObs
	var reach [][]float64
	var wide [][2]float64 // each station's variances widened by its misfit, A²
	var narrow []bool     // read at its noise (readAtNoise)
	var keys []*Placed
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
		// Radial (the RMS current's) and tangential (the phase's)
		// variances, from the station's own sigmas; any scatter beyond
		// them is measured on the fit's residuals below.
		cs := w * q.CurrentSigma
		ps := q.Current * w * q.PhaseSigma * rad
		vr, vt := cs*cs, math.Max(ps*ps, 1e-12*cs*cs)
		// Within the run, the station's sigmas at the reading noise
		// where the transition explains it (readAtNoise): without the
		// misfit widening, and without the share of its misfit that its
		// own estimate of the noise took in. A station with a problem
		// or further lines (a second conductor fitted beside, or one
		// absorbing part of the field) keeps its widening.
		n := 1.0
		if k >= ia && k <= ib && q.Problem == "" && len(q.Further) == 0 {
			n = 1 / w
			if q.SigmaFromResiduals && q.DOF > 0 && q.Chi2 > 0 {
				n /= math.Sqrt(math.Max(1, q.Chi2/float64(q.DOF)))
			}
		}
		p := cmplx.Rect(q.Current, (q.Phase-ramp*(t[k]-tm))*rad)
		obs = append(obs, newPhasorObs(q.Chainage, t[k]-tm, p, vr*n*n, vt*n*n))
		wide = append(wide, [2]float64{vr, vt})
		narrow = append(narrow, n < 1)
		keys = append(keys, q)
		reach = append(reach, q.Reach)
		switch {
		case k <= ia:
			nb++
		case k >= ib:
			na++
		}
	}
	for k := max(lo, ia-phasorSideStations); k <= min(hi, ib+phasorSideStations); k++ {
		add(k)
	}
	if nb == 0 || na == 0 || len(obs) < 4 {
		return Finding{}, false
	}
	// Where every station's reach is known, each reads the change as
	// the mean of a semi-infinite line's shares over its readings'
	// distances (Station.Reach), scaled by the one fitted width: the
	// reach over the fit's typical distance (the median of the stations'
	// middle distances). A traverse 10 m across over a line 1.3 m below
	// its sensors reads 11% of a change 2.5 m away and 0.27% of one
	// 22.5 m away, where readings straight above at the width that fits
	// the near stations (2 m) give 0.20%: the levels, taken partly from
	// those far stations, came out drawn together by about 1.5 of their
	// sigmas (a 5° turn read 4.97°, simulated). Else each reads at the
	// width itself (readings straight above).
	if ref := reachRef(reach); ref > 0 {
		for i := range obs {
			rr := make([]float64, len(reach[i]))
			for j, r := range reach[i] {
				rr[j] = r / ref
			}
			obs[i].rr = rr
		}
	}
	xa, xb := u[ia].Chainage, u[ib].Chainage
	sp := typicalSpacing(u)
	fits, fb, missed, ok := readAtNoise(obs, wide, narrow, xa, xb, sp)
	if !ok {
		return Finding{}, false
	}
	// Scatter beyond the stations' sigmas, measured apart along and
	// across the phasors on the fit's own residuals (each component
	// given half the degrees of freedom), and the fit made again with
	// each component's variances widened by its ratio. The route's
	// between-station scatter of current (tau) and excess scatter of
	// phase are measured on the stations' differences, which the
	// stations near a change turn and shift by the share of it they read
	// (a few depths either side, and a 3 A loss at 90° to 10 A turns the
	// phase 17°): there they overstated the scatter several times over
	// (pulls' sd 0.25 over 30 seeds, simulated through locate).
	np := 6
	if fb.free {
		np = phasorNP
	}
	if half := float64(2*len(obs)-np) / 2; half > 0 {
		cr, ct := fb.componentChi2(obs)
		kr, kt := math.Max(1, cr/half), math.Max(1, ct/half)
		if kr > 1 || kt > 1 {
			for i := range obs {
				obs[i].weigh(obs[i].vr*kr, obs[i].vt*kt)
			}
			if f2, b2, ok := fitTransition(obs, xa, xb, sp); ok {
				fits, fb = f2, b2
			}
		}
	}
	fb.addRampError(obs, rampSigma)
	dof := 2*len(obs) - phasorNP
	scale := 1.0
	if dof > 0 {
		scale = math.Max(1, fb.chi2/float64(dof))
	}
	U, D := fb.up(), fb.down()
	L := U - D
	aL, aU, aD := cmplx.Abs(L), cmplx.Abs(U), cmplx.Abs(D)
	if aL == 0 || aU == 0 || aD == 0 {
		return Finding{}, false
	}
	// Sigmas from the gradients of each value by the parameters, the
	// covariance widened by the Birge ratio.
	sigma := func(g [phasorNP]float64) float64 { return math.Sqrt(scale * fb.phasorVar(g)) }
	var gL, gAng, gTurn, gU, gD, gPU, gPD, gDiff [phasorNP]float64
	lr, li := absGrad(L)
	gL[0], gL[1], gL[2], gL[3] = lr, li, -lr, -li
	alr, ali := argGrad(L)
	aur, aui := argGrad(U)
	adr, adi := argGrad(D)
	gAng[0], gAng[1], gAng[2], gAng[3] = alr-aur, ali-aui, -alr, -ali
	gTurn[0], gTurn[1], gTurn[2], gTurn[3] = -aur, -aui, adr, adi
	ur, ui := absGrad(U)
	dr, di := absGrad(D)
	gU[0], gU[1] = ur, ui
	gD[2], gD[3] = dr, di
	gPU[0], gPU[1] = aur, aui
	gPD[2], gPD[3] = adr, adi
	gDiff[0], gDiff[1], gDiff[2], gDiff[3] = -ur, -ui, dr, di
	mag, magSigma := aL, sigma(gL)
	ang := wrapDeg((cmplx.Phase(L) - cmplx.Phase(U)) / rad)
	angSigma := sigma(gAng) / rad
	turn := wrapDeg((cmplx.Phase(D) - cmplx.Phase(U)) / rad)
	turnSigma := sigma(gTurn) / rad
	sU, sD := sigma(gU), sigma(gD)
	sPU, sPD := sigma(gPU)/rad, sigma(gPD)/rad
	sDiff := sigma(gDiff)
	var atSigma float64
	if fb.free {
		var g [phasorNP]float64
		g[6] = 1
		atSigma = sigma(g)
	} else {
		// The spread of the sizes and places over the grid points
		// within the scale of the minimum.
		var mLo, mHi, aLo, aHi = mag, mag, 0.0, 0.0
		xLo, xHi := fb.xf(), fb.xf()
		for _, f := range fits {
			if f.chi2 > fb.chi2+scale {
				continue
			}
			xLo, xHi = math.Min(xLo, f.xf()), math.Max(xHi, f.xf())
			l := f.leaving()
			m := cmplx.Abs(l)
			mLo, mHi = math.Min(mLo, m), math.Max(mHi, m)
			da := wrapDeg((cmplx.Phase(l)-cmplx.Phase(f.up()))/rad - ang)
			aLo, aHi = math.Min(aLo, da), math.Max(aHi, da)
		}
		magSigma = math.Max(magSigma, (mHi-mLo)/2)
		angSigma = math.Max(angSigma, (aHi-aLo)/2)
		atSigma = math.Max((xHi-xLo)/2, (xb-xa)/float64(gridX-1))
	}
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
	// Whether the phase turns at all is judged with the transition's
	// place and width held at the fit's: its sigma then is that of the
	// levels either side as read. Where a level rests on stations read
	// partway through the change (near a route's end), the turn's size
	// trades with the place and width and its reported sigma (above)
	// is wide, though the stations' own phases show that it turns.
	held := fb
	if fb.free {
		if f, ok := fitPhasorLevels(obs, fb.xf(), fb.h()); ok {
			held = f
			held.addRampError(obs, rampSigma)
		}
	}
	turnHeld := math.Sqrt(scale*held.phasorVar(gTurn)) / rad
	if !(math.Abs(turn) > set.stepK()*turnHeld) {
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
		pm(ampU, sU), pm(phU, sPU), pm(ampD, sD), pm(phD, sPD),
		pm(turn, turnSigma), pm(ampD-ampU, sDiff))
	if ib-ia > 1 {
		msg += fmt.Sprintf("; most of the change between %s and %s", label(u[big]), label(u[big+1]))
	}
	// The place of the change: the transition's location, when its
	// sigma is under a quarter of the bracket.
	resolved := atSigma < 0.25*(xb-xa)
	if resolved {
		msg += fmt.Sprintf("; most likely at chainage %s m", pm(fb.xf(), atSigma))
	}
	msg += fmt.Sprintf("; levels fitted with the transition from %d and %d stations", fb.nBefore, fb.nAfter)
	if len(missed) > 0 {
		var names []string
		for _, i := range missed {
			names = append(names, label(keys[i]))
		}
		verb := "misses its readings"
		if len(names) > 1 {
			verb = "miss their readings"
		}
		msg += fmt.Sprintf(" (%s %s by more than the change explains: the stations beside it are read with their sigmas widened by their misfit)", joinAnd(names), verb)
	}
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
		msg += fmt.Sprintf("; the phases of neighbouring stations differ by %s° more than their sigmas say (the sigmas here include the scatter the fit itself finds beyond the stations' sigmas)", SigmaText(excess))
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
			{Name: "phase before", Value: phU, Sigma: sPU, Unit: "deg"},
			{Name: "current after", Value: ampD, Sigma: sD, Unit: "A"},
			{Name: "phase after", Value: phD, Sigma: sPD, Unit: "deg"},
			{Name: "phase turn", Value: turn, Sigma: turnSigma, Unit: "deg"},
		},
	}
	if resolved {
		f.Position = pointAt(u[ia:ib+1], fb.xf())
		f.Values = append(f.Values, Value{Name: "location (chainage)", Value: fb.xf(), Sigma: atSigma, Unit: "m"})
	}
	for k := ia; k <= ib; k++ {
		f.Keys = append(f.Keys, u[k].Key)
	}
	return f, true
}

// phasorReachAlpha is the chance that the stations read at their noise
// beside a phasor step (readAtNoise), whose misfit the transition
// explains, are taken for ones whose misfit it does not, were they to
// spread about it as their noise sigmas say. Through locate the stations
// 2.5 m either side of a change spread some 1.3 times those (readAtNoise's
// statistic averaged 3.4 there over 40 seeds, against 2; simulated): at
// 0.01 three seeds of 40 named a station, none at 0.001.
const phasorReachAlpha = 0.001

// readAtNoise fits the transition (fitTransition) to obs, whose stations
// marked narrow are read at their noise, and returns the fits, the best,
// and the stations (indices into obs) it does not explain; where there is
// any, or one that cannot be judged, every station is read instead with
// its variances widened by its misfit (wide: radial, tangential; narrow
// is cleared) and fitted again.
//
// A station beside the change reads part of it, as a semi-infinite line,
// which a straight-line fit misses: on a 10 A line turning 5° at 10 nT
// the two stations 2.5 m either side of the change (1 m deep, 10 m
// traverses) miss their readings by 2.8 times the noise, and a fit that
// estimates its noise from its residuals gives sigmas 2.8 times wider
// for it, which the misfit widening (misfitSigma) took 2.8 times again.
// Those stations place the change: its location's sigma was 2.5-3 times
// its spread (pulls' sd 0.38 over 40 seeds through locate). The
// transition, each station reading it over its reach (Station.Reach),
// is what they read, and they agree with it at their noise. A station
// whose misfit has another cause (a bend, a second conductor, a
// magnetised object beside it) need not: each station read at its noise
// is left out in turn and the transition fitted to the others, and where
// its chi-square falls by more than chance allows (two components,
// chi-square of two degrees of freedom, at phasorReachAlpha shared among
// the stations) the transition does not explain it. A station whose
// leaving-out leaves no fit, or too few stations to judge it by (five),
// cannot be judged, and widens them all too, unnamed. One station the
// transition does not explain widens them all: its misfit moves the fit's place and width, which the
// others then meet, and where the model does not hold (a loss in
// quadrature large enough for the line fits' depths to follow its field)
// widening only the stations that show it leaves the others' misfit
// unseen (3 A leaving 10 A at 90°, 5 nT: the angle's pulls' RMS 2.1
// over 30 seeds, 1.3 with all widened; simulated). What the check cannot
// see stays: a station shifted by a few of its noise sigmas by another
// cause is read at its noise (its RMS current shifted by 3 of them: named
// on 5 of 100 seeds, the angle's pulls' mean +1.0; by 7: on 92 of 100;
// TestPhasorStepStationsBesideReadAtNoise's route, simulated).
func readAtNoise(obs []phasorObs, wide [][2]float64, narrow []bool, xa, xb, sp float64) (fits []phasorFit, fb phasorFit, missed []int, ok bool) {
	fits, fb, ok = fitTransition(obs, xa, xb, sp)
	n := 0
	for i := range obs {
		if narrow[i] {
			n++
		}
	}
	if !ok || n == 0 {
		return fits, fb, nil, ok
	}
	limit := -2 * math.Log(phasorReachAlpha/float64(n))
	unjudged := false
	for i := range obs {
		if !narrow[i] {
			continue
		}
		drop := math.Inf(1)
		if len(obs) > 5 {
			rest := make([]phasorObs, 0, len(obs)-1)
			rest = append(append(rest, obs[:i]...), obs[i+1:]...)
			if c, ok := refitWithout(rest, fb, xa, xb, sp); ok {
				drop = fb.chi2 - c
			}
		}
		switch {
		case math.IsInf(drop, 1):
			unjudged = true
		case drop > limit:
			missed = append(missed, i)
		}
	}
	if len(missed) == 0 && !unjudged {
		return fits, fb, nil, true
	}
	for i := range obs {
		if narrow[i] {
			obs[i].weigh(wide[i][0], wide[i][1])
			narrow[i] = false
		}
	}
	fits, fb, ok = fitTransition(obs, xa, xb, sp)
	return fits, fb, missed, ok
}

// refitWithout returns the chi-square of the transition fitted to rest (a
// station left out of fb's): refined from fb's place and width, or where
// that does not hold, over the whole grid (fitTransition); false when
// there is no fit.
func refitWithout(rest []phasorObs, fb phasorFit, xa, xb, sp float64) (float64, bool) {
	if fb.h() > 0 {
		if f0, ok := fitPhasorLevels(rest, fb.xf(), fb.h()); ok && f0.nBefore > 0 && f0.nAfter > 0 {
			if f, ok := refinePhasorFit(rest, f0, xa, xb, sp*maxWidth); ok && f.nBefore > 0 && f.nAfter > 0 {
				return f.chi2, true
			}
		}
	}
	_, f, ok := fitTransition(rest, xa, xb, sp)
	return f.chi2, ok
}

// fitTransition fits the transition to obs over the grid of places in
// [xa, xb] and widths (sp the route's station spacing), refines the best
// (refinePhasorFit) and returns the grid's fits and the best; false when
// none fits. A sharp transition (no station reading part of it) or one
// whose optimum lies on a bound keeps the grid's point, its levels'
// covariance with the place and width held.
func fitTransition(obs []phasorObs, xa, xb, sp float64) ([]phasorFit, phasorFit, bool) {
	var fits []phasorFit
	best := -1
	for gx := 0; gx < gridX; gx++ {
		xf := xa + (xb-xa)*float64(gx)/float64(gridX-1)
		for gh := -1; gh < gridH; gh++ {
			h := 0.0
			if gh >= 0 {
				h = sp * minWidth * math.Pow(maxWidth/minWidth, float64(gh)/float64(gridH-1))
			}
			f, ok := fitPhasorLevels(obs, xf, h)
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
		return nil, phasorFit{}, false
	}
	fb := fits[best]
	// The grid's best place and width refined, with the covariance of
	// all eight parameters: the sizes' sigmas then carry the trade with
	// the transition's place and width, and the place its own sigma.
	if fb.h() > 0 {
		if f, ok := refinePhasorFit(obs, fb, xa, xb, sp*maxWidth); ok && f.nBefore > 0 && f.nAfter > 0 {
			fb = f
		}
	}
	return fits, fb, true
}

// reachRef is the fit's typical distance from readings to the line: the
// median of the stations' middle Reach values; 0 when any station's reach
// is not known.
func reachRef(reach [][]float64) float64 {
	var mids []float64
	for _, r := range reach {
		if len(r) == 0 {
			return 0
		}
		mids = append(mids, r[len(r)/2])
	}
	return phasorMedian(mids)
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
