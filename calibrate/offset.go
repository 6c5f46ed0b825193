package calibrate

import (
	"errors"
	"fmt"
	"math"
	"strings"
)

// OffsetResult is an offset estimate from the flip or zero-field method.
type OffsetResult struct {
	// Offset is the estimated sensor offset, nT; components not determined
	// by the method are zero.
	Offset [3]float64
	// Sigma is the standard error of each determined component, nT.
	Sigma [3]float64
	// Determined says which components the method fixes.
	Determined [3]bool
	// N is the number of readings used (for the flip method, per position).
	N [2]int
	// Scatter is the part of Sigma from the readings' scatter alone, nT;
	// for the flip method Sigma also takes in Coupling.
	Scatter [3]float64
	// Coupling is, for the flip method, the allowance in Sigma for the
	// sensor's cross-axis coupling of the flip axis into the axes turned
	// (FlipCouplingAllowance of the reading along the flip axis), nT:
	// flips alone cannot tell it from the offset. FlipAxisField is that
	// reading: the field along the flip axis plus that axis's own offset,
	// which a flip does not give.
	Coupling      [3]float64
	FlipAxisField float64
	// Warnings say what the caller should show.
	Warnings []string
	// Notes say how the result was reached (for the calibration file).
	Notes []string
}

// Tolerances of the flip method's sanity checks, as fractions of the field
// magnitude F seen by the sensor (the larger of |mean(r0)| and
// |mean(r180)|).
const (
	// FlipAxisTolerance bounds how differently the axis turned about may
	// read in the two logs. A turn axis misaligned by δ moves that axis
	// by up to 2δ·F, and the field drifts by tens of nT between the logs:
	// 5% allows δ up to about 1.4°, while turning about another axis
	// changes it by twice its field component, typically 10 000 nT or more.
	FlipAxisTolerance = 0.05
	// FlipSameTolerance is the difference below which the axes across the
	// turn axis count as reading the same in both logs: a flip changes
	// their sign, so they differ by twice the horizontal field (for a turn
	// about the vertical), some 40 000 nT outside the polar regions.
	FlipSameTolerance = 0.02
	// FlipMaxOffset is the largest offset, as a fraction of F, taken as a
	// sensor offset. An axis that was not flipped yields its field
	// component plus the offset, typically 20 000 to 50 000 nT.
	FlipMaxOffset = 0.5
	// FlipCouplingAllowance is the cross-axis coupling allowed for in a
	// flip offset's standard error, as a fraction of the field along the
	// flip axis. A reading is r = M B + o, with M the sensor's soft-iron,
	// scale and non-orthogonality matrix; a half turn about z changes the
	// sign of Bx and By but not of Bz, so the mean of the two logs is
	// o + M[:,z] Bz: the off-diagonal terms M_xz and M_yz times the field
	// along the flip axis stay in the "offset", and so does the field
	// along the flip axis times the angle by which the turn axis misses
	// the sensor's axis. Both are commonly of the order of 1%: the
	// Kestrel Moor sensor's soft iron has off-diagonal terms of 0.008 to
	// 0.015 (testdata/scenarios/kestrel-moor-spin.toml), and a turn axis
	// 0.5 to 1 degree off, as by hand, is 0.009 to 0.017 (the 1% is an
	// order of magnitude from those, not a measured property of any
	// sensor). About a vertical axis that is some 450 nT.
	FlipCouplingAllowance = 0.01
	// FlipAxisWarnFraction is the field along the flip axis, as a fraction
	// of the field magnitude, above which the flip offset gets a warning
	// that the coupling term may dominate it.
	FlipAxisWarnFraction = 0.1
)

// FlipOffset estimates the offsets of the two axes perpendicular to axis
// (0 = x, 1 = y, 2 = z) from readings taken with the sensor at 0 and at 180
// degrees of rotation about that axis in a steady field (observatory
// practice for fluxgates, DOMAIN.md): those components change sign, so
//
//	offset = (mean(r0) + mean(r180)) / 2.
//
// The component along axis keeps its sign and is not determined.
//
// Flips alone cannot separate the offset from the sensor's cross-axis
// coupling of the flip axis into the two others (see
// FlipCouplingAllowance): each offset's Sigma takes in an allowance of
// FlipCouplingAllowance times the field along the flip axis besides the
// readings' scatter (Scatter), a note says so, and when that field is more
// than FlipAxisWarnFraction of the field magnitude a warning says how much
// each 0.1% of coupling adds and advises flipping about an axis at right
// angles to the field (where the term vanishes) or the spin calibration,
// which fits the coupling.
//
// The logs are checked against what a flip does, and refused with an error
// saying what is wrong when axis reads differently (by more than
// FlipAxisTolerance of the field: the sensor was turned about another
// axis, named when the two others changed sign), when the two
// perpendicular axes both read the same in the two logs (within
// FlipSameTolerance of the field, or six times the readings' scatter: the
// logs were not flipped, or one log was given twice), or when an offset
// comes out larger than FlipMaxOffset of the field.
func FlipOffset(r0, r180 [][3]float64, axis int) (*OffsetResult, error) {
	if axis < 0 || axis > 2 {
		return nil, fmt.Errorf("calibrate: flip: axis %d, want 0, 1 or 2", axis)
	}
	m0, s0, err := meanStd(r0, "0 degree")
	if err != nil {
		return nil, err
	}
	m1, s1, err := meanStd(r180, "180 degree")
	if err != nil {
		return nil, err
	}
	res := &OffsetResult{N: [2]int{len(r0), len(r180)}}
	for k := 0; k < 3; k++ {
		if k == axis {
			continue
		}
		res.Determined[k] = true
		res.Offset[k] = 0.5 * (m0[k] + m1[k])
		res.Scatter[k] = 0.5 * math.Sqrt(s0[k]*s0[k]/float64(len(r0))+s1[k]*s1[k]/float64(len(r180)))
	}
	if err := checkFlip(m0, m1, s0, s1, axis, res); err != nil {
		return nil, err
	}
	// The reading along the flip axis, the same in both logs: the field
	// there plus that axis's own offset, which a flip does not give (nor
	// anything else in the two logs), so the allowance and the warning
	// below use the reading. Held at right angles to the field, the axis
	// reads its offset alone, and the allowance is then larger than the
	// coupling term (which acts on the field, not on the offset).
	ba := 0.5 * (m0[axis] + m1[axis])
	res.FlipAxisField = ba
	name := string("xyz"[axis])
	a, b := (axis+1)%3, (axis+2)%3
	if a > b {
		a, b = b, a
	}
	// The field across the flip axis, which the flip does measure (half
	// the change of the two axes turned, free of their offsets), and the
	// field magnitude from it and the reading along the axis: not the
	// mean readings' magnitude, which holds the offsets of all three.
	across := 0.5 * math.Hypot(m0[a]-m1[a], m0[b]-m1[b])
	f := math.Hypot(across, ba)
	for k := range 3 {
		if !res.Determined[k] {
			continue
		}
		res.Coupling[k] = FlipCouplingAllowance * math.Abs(ba)
		res.Sigma[k] = math.Hypot(res.Scatter[k], res.Coupling[k])
	}
	res.Notes = append(res.Notes, fmt.Sprintf("the offsets' standard errors take in %.0f nT for cross-axis coupling (%.0f%% of the %.0f nT reading along the flip axis %s: its field, which a coupling of %s into %s and %s leaves in their offsets (soft iron, axes not at right angles, a turn axis off the sensor's), plus %s's own offset, which a flip does not give; the field across %s is %.0f nT) besides the readings' scatter of ± %.2g, %.2g nT; flips alone cannot tell that coupling from an offset",
		FlipCouplingAllowance*math.Abs(ba), 100*FlipCouplingAllowance, ba, name, name, string("xyz"[a]), string("xyz"[b]), name, name, across, res.Scatter[a], res.Scatter[b]))
	if math.Abs(ba) > FlipAxisWarnFraction*f {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the reading along the flip axis %s is %.0f nT (%.0f%% of the %.0f nT field it and the %.0f nT across %s make), its field plus %s's own offset, which a flip does not give: as far as it is field, a coupling of %s into %s and %s of only 0.1%% (soft iron, axes not at right angles, or the turn axis 0.06 degrees off the sensor's) adds %.0f nT to their offsets, and flips alone cannot tell it from the offset (the spread allowed, ± %.0f nT, is for 1%%); flip about an axis held at right angles to the field (horizontal, pointing magnetic east or west), where that term vanishes (if %s was so held, the reading is mostly its offset and the allowance larger than need be), or calibrate with --spin, which fits the coupling and every offset",
			name, ba, 100*math.Abs(ba)/f, f, across, name, name, name, string("xyz"[a]), string("xyz"[b]), 0.001*math.Abs(ba), FlipCouplingAllowance*math.Abs(ba), name))
	}
	return res, nil
}

// checkFlip refuses flip logs that do not look flipped about axis (see
// FlipOffset).
func checkFlip(m0, m1, s0, s1 [3]float64, axis int, res *OffsetResult) error {
	name := func(k int) string { return string("xyz"[k]) }
	f := math.Max(norm3(m0), norm3(m1))
	a, b := (axis+1)%3, (axis+2)%3
	if a > b {
		a, b = b, a
	}
	diff := func(k int) float64 { return m1[k] - m0[k] }
	same := func(k int) bool {
		scatter := math.Sqrt(s0[k]*s0[k] + s1[k]*s1[k])
		return math.Abs(diff(k)) < math.Max(FlipSameTolerance*f, 6*scatter)
	}
	// The flip axis first: turned about another axis, the logs differ
	// most on it, while one axis across it may read little and so look
	// "the same" in both.
	if d := diff(axis); math.Abs(d) > FlipAxisTolerance*f {
		msg := fmt.Sprintf("calibrate: flip: the flip axis %s reads %.0f nT differently in the two logs (means %.0f and %.0f nT), where a turn about %s leaves it unchanged: was the sensor turned about %s, with that axis held in line?",
			name(axis), math.Abs(d), m0[axis], m1[axis], name(axis), name(axis))
		// Which axis was the sensor turned about? The one that reads the
		// same in both logs while the two others changed sign (each
		// nearer to its negative than to itself); of several, the one
		// that explains the means best.
		best, bestMiss := -1, math.Inf(1)
		for _, k := range []int{a, b} {
			if math.Abs(diff(k)) > FlipAxisTolerance*f {
				continue
			}
			miss := math.Abs(diff(k))
			for j := 0; j < 3; j++ {
				if j == k {
					continue
				}
				if math.Abs(m0[j]+m1[j]) >= math.Abs(diff(j)) {
					miss = math.Inf(1)
				}
				miss += math.Abs(m0[j] + m1[j])
			}
			if miss < bestMiss {
				best, bestMiss = k, miss
			}
		}
		if best >= 0 {
			var turned []string
			for j := 0; j < 3; j++ {
				if j != best {
					turned = append(turned, fmt.Sprintf("%s from %.0f to %.0f nT", name(j), m0[j], m1[j]))
				}
			}
			msg += fmt.Sprintf(" (%s reads the same in both: a turn about %s?) %s changed sign, as a turn of 180 degrees about %s makes them: if so, give %s as the flip axis (calibrate --flip-axis %s)",
				name(best), name(best), strings.Join(turned, " and "), name(best), name(best), name(best))
		} else {
			for _, k := range []int{a, b} {
				if math.Abs(diff(k)) <= FlipAxisTolerance*f {
					msg += fmt.Sprintf(" (%s reads the same in both: a turn about %s?)", name(k), name(k))
				}
			}
		}
		return errors.New(msg)
	}
	if same(a) && same(b) {
		return fmt.Errorf("calibrate: flip: the two logs read the same on %s and %s (means differ by %.0f and %.0f nT in a %.0f nT field), and on %s, where a turn of 180 degrees about %s changes the sign of %s and %s: were they flipped, or is one log given twice?",
			name(a), name(b), diff(a), diff(b), f, name(axis), name(axis), name(a), name(b))
	}
	for _, k := range []int{a, b} {
		if o := res.Offset[k]; math.Abs(o) > FlipMaxOffset*f {
			msg := fmt.Sprintf("calibrate: flip: the offset found on %s, %.0f nT, is %.0f%% of the %.0f nT field, too large for a sensor offset: an axis that is not flipped reads its field component; were the two logs turned 180 degrees about %s?",
				name(k), o, 100*math.Abs(o)/f, f, name(axis))
			if same(k) {
				msg += fmt.Sprintf(" (%s reads the same in both: a turn about %s?)", name(k), name(k))
			}
			return errors.New(msg)
		}
	}
	return nil
}

// Limits of the zero-field method's check on the mean reading's magnitude,
// nT. A shield leaves a residual field of a few nT to some tens of nT, and
// a sensor's own offset is typically below a few hundred nT, while the
// Earth's main field is about 22 000 nT (South Atlantic) to 67 000 nT (near
// the south magnetic pole) at the surface (IGRF).
const (
	// ZeroWarnField is the magnitude above which the zero offset gets a
	// warning: large for a sensor offset plus what a shield lets through.
	ZeroWarnField = 1000.0
	// ZeroMaxField is the magnitude above which a zero-field log is
	// refused: half the weakest Earth field, so a log taken outside the
	// shield, or in one left open, cannot pass as a sensor offset.
	ZeroMaxField = 11000.0
)

// ZeroOffset estimates all three offsets as the mean of readings taken in
// zero field (inside a magnetic shield). A mean reading of magnitude above
// ZeroMaxField is refused, and one above ZeroWarnField gets a warning: the
// log was probably not taken in zero field.
func ZeroOffset(r [][3]float64) (*OffsetResult, error) {
	m, s, err := meanStd(r, "zero-field")
	if err != nil {
		return nil, err
	}
	res := &OffsetResult{Offset: m, Determined: [3]bool{true, true, true}, N: [2]int{len(r), 0}}
	for k := 0; k < 3; k++ {
		res.Sigma[k] = s[k] / math.Sqrt(float64(len(r)))
	}
	f := norm3(m)
	switch {
	case f > ZeroMaxField:
		return nil, fmt.Errorf("calibrate: zero: the log reads a field of %.0f nT (mean %.0f, %.0f, %.0f nT), as outside a shield: a zero-field log is taken with the sensor inside a closed magnetic shield, where it reads only its offset (at most a few hundred nT); at more than %.0f nT this is not an offset (the Earth's field is 22 000 to 67 000 nT)",
			f, m[0], m[1], m[2], ZeroMaxField)
	case f > ZeroWarnField:
		res.Warnings = append(res.Warnings, fmt.Sprintf("the zero-field log reads %.0f nT (mean %.0f, %.0f, %.0f nT), large for a sensor offset (typically a few hundred nT at most) plus what a closed shield lets through: was the shield closed, and the sensor far from steel inside it?",
			f, m[0], m[1], m[2]))
	}
	return res, nil
}

func meanStd(r [][3]float64, what string) (m, s [3]float64, err error) {
	if len(r) == 0 {
		return m, s, fmt.Errorf("calibrate: %s log has no readings", what)
	}
	for i, v := range r {
		for k := 0; k < 3; k++ {
			if math.IsNaN(v[k]) || math.IsInf(v[k], 0) {
				return m, s, fmt.Errorf("calibrate: %s log: reading %d: component %d is %g", what, i, k, v[k])
			}
			m[k] += v[k]
		}
	}
	n := float64(len(r))
	for k := range m {
		m[k] /= n
	}
	if len(r) > 1 {
		for _, v := range r {
			for k := 0; k < 3; k++ {
				d := v[k] - m[k]
				s[k] += d * d
			}
		}
		for k := range s {
			s[k] = math.Sqrt(s[k] / (n - 1))
		}
	}
	return m, s, nil
}
