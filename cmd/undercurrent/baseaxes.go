package main

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/inverse"
)

// The survey's field against the base record's when the sensor's axes
// are wrong by a quarter or half turn, a reflection or an upside-down
// mount (found in review): the base check had described every
// disagreement as a turn about the vertical plus a tilt, from the fits'
// backgrounds even where the fits had failed. A sensor turned half round
// makes every line fit run off to a phantom line 90 m down whose
// near-uniform field the background gives back, so the level compared was
// 25° and 13% off the true one: a "46.5° turn" and a "13.6% scale error"
// blamed on the calibration, where --mount-yaw 180 gave the truth. An
// upside-down sensor, a north, east, down field read as east, north, up
// and two swapped columns drew a --mount-yaw that cannot undo them (the
// last led to seven "sound" fits at 43% of the current).
//
// The level is now taken from the sound fits' backgrounds only (the
// readings' median when none is sound), the 48 ways of reading three
// columns (each axis from any column, either sign) are tried against the
// base's field, and those that bring it within the allowance are tried
// on the fits: the groups are fitted again with the readings so read, and
// the one that brings them to their noise is named, with the flag that
// reads the log so.

const (
	// soundMisfit is the multiple of a group's measured noise its fit's
	// RMS may reach for its background to give the survey's level: a
	// fit of the wrong model misses by a few times the noise (a pair
	// fitted as one line, a swaying sensor: 2-10), one run off to a
	// phantom line because the field's axes are wrong by hundreds.
	soundMisfit = 20.0
	// axesMatchDeg is the least allowance for a way of reading the
	// columns to match the base's field: the readings' median holds up to
	// about 1000 nT of a strong line's field (1.2° of 50 000 nT) when no
	// fit is sound; the ways of reading differ by 90° or more, or by
	// twice a small component's angle.
	axesMatchDeg = 3.0
	// axesMinDeg is the least angle between the survey's field and the
	// base's for a way of reading the columns to be looked for: a
	// mirror or turn of axes that carry a small share of the field (the
	// east component at a site of small declination) moves it by twice
	// that share's angle only, which a small turn of the sensor does too
	// (a 3° turn matched reading east as west to 1.5° at Harrow Fen).
	axesMinDeg = 10.0
	// refitGood is the multiple of their noise the refitted groups'
	// median RMS must reach for a way of reading to be confirmed.
	refitGood = 3.0
	// maxRefitGroups is how many groups are fitted again for each way of
	// reading tried (spread over the survey).
	maxRefitGroups = 12
	// screenGroups is how many groups are fitted again first for each of
	// the ways of reading far from the base's field (tried only when the
	// fits all fail): a way that fits must fit each group, so one whose
	// group in the middle of the survey misses by over soundMisfit times
	// its noise is passed over (a failing group's fit takes tens of ms,
	// and there are 47 ways).
	screenGroups = 1
	// trackAgreeDeg is the largest angle between the refitted lines'
	// median azimuth and the track through their crossings for a way of
	// reading to be taken as the right one: a straight conductor's
	// crossings lie along its azimuth (the wrong reading of the Harrow
	// Fen line, a mirror fitted as a turn, put lines at 120° along a
	// 60° track).
	trackAgreeDeg = 15.0
	// trackPartDeg is the least difference of the lines' median angle
	// off the direction through their neighbours' crossings
	// (localTrackOff) for one way of reading that fits to the noise to
	// be taken over another that fits as well: a mirror image and a turn
	// put a line of azimuth θ at θ and -θ (bx and by swapped on Kestrel
	// Moor's route, 87° then 100°: lines 6° and 20° off their track read
	// as a turn, 1° read right), where the crossings and a bend leave the
	// right reading's lines within a degree or two of it.
	trackPartDeg = 3.0
	// quarterNearDeg is how far from a quarter or half turn a turn
	// measured from the field may be for that quarter turn to be tried:
	// where the fits all fail the level is the readings' median, which
	// holds the conductors' field, and where the field is steep that moves
	// its horizontal direction by degrees (a quarter turn read as 82.2°
	// at a dip of 83°, found in review).
	quarterNearDeg = 15.0
	// unseenTurnMinDeg is the least turn about the vertical the lines'
	// angle off their track is taken to show when the field's direction
	// cannot (unseenTurnWarning): 2° is about 1 - cos 2° = 0.06% of the
	// current, and several times the scatter of the lines' azimuths over
	// a straight conductor.
	unseenTurnMinDeg = 2.0
)

// orientTest lets baseFieldWarnings fit the groups again with their
// fields turned.
type orientTest struct {
	// refit returns the median over the groups of the fit's RMS over
	// the group's measured noise with each reading's field turned by
	// turn; nil when the groups cannot be fitted again (AC, a
	// sensor-frame log).
	refit func(turn func([3]float64) [3]float64) refitResult
	// screen is refit over at most screenGroups of the groups, to pass
	// over quickly the ways of reading that cannot fit (nil: use refit).
	screen func(turn func([3]float64) [3]float64) refitResult
	// asRead is that median of the fits as they are (NaN: unknown).
	asRead float64
	// enu is set when every log is in east, north, up, where
	// --field-axes applies.
	enu bool
	// axes is the --field-axes already applied.
	axes axisMap
	// asReadTrack is the lines' angle off the direction through their
	// neighbours' crossings, the fits as they are (sound fits only).
	asReadTrack trackTurn
}

// trackTurn is the fitted lines' angle off the direction through their
// neighbours' crossings (localTrackOff), degrees.
type trackTurn struct {
	// signed is the median of each line's azimuth less the direction
	// through its neighbours' crossings, in (-90, 90] (positive:
	// clockwise of it seen from above); abs the median of its size.
	signed, abs float64
	// spread is the scatter of the angles about their median (1.4826
	// times the median absolute deviation), se that of signed (spread
	// over the root of n).
	spread, se float64
	// same is the share of the angles of signed's sign.
	same float64
	n    int
}

// localTrackOff returns the lines' angle off their track: the crossing
// points pts (east, north, m) ordered along their principal direction,
// each line's azimuth az (clockwise from north, degrees) is compared with
// the direction from the crossing before it to the one after it (from its
// own to its neighbour's at the ends). Unlike trackOffDeg it follows a
// bending route. n is 0 for fewer than four lines.
func localTrackOff(pts [][2]float64, az []float64) trackTurn {
	nan := math.NaN()
	out := trackTurn{signed: nan, abs: nan, spread: nan, se: nan, same: nan}
	if len(pts) < 4 || len(az) != len(pts) {
		return out
	}
	me, mn, _, _, th := crossingAxis(pts)
	ux, uy := math.Cos(th), math.Sin(th)
	idx := make([]int, len(pts))
	for i := range idx {
		idx[i] = i
	}
	along := func(i int) float64 { return (pts[i][0]-me)*ux + (pts[i][1]-mn)*uy }
	sort.SliceStable(idx, func(a, b int) bool { return along(idx[a]) < along(idx[b]) })
	var off []float64
	for k, i := range idx {
		a, b := idx[max(0, k-1)], idx[min(len(idx)-1, k+1)]
		de, dn := pts[b][0]-pts[a][0], pts[b][1]-pts[a][1]
		if math.Hypot(de, dn) < 1 {
			continue
		}
		dir := math.Atan2(de, dn) * 180 / math.Pi
		off = append(off, math.Remainder(az[i]-dir, 180))
	}
	if len(off) < 4 {
		return out
	}
	out.n = len(off)
	out.signed = finiteMedian(off)
	abs := make([]float64, len(off))
	dev := make([]float64, len(off))
	same := 0
	for i, v := range off {
		abs[i] = math.Abs(v)
		dev[i] = math.Abs(v - out.signed)
		if v*out.signed > 0 {
			same++
		}
	}
	out.abs = finiteMedian(abs)
	out.spread = 1.4826 * finiteMedian(dev)
	out.se = out.spread / math.Sqrt(float64(len(off)))
	out.same = float64(same) / float64(len(off))
	return out
}

// clearlyCloser is set when lines with angles a off their track follow it
// clearly better than lines with b: by trackPartDeg, and by four times a's
// scatter over the root of the lines' number.
func clearlyCloser(a, b trackTurn) bool {
	if a.n < 4 || b.n < 4 || !finite(a.abs) || !finite(b.abs) {
		return false
	}
	margin := math.Max(trackPartDeg, 4*a.spread/math.Sqrt(float64(a.n)))
	return b.abs > a.abs+margin
}

func angleDeg(a, b [3]float64) float64 {
	c := (a[0]*b[0] + a[1]*b[1] + a[2]*b[2]) / (norm(a) * norm(b))
	return math.Acos(math.Max(-1, math.Min(1, c))) * 180 / math.Pi
}

func headingDeg(v [3]float64) float64 { return math.Atan2(v[0], v[1]) * 180 / math.Pi }

// axesCandidate is a way of reading the columns that brings the survey's
// field onto the base's.
type axesCandidate struct {
	m      axisMap
	angle  float64 // from the base's field once read so, degrees
	misfit float64 // median refitted RMS over noise; NaN: not refitted
	// trackOff is the angle, degrees, between the refitted lines' median
	// azimuth and the track through their crossings (NaN: too few
	// groups). A mirror image and a turn can both fit each traverse
	// to the noise where the field's east is near zero; only the right
	// one puts lines along the track they cross the traverses on.
	trackOff float64
	// background is the refitted groups' median background.
	background [3]float64
	// local is the refitted lines' angle off the direction through
	// their neighbours' crossings.
	local trackTurn
}

// refitResult is what fitting the groups again with their fields turned
// gives: the median over the groups of the fit's RMS over its noise, the
// lines' angle off their track (axesCandidate.trackOff) and the median of
// the sound fits' backgrounds (NaN when none).
type refitResult struct {
	misfit, trackOff float64
	background       [3]float64
	local            trackTurn
}

// trackOK is set when the refitted lines follow the track through them.
func (c axesCandidate) trackOK() bool { return c.trackOff <= trackAgreeDeg }

// describe names what reading the columns with m undoes, and whether a
// turn about the vertical does it (then yaw is the --mount-yaw, degrees
// anticlockwise, that the survey field s needs on top of mountYaw).
func (c axesCandidate) describe(s [3]float64, mountYaw float64) (what string, turn bool, yaw float64) {
	m := c.m
	det := m.det()
	switch {
	case m.perm[2] == 2 && m.sign[2] > 0 && det > 0:
		dh := math.Remainder(headingDeg(s)-headingDeg(m.apply(s)), 360)
		dh = 90 * math.Round(dh/90)
		yaw = math.Remainder(mountYaw-dh, 360)
		switch math.Abs(math.Remainder(dh, 360)) {
		case 180:
			what = "the sensor turned half round (180°) on its mount or pole"
		default:
			side := "anticlockwise"
			if yaw < 0 {
				side = "clockwise"
			}
			what = fmt.Sprintf("the sensor turned a quarter turn (90° %s, seen from above) on its mount or pole", side)
		}
		return what, true, yaw
	case m.perm[2] == 2 && m.sign[2] > 0:
		what = "a mirror image of it, which no turn undoes: two horizontal field columns swapped, or one horizontal axis's sign reversed"
		if m.perm[0] == 1 && m.perm[1] == 0 {
			what = "a mirror image of it, which no turn undoes: the bx and by columns swapped (or, with them, a horizontal axis's sign reversed)"
		}
	case m.perm[2] == 2 && det > 0 && m.flag() == "n,e,d":
		what = "the field logged north, east, down (the geophysical X, Y, Z) and read as east, north, up: its vertical component has the wrong sign"
	case m.perm[2] == 2 && det > 0:
		what = "the sensor mounted upside down (turned over about a horizontal axis): its vertical component has the wrong sign"
	case m.perm[2] == 2:
		what = "a mirror image of it, which no turn undoes: the z axis reversed (its column's sign, or a z-down axis beside x and y of an east, north, up frame)"
	default:
		what = fmt.Sprintf("the vertical read from the %s column: the sensor lying on its side, or its field columns out of order", [3]string{"bx", "by", "bz"}[m.perm[2]])
	}
	return what, false, 0
}

// measuredTurnCloser is set when the readings turned back by c and then
// by the turn left between the refitted groups' backgrounds and the base's
// field b fit as well and put the lines clearly closer to their route
// (clearlyCloser): c is then a quarter or half turn near a turn of another
// size. At a steep field a sensor turned 80° is read back by a quarter
// turn to within 1.2° of the base's field, each traverse fits as well
// (a line crossed 10° off square gives the same profile, its current
// low by 1 - sin 80°) and the lines run 10° off their track: --mount-yaw
// 90 was offered, 24.62 A against a truth of 25 A (found in review). The
// traverses' misfits cannot tell such turns apart; the lines' azimuths
// against the route through their crossings can.
func measuredTurnCloser(c axesCandidate, b [3]float64, ot *orientTest) bool {
	bg := c.background
	if ot == nil || ot.refit == nil || !finite(bg[0]+bg[1]+bg[2]) {
		return false
	}
	res := math.Remainder(headingDeg(bg)-headingDeg(b), 360)
	if math.Abs(res) < 0.5 {
		return false
	}
	sr, cr := math.Sincos(res * math.Pi / 180)
	g := ot.refit(func(v [3]float64) [3]float64 {
		w := c.m.apply(v)
		return [3]float64{cr*w[0] - sr*w[1], sr*w[0] + cr*w[1], w[2]}
	})
	return g.misfit <= math.Max(refitGood, 1.2*c.misfit) && clearlyCloser(g.local, c.local)
}

// compose returns the --field-axes that reads the log as m does after a.
func compose(m, a axisMap) axisMap {
	var out axisMap
	for i := range 3 {
		out.perm[i] = a.perm[m.perm[i]]
		out.sign[i] = m.sign[i] * a.sign[m.perm[i]]
	}
	return out
}

// remedy returns the flag that reads the log as c does (flag: just the
// flag and its value, "" when none applies) and the sentence offering it.
func (c axesCandidate) remedy(s [3]float64, mountYaw float64, ot *orientTest) (flag, sentence string) {
	_, turn, yaw := c.describe(s, mountYaw)
	switch {
	case turn:
		flag = fmt.Sprintf("--mount-yaw %.0f", yaw)
		return flag, flag + " turns the readings back"
	case ot != nil && ot.enu && math.Remainder(mountYaw, 360) == 0:
		flag = "--field-axes " + compose(c.m, ot.axes).flag()
		return flag, flag + " reads the field columns so (the field alone: --frame would turn the positions too)"
	case ot != nil && ot.enu:
		return "", "run again without --mount-yaw and follow this check's advice then (--field-axes reads the field columns in another order or sign; --mount-yaw turns them after it)"
	}
	return "", "read the field columns in the right order and sign (for a sensor-frame log, its x forward, y right, z down)"
}

// axesWarning returns the warning for a survey field s that some way of
// reading the columns (not the identity) brings onto the base's field b,
// and false when none does (a turn or tilt of another size).
//
// The ways are looked for only when the field is axesMinDeg or more from
// the base's, unless the fits as read miss their readings by more than
// soundMisfit times their noise: then they are tried whatever the angle
// (at a steep field a quarter turn moves the field by 8°, a swap of bx and
// by by 6°, found in review), and if none within the allowance fits, the
// others are tried too, nearest first, until one does: the refit decides.
//
// When a way of reading is confirmed by the refit, level is the refitted
// groups' median background (for the |B| check: a failed fit's
// background, or the readings' median, holds a line's field).
func axesWarning(what string, s, b [3]float64, angle, allow float64, basePath, where string, mountYaw float64, ot *orientTest) (msg string, ok bool, level *[3]float64) {
	tol := math.Max(allow, axesMatchDeg)
	refitted := ot != nil && ot.refit != nil
	failing := refitted && ot.asRead > soundMisfit
	if angle < axesMinDeg && !failing {
		return "", false, nil
	}
	var cands, far []axesCandidate
	for _, m := range allAxisMaps() {
		if m.identity() {
			continue
		}
		c := axesCandidate{m: m, angle: angleDeg(m.apply(s), b), misfit: math.NaN(), trackOff: math.NaN()}
		if c.angle <= tol {
			cands = append(cands, c)
		} else {
			far = append(far, c)
		}
	}
	try := func(c *axesCandidate) {
		r := ot.refit(c.m.apply)
		c.misfit, c.trackOff, c.background, c.local = r.misfit, r.trackOff, r.background, r.local
	}
	// confirmed is set when the groups fitted again with the readings
	// read as c fit to their noise. Where the fits as read all failed, the
	// level matched was the readings' median, and any turn about the
	// vertical of a line's field is a line's field: a sensor turned 135°
	// read back by a quarter turn fits to the noise. The refitted groups'
	// backgrounds, from sound fits, must then be the base's field too.
	confirmed := func(c axesCandidate) bool {
		if !(c.misfit <= refitGood) {
			return false
		}
		if !failing {
			return true
		}
		bg := c.background
		return finite(bg[0]+bg[1]+bg[2]) && angleDeg(bg, b) <= tol
	}
	if refitted {
		for i := range cands {
			try(&cands[i])
		}
	}
	if failing {
		fits := false
		for _, c := range cands {
			fits = fits || confirmed(c)
		}
		if !fits {
			// None near the base's field fits: the level, the
			// readings' median, may be off by more than the allowance.
			sort.SliceStable(far, func(i, j int) bool { return far[i].angle < far[j].angle })
			for _, c := range far {
				if ot.screen != nil {
					if r := ot.screen(c.m.apply); !(r.misfit <= soundMisfit) {
						continue
					}
				}
				try(&c)
				if confirmed(c) {
					cands = append(cands, c)
					break
				}
			}
		}
	}
	if len(cands) == 0 {
		return "", false, nil
	}
	if refitted {
		// The ways that fit to the noise first, of them those whose
		// lines follow their track, then turns before mirror images.
		rank := func(c axesCandidate) [3]int {
			var r [3]int
			if !confirmed(c) {
				r[0] = 1
			}
			if !c.trackOK() {
				r[1] = 1
			}
			if c.m.det() < 0 {
				r[2] = 1
			}
			return r
		}
		sort.SliceStable(cands, func(i, j int) bool {
			ri, rj := rank(cands[i]), rank(cands[j])
			if ri != rj {
				for k := range ri {
					if ri[k] != rj[k] {
						return ri[k] < rj[k]
					}
				}
			}
			a, b := cands[i].misfit, cands[j].misfit
			if math.IsNaN(a) != math.IsNaN(b) {
				return !math.IsNaN(a)
			}
			if a != b {
				return a < b
			}
			return cands[i].angle < cands[j].angle
		})
		// Of the ways that fit and follow the track alike, the one whose
		// lines follow it clearly better along the route (a turn and a
		// mirror image put a line of azimuth θ at θ and -θ).
		top := 0
		for i := range cands {
			c, t := cands[i], cands[top]
			if i != top && confirmed(c) && confirmed(t) && c.trackOK() == t.trackOK() && clearlyCloser(c.local, t.local) {
				top = i
			}
		}
		if top > 0 {
			c := cands[top]
			copy(cands[1:top+1], cands[:top])
			cands[0] = c
		}
	} else {
		sort.SliceStable(cands, func(i, j int) bool { return cands[i].angle < cands[j].angle })
	}
	best := cands[0]
	switch {
	case best.angle <= allow:
		msg = fmt.Sprintf("%s east %.0f, north %.0f, up %.0f nT) points %.1f° away from the base record's (%.0f, %.0f, %.0f nT; %s, %s), more than the %.1f° that local anomalies and the distance between them allow, and is the base's field, to %.1f°, with the sensor's axes read wrong",
			what, s[0], s[1], s[2], angle, b[0], b[1], b[2], basePath, where, allow, best.angle)
	case best.angle <= tol:
		// Within the least allowance a way of reading is looked for
		// at, not within the allowance above: say which.
		msg = fmt.Sprintf("%s east %.0f, north %.0f, up %.0f nT) points %.1f° away from the base record's (%.0f, %.0f, %.0f nT; %s, %s), more than the %.1f° that local anomalies and the distance between them allow, and is the base's field, to %.1f° (within the %.1f° a way of reading the columns is looked for at), with the sensor's axes read wrong",
			what, s[0], s[1], s[2], angle, b[0], b[1], b[2], basePath, where, allow, best.angle, tol)
	default:
		msg = fmt.Sprintf("%s east %.0f, north %.0f, up %.0f nT) points %.1f° away from the base record's (%.0f, %.0f, %.0f nT; %s, %s), more than the %.1f° that local anomalies and the distance between them allow; no way of reading the columns brings it within that of the base's field (%.1f° at best), but that level holds the conductors' field and the readings fit once read another way, so the sensor's axes are read wrong",
			what, s[0], s[1], s[2], angle, b[0], b[1], b[2], basePath, where, allow, best.angle)
	}
	good := refitted && confirmed(best)
	if _, turn, _ := best.describe(s, mountYaw); good && turn && measuredTurnCloser(best, b, ot) {
		// A turn of some other size: turnWarning names the turn
		// measured.
		return "", false, nil
	}
	desc, _, _ := best.describe(s, mountYaw)
	_, remedy := best.remedy(s, mountYaw, ot)
	switch {
	case good:
		if bg := best.background; finite(bg[0] + bg[1] + bg[2]) {
			level = &bg
		}
		// Other ways of reading that fit as well cannot be told apart
		// by these readings (a line along east sees no east field),
		// unless their lines cross the track, or follow it clearly
		// worse along the route.
		var also, off []string
		for _, c := range cands[1:] {
			if c.misfit <= math.Max(refitGood, 1.5*best.misfit) && (c.misfit > refitGood || confirmed(c)) {
				d, _, _ := c.describe(s, mountYaw)
				switch {
				case best.trackOK() && !c.trackOK():
					off = append(off, fmt.Sprintf("%s (its lines %.0f° off the track through them)", d, c.trackOff))
				case clearlyCloser(best.local, c.local):
					off = append(off, fmt.Sprintf("%s (its lines %.0f° off the direction through their neighbours' crossings, median, against %.0f° read as above)", d, c.local.abs, best.local.abs))
				default:
					if f, _ := c.remedy(s, mountYaw, ot); f != "" {
						d += ", which " + f + " reads"
					}
					also = append(also, d)
				}
			}
		}
		track := ""
		if best.trackOK() {
			track = fmt.Sprintf(", and the lines found follow the track through their crossings (to %.1f°)", best.trackOff)
		}
		msg += fmt.Sprintf(": %s. Fitted again with the readings read so, the groups' fits miss their readings by %.3g times their noise (median), against %.3g times as read%s; %s",
			desc, best.misfit, ot.asRead, track, remedy)
		if len(off) > 0 {
			msg += fmt.Sprintf(". Read as %s, each group fits as well but the lines found follow the route worse, so that reading is not offered", strings.Join(off, "; or as "))
		}
		if len(also) > 0 {
			msg += fmt.Sprintf(". These readings fit as well read as %s, and the lines found follow the route as well either way, so the readings cannot tell them apart: check the mount and the columns, and give the flag of the one found", strings.Join(also, "; or as "))
		}
	case refitted:
		var tried []string
		for _, c := range cands {
			d, _, _ := c.describe(s, mountYaw)
			tried = append(tried, fmt.Sprintf("%s (%.3g times)", d, c.misfit))
		}
		msg += fmt.Sprintf(", but fitted again with the readings read in each such way the groups' fits still miss their readings by many times their noise (median, as read %.3g times): %s. No turn is offered; check how the sensor is mounted, the field columns' order and signs and the frame (east, north, up or north, east, down)",
			ot.asRead, strings.Join(tried, "; "))
	default:
		msg += fmt.Sprintf(": most likely %s (not checked against the fits); %s", desc, remedy)
		if len(cands) > 1 {
			var other []string
			for _, c := range cands[1:] {
				d, _, _ := c.describe(s, mountYaw)
				other = append(other, d)
			}
			msg += fmt.Sprintf(". The field alone matches as well %s", strings.Join(other, "; or "))
		}
	}
	return msg + ". Currents, depths and positions from the fits as read mean nothing until the readings are read right", true, level
}

// turnWarning returns the warning for a survey field s turned from the
// base's b by no way of reading the columns: a turn about the vertical
// and a tilt, or a vertical component of the wrong sign.
func turnWarning(what string, s, b [3]float64, angle, allow float64, basePath, where string, cal *calibrate.Calibration, mountYaw float64, ot *orientTest) string {
	// The horizontal direction (declination-like, clockwise from
	// north) and the dip below the horizontal of each.
	dip := func(v [3]float64) float64 { return math.Atan2(-v[2], math.Hypot(v[0], v[1])) * 180 / math.Pi }
	dh := math.Remainder(headingDeg(s)-headingDeg(b), 360)
	dd := dip(s) - dip(b)
	side := "clockwise"
	if dh < 0 {
		side = "anticlockwise"
	}
	steeper := "steeper"
	if dd < 0 {
		steeper = "shallower"
	}
	psi, tilt := math.Abs(dh), math.Abs(dd)
	msg := fmt.Sprintf("%s east %.0f, north %.0f, up %.0f nT) points %.1f° away from the base record's (%.0f, %.0f, %.0f nT; %s, %s), more than the %.1f° that local anomalies and the distance between them allow: its horizontal direction is turned %.1f° %s (seen from above) and it dips %.1f° %s. The sensor's axes are turned against east, north, up (or the base magnetometer's own are), which a spin calibration cannot see and the fits' uncertainties do not include (one field direction cannot part a turn about the vertical from a tilt fully: a tilt across the field also turns its horizontal direction).",
		what, s[0], s[1], s[2], angle, b[0], b[1], b[2], basePath, where, allow, psi, side, tilt, steeper)
	if cal == nil {
		// Uncorrected offsets and soft iron turn the field as well
		// (Kestrel Moor's sensor, 310/-240/180 nT of offset and an
		// off-diagonal soft-iron matrix, read 1.8° with no mount
		// turned, and the --mount-yaw offered made the azimuths worse;
		// with its spin calibration no warning: found in review).
		msg += " No --calibration was given: a sensor's uncorrected offsets and soft iron turn the field too, so calibrate it first (calibrate --spin) unless the log is already corrected; a turn left after calibration is the mount's or the attitude's."
	}
	// A vertical component of the other sign than the base's: no turn
	// about the vertical undoes it.
	if s[2]*b[2] < 0 && math.Abs(b[2]) > 0.2*norm(b) {
		fix := "--field-axes says what each field column holds (e,s,d for a sensor upside down, n,e,d for a field logged north, east, down)"
		if ot != nil && !ot.enu {
			fix = "for a sensor-frame log, read its columns as x forward, y right, z down"
		}
		return msg + fmt.Sprintf(" Its vertical component (%.0f nT) has the other sign than the base's (%.0f nT): the sensor's z axis is reversed (mounted upside down, or a field logged with z down read as up), which no turn about the vertical undoes, so no --mount-yaw is offered; %s. Check how the sensor is mounted, the field columns' order and signs and its attitude reference", s[2], b[2], fix)
	}
	if psi >= 0.5 {
		yawFlag := mountYaw - dh
		tried, how := "", ""
		offer := true
		if ot != nil && ot.refit != nil {
			// The readings as read are already turned back by
			// mountYaw; turn them by the rest.
			turnBy := func(yaw float64) refitResult {
				r := -(yaw - mountYaw) * math.Pi / 180
				sr, cr := math.Sincos(r)
				return ot.refit(func(v [3]float64) [3]float64 { return [3]float64{cr*v[0] - sr*v[1], sr*v[0] + cr*v[1], v[2]} })
			}
			got := turnBy(yawFlag)
			// The turn measured from a level that holds the
			// conductors' field (no fit sound) is off by as much as
			// that field turns the horizontal direction, degrees where
			// the field is steep: measured again from the backgrounds
			// of the groups fitted with the readings turned back, and
			// taken when those fit as well.
			if bg := got.background; got.misfit <= refitGood && finite(bg[0]+bg[1]+bg[2]) {
				if res := math.Remainder(headingDeg(bg)-headingDeg(b), 360); math.Abs(res) >= 0.5 {
					if g2 := turnBy(yawFlag - res); g2.misfit <= math.Max(refitGood, 1.2*got.misfit) {
						how = fmt.Sprintf(" (measured again from the backgrounds of the groups fitted with the readings turned back by %.1f°)", yawFlag)
						yawFlag, got = yawFlag-res, g2
					}
				}
			}
			// A mount is turned by quarter turns: the quarter turn
			// near the turn measured, when the refit confirms it (its
			// fits as good, its lines following the route no worse).
			if q := 90 * math.Round(yawFlag/90); math.Remainder(q, 360) != 0 && math.Abs(yawFlag-q) <= quarterNearDeg && math.Abs(yawFlag-q) >= 0.05 {
				gq := turnBy(q)
				bq := gq.background
				level := !finite(bq[0]+bq[1]+bq[2]) || angleDeg(bq, b) <= math.Max(allow, axesMatchDeg)
				if gq.misfit <= math.Max(refitGood, 1.2*got.misfit) && level && !clearlyCloser(got.local, gq.local) {
					how = fmt.Sprintf(" (the quarter turn nearest the %.1f° measured: the groups fitted again with the readings turned back by it fit their readings to %.3g times their noise (median), and their lines follow the route as well or better)", yawFlag, gq.misfit)
					yawFlag, got = q, gq
				}
			}
			if !(got.misfit <= math.Max(refitGood, 1.2*ot.asRead)) {
				offer = false
				tried = fmt.Sprintf(" Fitted again with the readings turned back by it, the groups' fits still miss their readings by %.3g times their noise (median): a turned sensor's readings fit once turned back, so the cause is likely elsewhere (two field columns swapped, an axis reversed, a frame mistaken) and no --mount-yaw is offered.", got.misfit)
			}
		}
		low := ""
		if psi < 90 {
			low = fmt.Sprintf(", currents and depths low by 1 - cos %.1f° (%.2f%%)", psi, 100*(1-math.Cos(psi*math.Pi/180)))
		}
		msg += fmt.Sprintf(" A turn about the vertical of %.1f° (a magnetometer turned on its pole or mount, a heading reference off) turns every fitted line with it: azimuths off by about %.1f°, plan offsets with them%s", psi, psi, low)
		if offer {
			yaw := fmt.Sprintf("if the magnetometer is turned on its mount, --mount-yaw %s turns the readings back%s.", tenths(yawFlag), how)
			if cal == nil {
				yaw = fmt.Sprintf("if the log is already corrected and the magnetometer is turned on its mount, --mount-yaw %s turns the readings back%s.", tenths(yawFlag), how)
			}
			msg += "; " + yaw
		} else {
			msg += "." + tried
		}
	}
	if tilt >= 0.5 {
		msg += fmt.Sprintf(" A tilt of %.1f° (a leaning pole, an attitude reference off) turns the field into components no line gives: plan offsets off, currents scattered, perhaps a phantom return line.", tilt)
	}
	return msg + " Check how the sensor is mounted and its attitude reference"
}

// tenths writes v to a tenth, with no trailing zero (90, 20.3).
func tenths(v float64) string {
	return strconv.FormatFloat(math.Round(v*10)/10, 'f', -1, 64)
}

// groupMisfit is a DC group's fit's RMS over its measured noise (NaN when
// either is missing).
func groupMisfit(g *group, res *inverse.Result) float64 {
	if res == nil || len(g.fields) == 0 {
		return math.NaN()
	}
	n := g.measuredNoise(false)
	if !(n > 0) {
		return math.NaN()
	}
	return res.RMS / n
}

// levelMisfit is groupMisfit with the group's noise grown by the misfit
// its positions' error makes to its fit (posjitter.go: jitterMisfit,
// root-sum-square), where the fit's residuals show it (jitterShown): the
// scatter from reading to reading (trackScatter), or at least the error
// of positions rounded to a step (positionQuantum: a uniform error of sd
// step/√12). Positions exported to the centimetre (usual for corrected
// satellite fixes) leave up to 5 mm of error that over a strong shallow
// line's steep gradient made sound fits miss by over soundMisfit times
// the readings' own noise (in review, 200 A at 0.5 m below the sensors),
// and the check fell back to the readings' median, which holds thousands
// of nT of the line's field, and named a turn of 12.6° the sensor did not
// have. Rounded positions on a steady walk repeat a pattern every few
// readings, which sensorTracks takes for sensors logged in turn, so the
// step is read from the values themselves. A fit's background is not its
// lines' field whatever the positions' error; a fit run off to a phantom
// line (axes read wrong) misses by far more than the positions explain
// and keeps its misfit.
func levelMisfit(g *group, res *inverse.Result) float64 {
	r := groupMisfit(g, res)
	if r <= soundMisfit || !finite(r) {
		return r
	}
	// Pooled over east and north (trackScatterPooled): the rounding's
	// step bounds its error below.
	_, plan, up, _ := trackScatterPooled(g.points, g.memo.sensorTracks(g.points))
	q := positionQuantum(g.points) / math.Sqrt(12)
	plan, up = math.Max(plan, q), math.Max(up, q)
	if !(plan > 0 || up > 0) {
		return r
	}
	m, _, ok := jitterMisfit(res, g.points, plan, up, false)
	if !ok || !jitterShown(res, m, false) {
		return r
	}
	return res.RMS / math.Hypot(g.measuredNoise(false), m)
}

// positionQuantum returns the step, m, every coordinate of pts is a whole
// multiple of (0.1, 0.05, 0.01, 0.005 or 0.001 m: positions exported to
// the decimetre, centimetre or millimetre), or 0 when they are not so
// rounded (or fewer than minDiffReadings).
func positionQuantum(pts [][3]float64) float64 {
	if len(pts) < minDiffReadings {
		return 0
	}
	for _, q := range []float64{0.1, 0.05, 0.01, 0.005, 0.001} {
		whole := true
		for _, p := range pts {
			for _, v := range p {
				if x := v / q; !(math.Abs(x-math.Round(x)) < 1e-6) {
					whole = false
					break
				}
			}
			if !whole {
				break
			}
		}
		if whole {
			return q
		}
	}
	return 0
}

// refitGroups returns the groups fitted again for orientTest.refit: at
// most maxRefitGroups DC groups with readings, spread over the survey.
func refitGroups(sv *survey) []*group {
	var gs []*group
	for _, g := range sv.groups {
		if len(g.fields) >= 10 && g.measuredNoise(false) > 0 {
			gs = append(gs, g)
		}
	}
	if len(gs) <= maxRefitGroups {
		return gs
	}
	out := make([]*group, 0, maxRefitGroups)
	for i := range maxRefitGroups {
		out = append(out, gs[i*len(gs)/maxRefitGroups])
	}
	return out
}

// newOrientTest builds the refit for a DC survey in east, north, up.
func newOrientTest(o *locateOptions, sv *survey, enu bool) *orientTest {
	ot := &orientTest{asRead: math.NaN(), enu: enu, axes: o.axes}
	if sv.ac {
		return ot
	}
	gs := refitGroups(sv)
	var now, az []float64
	var pts [][2]float64
	for _, g := range gs {
		if g.err == nil {
			if r := groupMisfit(g, g.res); finite(r) {
				now = append(now, r)
				if r <= soundMisfit && len(g.res.Sources) > 0 && g.res.Sources[0].Kind == "line" {
					p := g.res.Sources[0].Point
					pts = append(pts, [2]float64{p[0], p[1]})
					az = append(az, g.res.Sources[0].Azimuth)
				}
			}
		}
	}
	if len(now) > 0 {
		ot.asRead = finiteMedian(now)
	}
	ot.asReadTrack = localTrackOff(pts, az)
	if !enu || len(gs) == 0 {
		return ot
	}
	set := o.fitSettings()
	refitOf := func(gs []*group) func(turn func([3]float64) [3]float64) refitResult {
		return func(turn func([3]float64) [3]float64) refitResult { return refitWith(gs, turn, sv, o, set) }
	}
	ot.refit = refitOf(gs)
	if len(gs) > screenGroups {
		few := make([]*group, 0, screenGroups)
		for i := range screenGroups {
			few = append(few, gs[(2*i+1)*len(gs)/(2*screenGroups)])
		}
		ot.screen = refitOf(few)
	}
	return ot
}

// refitWith fits the groups gs again with each reading's field turned by
// turn (orientTest.refit).
func refitWith(gs []*group, turn func([3]float64) [3]float64, sv *survey, o *locateOptions, set *inverse.Settings) refitResult {
	{
		var r, az, be, bn, bu []float64
		var pts [][2]float64
		for _, g := range gs {
			h := *g
			h.fields = make([][3]float64, len(g.fields))
			for i, v := range g.fields {
				h.fields[i] = turn(v)
			}
			res, err := inverse.FitLines(h.problem(false, sv.groupNoise(g, o.noise)), set)
			if err != nil {
				continue
			}
			if v := groupMisfit(&h, res); finite(v) {
				r = append(r, v)
				if v <= soundMisfit {
					be, bn, bu = append(be, res.Background[0]), append(bn, res.Background[1]), append(bu, res.Background[2])
				}
			}
			if len(res.Sources) > 0 && res.Sources[0].Kind == "line" {
				p := res.Sources[0].Point
				pts = append(pts, [2]float64{p[0], p[1]})
				az = append(az, res.Sources[0].Azimuth)
			}
		}
		nan := math.NaN()
		if len(r) == 0 {
			return refitResult{misfit: nan, trackOff: nan, background: [3]float64{nan, nan, nan}}
		}
		return refitResult{misfit: finiteMedian(r), trackOff: trackOffDeg(pts, az), background: [3]float64{finiteMedian(be), finiteMedian(bn), finiteMedian(bu)}, local: localTrackOff(pts, az)}
	}
}

// surveyLevel returns the survey's field to compare with the base's or
// the Earth's: for DC, the backgrounds of the groups whose fits are sound
// (miss by at most soundMisfit times their noise), else the corrected
// readings' median; for AC the readings'.
func (c *baseCheck) surveyLevel(sv *survey) *surveyField {
	if sv.ac {
		return c.raw
	}
	f := &surveyField{fitted: true}
	for _, g := range sv.groups {
		if g.err != nil || g.res == nil {
			continue
		}
		if r := levelMisfit(g, g.res); !(r <= soundMisfit) {
			continue
		}
		bg := g.res.Background
		if finite(bg[0]) && finite(bg[1]) && finite(bg[2]) {
			f.e, f.n, f.u = append(f.e, bg[0]), append(f.n, bg[1]), append(f.u, bg[2])
		}
	}
	if len(f.e) == 0 && c.raw != nil {
		r := *c.raw
		r.rough = true
		return &r
	}
	return f
}

// upWarning checks, without a base record, the sign of the survey's
// vertical field f against the site's hemisphere (origin: latitude,
// longitude; nil when unknown). The Earth's field dips down in the
// northern hemisphere and up in the southern, steeply (over 30°) away
// from the magnetic equator's belt (about 20° either side of the
// geographic equator, from memory of the IGRF inclination charts). An
// upside-down sensor, or a field logged north, east, down read as east,
// north, up, reverses the vertical: its lines fit as well as the true
// ones, at the wrong current and depth (a 25 A line at 1.1 m was "sound"
// at -12.5 A and 0.40 m, found in review), so the sign is the one sign
// of it.
func upWarning(f *surveyField, origin *[2]float64) string {
	if f == nil || len(f.e) == 0 {
		return ""
	}
	s := [3]float64{finiteMedian(f.e), finiteMedian(f.n), finiteMedian(f.u)}
	ns := norm(s)
	if !finite(ns) || ns < calibrate.MinEarthField || ns > calibrate.MaxEarthField {
		return ""
	}
	dip := math.Asin(-s[2]/ns) * 180 / math.Pi // positive down
	const steep, belt = 30.0, 20.0
	if math.Abs(dip) < steep {
		return ""
	}
	fix := "check how the sensor is mounted and what each field column holds: --field-axes reads them (e,s,d for a sensor mounted upside down, n,e,d for a field logged north, east, down, e,n,d for a z column of the wrong sign), and a base log beside the survey (--base) checks the whole field's direction"
	switch {
	case origin != nil && origin[0] > belt && dip < 0, origin != nil && origin[0] < -belt && dip > 0:
		hemi, want := "northern", "down"
		if origin[0] < 0 {
			hemi, want = "southern", "up"
		}
		return fmt.Sprintf("the survey's field (east %.0f, north %.0f, up %.0f nT) points %.0f° %s, but at latitude %.2f° (the %s hemisphere) the Earth's field points %s: the sensor's z axis is likely reversed (mounted upside down, or a field logged with z down read as up), and lines then fit the readings as well as the true ones at the wrong current and depth; %s",
			s[0], s[1], s[2], math.Abs(dip), map[bool]string{true: "down", false: "up"}[dip > 0], origin[0], hemi, want, fix)
	case origin == nil && dip < 0:
		return fmt.Sprintf("the survey's field (east %.0f, north %.0f, up %.0f nT) points %.0f° up, as the Earth's does only in the southern hemisphere: north of about 20° S the sensor's z axis is reversed (mounted upside down, or a field logged with z down read as up), and lines then fit the readings as well as the true ones at the wrong current and depth; %s",
			s[0], s[1], s[2], -dip, fix)
	}
	return ""
}

// trackOffDeg returns the angle, degrees in [0, 90], between the lines'
// median azimuth (az, clockwise from north, [0, 180)) and the principal
// direction of their crossing points pts (east, north, m); NaN for fewer
// than three lines or crossings spread over less than a metre.
func trackOffDeg(pts [][2]float64, az []float64) float64 {
	if len(pts) < 3 {
		return math.NaN()
	}
	_, _, see, snn, th := crossingAxis(pts)
	if see+snn < 1 {
		return math.NaN()
	}
	// th is the principal axis's angle from east; then as an azimuth.
	track := math.Mod(90-th*180/math.Pi+360, 180)
	// The azimuths' median on the half circle: doubled angles averaged.
	var c, s float64
	for _, a := range az {
		c += math.Cos(2 * a * math.Pi / 180)
		s += math.Sin(2 * a * math.Pi / 180)
	}
	mean := math.Mod(math.Atan2(s, c)*90/math.Pi+360, 180)
	d := math.Abs(math.Remainder(track-mean, 180))
	return d
}

// unseenTurnWarning returns a warning when the survey's field s is within
// the allowance of the base's b, so that no turn is seen in it, but the
// fitted lines all run off the direction through their neighbours'
// crossings by the same angle, as a sensor turned about the vertical makes
// them; "" otherwise. Where the field is steep a turn about the vertical
// moves it little: by the turn times |H|/|B| (a 6° turn by 0.7° at a dip
// of 83°, under the 1° allowed), so turns up to the allowance times
// |B|/|H| cannot be seen in it (found in review: a sensor turned 6° there
// gave currents 27 sigma low with no word).
func unseenTurnWarning(s, b [3]float64, allow float64, basePath, where string, cal *calibrate.Calibration, mountYaw float64, ot *orientTest) string {
	if ot == nil {
		return ""
	}
	lt := ot.asReadTrack
	h := math.Hypot(s[0], s[1])
	if lt.n < 4 || !(h > 0) {
		return ""
	}
	// The turn the field's direction cannot show, degrees.
	unseen := allow * norm(s) / h
	psi := -lt.signed // lines turned clockwise: readings turned anticlockwise
	if !(math.Abs(psi) >= unseenTurnMinDeg) || !(math.Abs(psi) > 4*lt.se) || !(lt.same >= 0.75) {
		return ""
	}
	// A turn the field would have shown is not what turns the lines.
	if math.Abs(psi) > 1.5*unseen {
		return ""
	}
	yawFlag := mountYaw + psi
	after := ""
	if ot.refit != nil {
		r := -psi * math.Pi / 180
		sr, cr := math.Sincos(r)
		got := ot.refit(func(v [3]float64) [3]float64 { return [3]float64{cr*v[0] - sr*v[1], sr*v[0] + cr*v[1], v[2]} })
		if !(got.misfit <= math.Max(refitGood, 1.2*ot.asRead)) || !(got.local.n >= 4 && math.Abs(got.local.signed) < 0.5*math.Abs(psi)) {
			return ""
		}
		after = fmt.Sprintf("; fitted again with the readings turned back by it, the lines run %.1f° off (median) and fit their readings to %.3g times their noise", math.Abs(got.local.signed), got.misfit)
	}
	side := "anticlockwise"
	if psi < 0 {
		side = "clockwise"
	}
	dip := math.Atan2(-s[2], h) * 180 / math.Pi
	calNote := ""
	if cal == nil {
		calNote = " (no --calibration was given: a sensor's uncorrected offsets and soft iron turn the field too, so calibrate it first unless the log is already corrected)"
	}
	return fmt.Sprintf("the survey's field is within the %.1f° of the base record's (%s, %s) that local anomalies and the distance between them allow, but at this site's dip of %.0f° a turn of the sensor about the vertical moves the field by only %.2f of the turn, so turns up to %.1f° cannot be seen in its direction. The fitted lines run %.1f° %s of the direction through their neighbours' crossings (median of %d groups, ± %.2f°; %.0f%% of them on that side), as a sensor turned %.1f° %s (seen from above) on its mount or pole makes them: currents and depths low by 1 - cos %.1f° (%.2f%%), azimuths and plan offsets turned with it. A conductor that bends or snakes between the traverses turns its lines off that direction too; if it runs straight and the magnetometer is turned on its mount%s, --mount-yaw %s turns the readings back%s. Check how the sensor is mounted and its heading reference",
		allow, basePath, where, math.Abs(dip), h/norm(s), unseen, math.Abs(psi), map[bool]string{true: "clockwise", false: "anticlockwise"}[lt.signed > 0], lt.n, lt.se, 100*lt.same,
		math.Abs(psi), side, math.Abs(psi), 100*(1-math.Cos(psi*math.Pi/180)), calNote, tenths(yawFlag), after)
}

// crossingAxis returns the centre of crossing points pts (east, north, m),
// their sums of squares about it along east and north, and the angle of
// their principal axis from east (radians).
func crossingAxis(pts [][2]float64) (me, mn, see, snn, th float64) {
	for _, p := range pts {
		me, mn = me+p[0], mn+p[1]
	}
	me, mn = me/float64(len(pts)), mn/float64(len(pts))
	var sen float64
	for _, p := range pts {
		de, dn := p[0]-me, p[1]-mn
		see, snn, sen = see+de*de, snn+dn*dn, sen+de*dn
	}
	return me, mn, see, snn, 0.5 * math.Atan2(2*sen, see-snn)
}
