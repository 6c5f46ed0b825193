package live

// Estimator solves one window for the conductor currents with the
// geometry held: the fast path. NewInverseEstimator gives the one built on
// the inverse package's fixed-geometry linear solve; tests may supply
// their own.
type Estimator interface {
	Solve(in *SolveInput) (*SolveOutput, error)
}

// SolveInput is one window reduced to one reading per sensor.
type SolveInput struct {
	Points  [][3]float64    // sensor positions, m ENU
	Fields  [][3]float64    // DC: window-mean field, nT ENU
	Phasors [][3]complex128 // AC: complex RMS field, nT ENU
	// Sigma is the one-sigma error of one reading component, nT; 0 means
	// estimate it from the residuals.
	Sigma float64
	// Sigmas, when not nil, gives each reading's own one-sigma error per
	// component, nT (the service sets it with Sigma, from each sensor's
	// sample count); an estimator should weight the readings by it.
	Sigmas []float64
	// WindowSigma, for commissioning (where the readings are means over
	// many windows), is one window's reading noise, nT: a commissioned
	// geometry should miss the mean readings by much less, or every
	// window's fit would be degraded. 0: not known.
	WindowSigma float64
}

// SolveOutput holds the strengths in the order of the conductors.
// without returns in with its k-th sensor's entries (point, field or
// phasor, sigma) left out, the rest shared with in; Sigma and WindowSigma
// are kept, and Sigmas dropped when they do not cover every sensor.
func (in *SolveInput) without(k int) SolveInput {
	out := SolveInput{Sigma: in.Sigma, WindowSigma: in.WindowSigma}
	for i := range in.Points {
		if i == k {
			continue
		}
		out.Points = append(out.Points, in.Points[i])
		if i < len(in.Fields) {
			out.Fields = append(out.Fields, in.Fields[i])
		}
		if i < len(in.Phasors) {
			out.Phasors = append(out.Phasors, in.Phasors[i])
		}
		if i < len(in.Sigmas) {
			out.Sigmas = append(out.Sigmas, in.Sigmas[i])
		}
	}
	if len(out.Sigmas) != len(out.Points) {
		out.Sigmas = nil
	}
	return out
}

type SolveOutput struct {
	Current, CurrentSigma []float64 // A
	// CurrentCov is the covariance of Current, A^2, in conductor order
	// (its diagonal CurrentSigma squared); nil when the estimator does
	// not give it. For AC it is the RMS magnitudes' (see
	// magnitudeCovariance).
	CurrentCov        [][]float64
	Phase, PhaseSigma []float64 // degrees (AC), nil for DC
	Background        *[3]float64
	RMS, Chi2         float64
	DOF               int
}

// Commissioner fits the conductor geometry from commissioning data (the
// mean readings of the first minutes). stated are the site file's
// conductors of the asset (their names, and where given their rough
// point and direction); the result should hold one conductor per stated
// one, named after it (none stated: as many as the data show).
type Commissioner interface {
	Commission(in *SolveInput, stated []ConductorConfig) ([]ConductorConfig, error)
}

// NewEstimatorFunc builds an Estimator for a geometry.
type NewEstimatorFunc func(mode string, conductors []ConductorConfig) (Estimator, error)
