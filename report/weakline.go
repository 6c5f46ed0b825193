package report

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"undercurrent/inverse"
)

// lookElsewhereP is the chance, over a whole group, that noise alone passes the
// tests below: 0.0027, that of one DC current beyond 3 sigma (the threshold of
// currentK), shared out over the places a line can be put.
const lookElsewhereP = 0.0027

// lineEvidence returns by how much the fit's lines lower chi-square from the
// background alone (drop, on the fit's noise), and limit, the fall that noise
// alone exceeds with probability lookElsewhereP when one line is searched for at
// every reading: the chi-square quantile at lookElsewhereP over the number of
// readings (a Bonferroni bound), with as many degrees of freedom as a line has
// parameters (crossing, height, azimuth, dip and one current per part). On 300
// traverses of pure 20 nT noise, 41 to 401 readings, the best single line lowered
// chi-square by 25 to 38 at most and by 23 to 24 on 99% of them; the limit is 27
// to 32 there. ok is false where the fall cannot be formed from the readings here:
// no readings, a gradient background, robust weights, or a magnetised object among
// the sources.
func lineEvidence(f *Fit, res *inverse.Result, ac bool) (drop, limit float64, ok bool) {
	p := f.Problem
	if p == nil || res == nil || !(res.Sigma > 0) {
		return 0, 0, false
	}
	bg := inverse.BackgroundUniform
	if s := f.Settings; s != nil {
		if s.Robust {
			return 0, 0, false
		}
		bg = s.Background
	}
	if bg == inverse.BackgroundGradient {
		return 0, 0, false
	}
	for i := range res.Sources {
		if res.Sources[i].Kind == KindDipole {
			return 0, 0, false
		}
	}
	n := len(p.Points)
	var s0 float64
	nr := 1
	switch {
	case ac && len(p.Phasors) == n && n > 0:
		nr = 2
		for j := range 3 {
			var m complex128
			if bg == inverse.BackgroundUniform {
				for i := range n {
					m += p.Phasors[i][j]
				}
				m /= complex(float64(n), 0)
			}
			for i := range n {
				d := p.Phasors[i][j] - m
				s0 += real(d)*real(d) + imag(d)*imag(d)
			}
		}
	case !ac && len(p.Fields) == n && n > 0:
		for j := range 3 {
			var m float64
			if bg == inverse.BackgroundUniform {
				for i := range n {
					m += p.Fields[i][j]
				}
				m /= float64(n)
			}
			for i := range n {
				d := p.Fields[i][j] - m
				s0 += d * d
			}
		}
	default:
		return 0, 0, false
	}
	s2 := res.Sigma * res.Sigma
	drop = (s0 - res.Chi2*s2) / s2
	limit = distuv.ChiSquared{K: float64(4 + nr)}.Quantile(1 - lookElsewhereP/float64(n))
	return drop, limit, true
}

// noCurrentProblem words the problem of a group whose lines carry no current the
// data resolve (noLineCurrent), s its strongest line. The current's sigma alone
// does not say whether there is a conductor: for a deep line its current and depth
// are so correlated that a line the readings hold at 10 sigma (chi-square lower by
// 100) reads 3 sigma in current, so the fall in chi-square (lineEvidence) says
// which it is where it can be formed.
func noCurrentProblem(f *Fit, res *inverse.Result, s *inverse.SourceEstimate, ac bool) string {
	head := noCurrentHead(s.Current, s.CurrentSigma, ac)
	if h := undeterminedHead(res, s); h != "" {
		head = h
	}
	if f.sameObject != "" {
		// An object alone seen from this traverse too (aloneHeldFit): the
		// field its readings hold is the object's, reported at the other
		// group, not a line's, which lineEvidence would count.
		return head + fmt.Sprintf(" once the field of the magnetised object reported at %s, which these readings hold too, is allowed for: no conductor is detected under this group, though one too deep or weak for these readings may lie there; its position and depth mean nothing", f.sameObject)
	}
	if w := unfitNoCurrent(f, res, ac); w != "" {
		return head + w
	}
	drop, limit, ok := lineEvidence(f, res, ac)
	along := alongClause(f)
	switch {
	case !ok && along != "":
		return head + " (too weak a signal to tell a conductor crossing this group's readings from none, or none crosses them), so its position and depth mean nothing" + along
	case !ok:
		return head + " (too weak a signal to tell a conductor from none, or no conductor under this group), so its position and depth mean nothing"
	case drop <= limit && along != "":
		return head + fmt.Sprintf(", and a line fits the readings no better than noise alone could make it (chi-square lower by only %.3g than with the background alone; noise can lower it by up to %.3g at %d readings): no conductor crossing this group's readings is detected, though one too deep or weak for them may cross there%s; its position and depth mean nothing",
			math.Max(drop, 0), limit, len(f.Problem.Points), along)
	case drop > limit:
		return head + fmt.Sprintf(", but a line fits the readings better than noise alone could make it (chi-square lower by %.3g than with the background alone; noise by up to %.3g at %d readings): the readings hold a field, of a conductor under this group too deep or weak for them to fix its current, position and depth (which mean nothing here; longer traverses or a stronger current would), or of one nearby (past a conductor's end, or beside the traverse)",
			drop, limit, len(f.Problem.Points))
	}
	return head + fmt.Sprintf(", and a line fits the readings no better than noise alone could make it (chi-square lower by only %.3g than with the background alone; noise can lower it by up to %.3g at %d readings): no conductor is detected under this group, though one too deep or weak for these readings may lie there; its position and depth mean nothing",
		math.Max(drop, 0), limit, len(f.Problem.Points))
}

// unfitNoCurrent words, for a group whose lines carry no current the
// data resolve but whose fit misses its readings by more than farMisfit
// times the noise they show, why: no line describes the field, which is
// strong, so the cause is not a conductor too deep or weak. A sensor
// turned half round or its vertical reversed ran every fit off to a
// phantom 122 kA line 90 m down, 736 nT RMS off readings with 2 nT of
// noise and a 3571 nT anomaly, and each group was told "too deep or weak
// ... longer traverses would" (found in review). Empty when the fit is
// within that of the noise, or the noise was not measured.
func unfitNoCurrent(f *Fit, res *inverse.Result, ac bool) string {
	measured := f.MeasuredNoise
	if !(measured > 0) || res == nil || res.RMS <= 0 {
		return ""
	}
	r := res.RMS
	if ac {
		r /= math.Sqrt2
	}
	if r <= farMisfit*measured {
		return ""
	}
	if a := aboveFit(f, measured, ac); a != nil {
		return fmt.Sprintf(", and the fit misses the readings by %.3g nT RMS per component, %.3g times the %.3g nT noise they show: no line below the sensors describes this field, so its current, position and depth mean nothing; %s",
			r, r/measured, measured, a.words(ac))
	}
	return fmt.Sprintf(", and the fit misses the readings by %.3g nT RMS per component, %.3g times the %.3g nT noise they show: no line describes this field, so its current, position and depth mean nothing. A deep or faint conductor's field would still fit to about the noise: check the sensor's orientation and the field columns first (a sensor turned on its mount or upside down, two field columns swapped, an axis's sign reversed, a field logged north, east, down read as east, north, up; a base log beside the survey, --base, names the mistake), or a conductor above the sensors, such as an overhead line or a cable tray, which the fit never places there (with the axes right, do not turn one to make the readings fit: that fits its mirror image below ground), then nearby steel or conductors close together",
		r, r/measured, measured)
}

// noCurrentHead is the start of noCurrentProblem's text, giving the
// strongest line's current as signed along its direction. SetRoute, which
// turns a group's lines along the route, words it again with the turned
// sign (turnProblemCurrent), so that the text, the group's
// sources[0].current_a and the poor-fit finding that quotes the text
// agree.
func noCurrentHead(current, sigma float64, ac bool) string {
	return fmt.Sprintf("no current found: the strongest line's current, %s A, is within %.3g times its uncertainty of zero", PlusMinus(current, sigma), currentK(ac))
}

// undeterminedHead is the start of noCurrentProblem's text for a group
// whose strongest line s has a current the readings do not determine
// (Identifiable.Current false: its sigma is not estimated, and no test
// against it was made), or "" for one whose current was tested. Lines of
// +236.6 A and -234.9 A at one place, a go-and-return pair collapsed onto
// itself whose fields cancel, were worded "237 A, is within 3 sigma of
// zero" with a sigma of 0 (found in review). The currents are given
// without their signs, which name no direction of a line whose partner
// cancels it (and SetRoute's turning of the sign, turnProblemCurrent,
// finds none to turn).
func undeterminedHead(res *inverse.Result, s *inverse.SourceEstimate) string {
	if s.Kind == KindDipole || s.Identifiable.Current {
		return ""
	}
	var mate *inverse.SourceEstimate
	for i := range res.Sources {
		o := &res.Sources[i]
		if o != s && o.Kind != KindDipole && !o.Identifiable.Current && (mate == nil || math.Abs(o.Current) > math.Abs(mate.Current)) {
			mate = o
		}
	}
	if mate == nil {
		return fmt.Sprintf("no current found: the line's current (%s A) is not determined by the readings", num(math.Abs(s.Current)))
	}
	if s.Current*mate.Current*dot3(s.Dir, mate.Dir) > 0 {
		return fmt.Sprintf("no current found: the two lines' currents (%s A and %s A, the same way) are not determined: the lines lie together and the readings do not part their currents",
			num(math.Abs(s.Current)), num(math.Abs(mate.Current)))
	}
	return fmt.Sprintf("no current found: the two lines' currents (%s A and %s A, in opposite directions) are not determined: the lines lie together and their fields cancel, a go-and-return pair the readings do not separate",
		num(math.Abs(s.Current)), num(math.Abs(mate.Current)))
}

// turnProblemCurrent finds in problem, the problem of a group whose
// strongest line s had its direction, and so its DC current's sign, just
// reversed (flipSource), the current as the text gave it before
// ("current, -0.0023 ± 0.0023 A,": noCurrentHead, nearSensorProblem and
// undetectedProblem word it so), and returns it (from) with its
// rewording (to); ok is false when the text gives no such current.
func turnProblemCurrent(problem string, s *Source) (from, to string, ok bool) {
	if !strings.HasPrefix(problem, "no current found") {
		return "", "", false
	}
	from = "current, " + PlusMinus(-s.Current, s.CurrentSigma) + " A,"
	to = "current, " + PlusMinus(s.Current, s.CurrentSigma) + " A,"
	if from == to || !strings.Contains(problem, from) {
		return "", "", false
	}
	return from, to, true
}

// alongRatio is the largest ratio of the spread of a group's readings across
// their direction of travel to their spread along it (RMS about the mean, on
// the ground) for which they are taken as one straight line of readings
// (alongClause): a line walked with a sway of a tenth of its length.
const alongRatio = 0.1

// alongClause returns, when the group's readings lie along one straight
// line on the ground (alongRatio), a clause saying that a conductor running
// along that line cannot be seen from them; "" otherwise. The field of a
// long straight conductor is the same at every point of a line parallel to
// it, so readings walked along one see a constant, which the background
// takes: seven lines walked along a 10 A cable 1 m down, one 0.3 m beside
// it, each reported "no conductor is detected" (found in review).
func alongClause(f *Fit) string {
	if f == nil || f.Problem == nil || len(f.Problem.Points) < 3 {
		return ""
	}
	_, _, sxx, syy, sxy := inverse.PlanScatter(f.Problem.Points)
	// The spreads along and across the line of readings, and its
	// direction (az from east, anticlockwise).
	major, minor, az := inverse.PlanPrincipal(sxx, syy, sxy)
	if !(major > 0) || math.Sqrt(minor/major) > alongRatio {
		return ""
	}
	// The direction of travel, as a bearing east of north.
	bearing := math.Mod(90-az*180/math.Pi+360, 180)
	return fmt.Sprintf("; a conductor running along this group's line of readings (bearing %.0f° or %.0f°) cannot be seen from it at all: its field is the same at every reading, and the background takes it, so walk traverses across it to find one",
		bearing, bearing+180)
}

// nearSensorShare is the share of the readings' horizontal extent within
// which a lone line under the sensors counts as near them
// (nearSensorFloor), however closely spaced the readings: at 2000
// readings a second walking 0.05 m/s two reading spacings are 0.05 mm,
// so the guard never acted on such a log (found in review).
const nearSensorShare = 0.01

// nearSensorFloor is the distance under the lowest sensor within which
// nearSensorProblem judges a lone line: two reading spacings (spacing, the
// median), or nearSensorShare of the readings' extent in plan (the
// diagonal of their bounding box), whichever is more.
func nearSensorFloor(pts [][3]float64, spacing float64) float64 {
	if len(pts) == 0 {
		return 2 * spacing
	}
	lo, hi := pts[0], pts[0]
	for _, r := range pts {
		for k := range 2 {
			lo[k], hi[k] = math.Min(lo[k], r[k]), math.Max(hi[k], r[k])
		}
	}
	return math.Max(2*spacing, nearSensorShare*math.Hypot(hi[0]-lo[0], hi[1]-lo[1]))
}

// nearSensorProblem returns why a group whose only source is a line within
// nearSensorFloor of the lowest sensor (two reading spacings, or a
// hundredth of the readings' extent) is taken as having no current found, or "".
// So close, a line's field is that of a few readings, and one fits the noise of some
// few readings anywhere along the survey: the chance that noise alone gives a
// current beyond 3 sigma is that of the best of about as many trials as there are
// readings (on pure 20 nT noise 1.5% of traverses had one, 2 cm under a sensor,
// against the 0.27% the 3 sigma stands for). Such a line's current must pass the
// same probability, 0.0027, over that many trials (Bonferroni): 4.35 sigma for DC
// over 201 readings.
func nearSensorProblem(f *Fit, res *inverse.Result, ac bool) string {
	p := f.Problem
	if p == nil || len(res.Sources) != 1 || res.Sources[0].Kind == KindDipole || len(p.Points) < 3 {
		return ""
	}
	s := &res.Sources[0]
	zmin := math.Inf(1)
	for _, r := range p.Points {
		zmin = math.Min(zmin, r[2])
	}
	gaps := make([]float64, 0, len(p.Points)-1)
	for i := 1; i < len(p.Points); i++ {
		a, b := p.Points[i-1], p.Points[i]
		gaps = append(gaps, math.Hypot(math.Hypot(b[0]-a[0], b[1]-a[1]), b[2]-a[2]))
	}
	slices.Sort(gaps)
	spacing := gaps[len(gaps)/2]
	h := zmin - s.Point[2]
	within := nearSensorFloor(p.Points, spacing)
	if !(spacing > 0) || !(h < within) {
		return ""
	}
	n := float64(len(p.Points))
	k := math.Sqrt2 * math.Erfcinv(lookElsewhereP/n) // two-sided normal tail
	if ac {
		k = math.Sqrt(-2 * math.Log(lookElsewhereP/n)) // Rayleigh tail of a phasor's modulus
	}
	if math.Abs(s.Current) > k*s.CurrentSigma {
		return ""
	}
	return fmt.Sprintf("no current found: the line lies %.2g m below the lowest sensor, within %.2g m of it (two reading spacings or a hundredth of the readings' extent, whichever is more), where a line fits the noise of a few readings; noise alone does so beside one or other of the %d readings, so its current, %s A, would have to exceed %.3g times its uncertainty (3 sigma's chance over as many places) to be found, and does not: no conductor is detected under this group, and its position and depth mean nothing%s",
		h, within, len(p.Points), PlusMinus(s.Current, s.CurrentSigma), k, alongClause(f))
}

// aboveGroundProblem returns why the strongest line s of a fit is not a buried
// conductor when it lies above the ground: with depths below the ground
// (inverse Settings.ReferenceZ, --reference-z), above depth 0; with depths below
// the sensors and their height above the ground known (sensorHeight,
// --sensor-height), less deep than that height. fail is true when it lies above
// the ground by more than 3 sigma. It returns "" when the line lies at or below
// the ground, or where the ground is not known.
//
// Such a fit says nothing of what lies below: a 10 A bore 10 m down under
// traverses whose far end a 30 A cable 1 m down passed about 10 m beyond
// (rv23a cross.toml, invented) was fitted as a line 0.52 m above the
// ground, and the refusal said "no buried conductor lies there" over the
// bore (found in review).
func aboveGroundProblem(res *inverse.Result, s *inverse.SourceEstimate, sensorHeight float64) (why string, fail bool) {
	ground := 0.0
	switch {
	case res.DepthReference == "ReferenceZ":
	case sensorHeight > 0:
		ground = sensorHeight
	default:
		return "", false
	}
	d := s.Depth - ground
	if s.Kind == KindDipole || !(d < 0) {
		return "", false
	}
	if d+3*s.DepthSigma < 0 {
		return fmt.Sprintf("the line lies above the ground given (depth %s m below it, over 3 sigma above): the fit is not usable at this traverse, and says nothing of whether a conductor lies below; it stands for something else (another conductor or a bend nearby, such as a cable passing beyond the traverse's end, may have spoilt it; or noise beside a sensor, or the field of something above the ground)", PlusMinus(d, s.DepthSigma)), true
	}
	return fmt.Sprintf("the line lies above the ground given, by less than 3 times its uncertainty (depth %s m below it): a conductor on the surface, or the ground level given is too low", PlusMinus(d, s.DepthSigma)), false
}

// undetectedProblem returns why a group whose only source is a line with a current
// beyond currentK sigmas is taken as having no current found, or "": the line lowers
// chi-square from the background alone by no more than lineEvidence's limit, which
// noise alone passes somewhere along the readings with the chance (0.0027) that the
// current's 3 sigma stands for. The current's own sigma is taken at the place the
// fit chose, the best of all places, and on pure 20 nT noise one line in 65 had a
// current beyond 3 sigma.
func undetectedProblem(f *Fit, res *inverse.Result, ac bool) string {
	if len(res.Sources) != 1 || res.Sources[0].Kind == KindDipole {
		return ""
	}
	drop, limit, ok := lineEvidence(f, res, ac)
	if !ok || drop > limit {
		return ""
	}
	s := &res.Sources[0]
	return fmt.Sprintf("no current found: the line's current, %s A, is more than %.3g times its uncertainty from zero, but the line fits the readings no better than noise alone makes one fit at one place or another along %d readings (chi-square lower by only %.3g than with the background alone, against up to %.3g from noise on 99.73%% of such surveys): no conductor is detected under this group, though one too deep or weak for these readings may lie there; its position and depth mean nothing",
		PlusMinus(s.Current, s.CurrentSigma), currentK(ac), len(f.Problem.Points), math.Max(drop, 0), limit)
}
