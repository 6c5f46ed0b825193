package route

import (
	"fmt"
	"math"
)

// Settings tunes Build. A nil *Settings or a zero field takes the default
// given beside it.
type Settings struct {
	// StepK is the number of standard deviations a change in current
	// must exceed, after removing the smooth trend, to be reported as a
	// step. Zero means 3.
	StepK float64
	// MinStep is the smallest change in current reported as a step, as a
	// fraction of the larger of the levels either side. A significant
	// change below it is reported as information (KindCurrentChange), not
	// as current leaving or joining: the straight-line model misses a
	// conductor that changes depth or bends within a few depths of a
	// traverse, and the currents fitted there are off by a per cent or so,
	// a bias the fits' sigmas do not carry and one that neighbouring
	// stations share, so that it passes the step test. Zero means 0.02; a
	// negative value reports every significant change as a step.
	MinStep float64
	// TrendWindow is the number of neighbouring intervals on each side
	// whose median gradient is taken as the smooth trend that is not a
	// step. Zero means 2; a negative value disables the trend so that
	// raw differences are tested.
	TrendWindow int
	// MinCover is the minimum depth of cover, m. Zero disables the cover
	// check: no single value is law (see the package documentation).
	MinCover float64
	// CoverCode names the code or practice MinCover comes from
	// ("NEC Table 300.5"), quoted in findings; empty when the user named
	// none.
	CoverCode string
	// SensorHeight is the height of the depth reference above ground, m:
	// cover = depth - SensorHeight. Zero when depths are already below
	// ground (say so with DepthsBelowGround) or the ground is not known.
	SensorHeight float64
	// DepthsBelowGround is true when the stations' depths are already
	// below ground (SensorHeight is then zero). Findings give a depth below
	// ground when the ground is known: SensorHeight > 0, DepthsBelowGround,
	// or MinCover > 0 (checking cover against a minimum takes the ground
	// to be SensorHeight below the depth reference). Otherwise they give
	// it below the sensors and say that the ground level was not given: a
	// depth below the sensors read as one below ground would send a crew
	// digging deeper than the object lies.
	DepthsBelowGround bool
	// GroundSigma is the one-sigma uncertainty, m, of the ground level
	// relative to the depth reference: how well the sensors' height above
	// the ground is known as they were carried, ground undulation between
	// readings. It is added in quadrature to every station's depth sigma
	// for the cover check and the cover reported. The fits' sigmas cover
	// the reading noise only, which at a metre's depth and a strong signal
	// can be a fraction of a millimetre; zero leaves them so.
	GroundSigma float64
	// CoverK is the number of standard deviations used to call shallow
	// cover certain: a station whose cover + CoverK*sigma is still below
	// MinCover is a warning, otherwise a caution. Zero means 2.
	CoverK float64
	// MaxReducedChi2 flags stations whose Chi2/DOF exceeds it. Zero means
	// 4; a negative value disables the check.
	MaxReducedChi2 float64
	// MinorMisfit is the largest RMS residual, as a fraction of the
	// station's Signal, at which a fit that fails MaxReducedChi2 is still
	// reported as information rather than a caution: the straight-line
	// model is only approximate there (a bend, a change of depth): the
	// estimates can be off by about ModelErrFactor times that fraction
	// (the misfit shows only the part of the model's error the line could
	// not take up), which the station's widened sigmas count (modelDoubt).
	// Zero means 0.01; a negative
	// value makes every such fit a caution.
	MinorMisfit float64
}

// check refuses settings outside the ranges their documentation gives:
// a NaN or infinite value in any field, and a negative StepK, CoverK,
// MinCover, SensorHeight or GroundSigma, whose zero alone has a meaning
// (the default, or no check). Before, these were taken without a word: a
// NaN or infinite StepK dropped every step in current (a clean 1 A fault
// on 5 A gave no finding), and a NaN GroundSigma called every station's
// cover shallow.
func (s *Settings) check() error {
	if s == nil {
		return nil
	}
	for _, f := range []struct {
		name     string
		v        float64
		positive bool // zero or more
		want     string
	}{
		{"StepK", s.StepK, true, "a number of standard deviations, 0 for 3"},
		{"MinStep", s.MinStep, false, "a fraction of the current, 0 for 0.02, negative for every significant change"},
		{"MinCover", s.MinCover, true, "a depth in metres, 0 for no check"},
		{"SensorHeight", s.SensorHeight, true, "a height in metres, 0 when not known"},
		{"GroundSigma", s.GroundSigma, true, "a length in metres"},
		{"CoverK", s.CoverK, true, "a number of standard deviations, 0 for 2"},
		{"MaxReducedChi2", s.MaxReducedChi2, false, "a ratio, 0 for 4, negative for no check"},
		{"MinorMisfit", s.MinorMisfit, false, "a fraction of the signal, 0 for 0.01"},
	} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) || f.positive && f.v < 0 {
			return fmt.Errorf("route: Settings.%s is %v, want %s", f.name, f.v, f.want)
		}
	}
	return nil
}

func (s *Settings) minorMisfit() float64 {
	if s == nil || s.MinorMisfit == 0 {
		return 0.01
	}
	return s.MinorMisfit
}

func (s *Settings) stepK() float64 {
	if s == nil || s.StepK <= 0 {
		return 3
	}
	return s.StepK
}

func (s *Settings) minStep() float64 {
	if s == nil || s.MinStep == 0 {
		return 0.02
	}
	return max(s.MinStep, 0)
}

func (s *Settings) trendWindow() int {
	if s == nil || s.TrendWindow == 0 {
		return 2
	}
	if s.TrendWindow < 0 {
		return 0
	}
	return s.TrendWindow
}

func (s *Settings) coverK() float64 {
	if s == nil || s.CoverK <= 0 {
		return 2
	}
	return s.CoverK
}

func (s *Settings) maxReducedChi2() float64 {
	if s == nil || s.MaxReducedChi2 == 0 {
		return 4
	}
	return s.MaxReducedChi2
}

// groundKnown reports whether depths can be given below ground (see
// DepthsBelowGround).
func (s *Settings) groundKnown() bool {
	return s != nil && (s.SensorHeight > 0 || s.DepthsBelowGround || s.MinCover > 0)
}

// sensorHeight is SensorHeight, zero for a nil s.
func (s *Settings) sensorHeight() float64 {
	if s == nil {
		return 0
	}
	return s.SensorHeight
}

// groundSigma is GroundSigma, zero for a nil s.
func (s *Settings) groundSigma() float64 {
	if s == nil {
		return 0
	}
	return s.GroundSigma
}

// cover converts a depth below the depth reference and its sigma into the
// depth below ground (depth - SensorHeight) and its sigma, with
// GroundSigma added in quadrature.
func (s *Settings) cover(depth, sigma float64) (c, sc float64) {
	return depth - s.sensorHeight(), math.Hypot(sigma, s.groundSigma())
}

// depthText formats a depth below the depth reference, with its sigma, for
// a message, naming what it is measured from: "0.607 ± 0.020 m below
// ground" when the ground is known, else "0.907 ± 0.003 m below the
// sensors (ground level not given)".
func (s *Settings) depthText(depth, sigma float64) string {
	if s.groundKnown() {
		c, sc := s.cover(depth, sigma)
		return pm(c, sc) + " m below ground"
	}
	return pm(depth, sigma) + " m below the sensors (ground level not given)"
}

// depthValues names a depth below the depth reference for a finding's
// values: the depth below ground when the ground is known, and the depth
// below the sensors when that is what was measured.
func (s *Settings) depthValues(depth, sigma float64) []Value {
	if !s.groundKnown() {
		return []Value{{Name: "depth below sensors", Value: depth, Sigma: sigma, Unit: "m"}}
	}
	c, sc := s.cover(depth, sigma)
	out := []Value{{Name: "depth below ground", Value: c, Sigma: sc, Unit: "m"}}
	if s.SensorHeight > 0 {
		out = append(out, Value{Name: "depth below sensors", Value: depth, Sigma: sigma, Unit: "m"})
	}
	return out
}
