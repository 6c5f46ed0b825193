package live

import (
	"fmt"
	"math"
	"math/cmplx"

	"undercurrent/inverse"
)

func init() {
	defaultEstimator = NewInverseEstimator
	defaultCommissioner = InverseCommissioner{}
}

// inverseEstimator is the fast path: the inverse package's fixed-geometry
// linear least squares (FitStrengths) with a uniform background.
type inverseEstimator struct {
	sources []inverse.Source
}

// NewInverseEstimator returns the Estimator built on inverse.FitStrengths
// for the conductors: a "line" is an inverse.Line, a "segment" an
// inverse.Segment; a uniform background is fitted with the currents.
func NewInverseEstimator(mode string, conds []ConductorConfig) (Estimator, error) {
	if len(conds) == 0 {
		return nil, fmt.Errorf("no conductors")
	}
	e := &inverseEstimator{}
	for _, c := range conds {
		switch c.Kind {
		case "", "line":
			e.sources = append(e.sources, inverse.Line{Point: c.Point, Dir: c.Direction})
		case "segment":
			e.sources = append(e.sources, inverse.Segment{A: c.From, B: c.To})
		default:
			return nil, fmt.Errorf("conductor %q: kind %q", c.Name, c.Kind)
		}
	}
	return e, nil
}

// Solve runs FitStrengths. For AC the current is the magnitude of the
// strength phasor (RMS) and the phase its argument; the phase sigma is
// sigma_I/|I| radians to first order.
func (e *inverseEstimator) Solve(in *SolveInput) (*SolveOutput, error) {
	p := &inverse.Problem{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors, Sigma: in.Sigma}
	res, err := inverse.FitStrengths(p, e.sources, nil)
	if err != nil {
		return nil, err
	}
	out := &SolveOutput{RMS: res.RMS, Chi2: res.Chi2, DOF: res.DOF}
	n := len(e.sources)
	out.CurrentSigma = append([]float64(nil), res.StrengthSigmas[:n]...)
	if in.Phasors != nil {
		for i := range n {
			z := res.StrengthPhasors[i]
			mag := cmplx.Abs(z)
			out.Current = append(out.Current, mag)
			out.Phase = append(out.Phase, cmplx.Phase(z)*180/math.Pi)
			ps := 180.0
			if mag > 0 {
				ps = math.Min(180, res.StrengthSigmas[i]/mag*180/math.Pi)
			}
			out.PhaseSigma = append(out.PhaseSigma, ps)
		}
	} else {
		out.Current = append([]float64(nil), res.Strengths[:n]...)
		bg := res.Background
		out.Background = &bg
	}
	return out, nil
}

// InverseCommissioner fits infinite lines with inverse.FitLines to the
// commissioning readings.
type InverseCommissioner struct{}

// Commission fits count lines (0: chosen by BIC) and returns them as
// conductors named c1, c2, ... strongest first.
func (InverseCommissioner) Commission(in *SolveInput, count int) ([]ConductorConfig, error) {
	p := &inverse.Problem{Points: in.Points, Fields: in.Fields, Phasors: in.Phasors, Sigma: in.Sigma}
	res, err := inverse.FitLines(p, &inverse.Settings{Count: count})
	if err != nil {
		return nil, err
	}
	var out []ConductorConfig
	for i, s := range res.Sources {
		out = append(out, ConductorConfig{Name: fmt.Sprintf("c%d", i+1), Kind: "line", Point: s.Point, Direction: s.Dir})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("the fit found no conductor")
	}
	return out, nil
}
