package inverse

// Status says why an iterative fit stopped.
type Status int

const (
	// StatusNone means no iteration was run (for example a linear fit).
	StatusNone Status = iota
	// ConvergedResidual: the relative reduction of the sum of squares, actual and
	// predicted, fell below Settings.FTol.
	ConvergedResidual
	// ConvergedStep: the trust region shrank below Settings.XTol relative to the scaled
	// parameters.
	ConvergedStep
	// ConvergedGradient: the residual is orthogonal to every Jacobian column to within
	// Settings.GTol.
	ConvergedGradient
	// ConvergedExact: the residual is zero.
	ConvergedExact
	// MaxIterations: the iteration limit was reached before a convergence test passed.
	MaxIterations
	// Stalled: no step reduced the sum of squares although the trust region is still
	// large; rounding errors prevent further progress.
	Stalled
	// Linear: the model was linear and solved directly (FitStrengths).
	Linear
	// NumericalFailure: the step's singular value decomposition did not
	// converge (non-finite or pathological numbers): the fit failed.
	NumericalFailure
)

// Converged reports whether s is one of the convergence statuses.
func (s Status) Converged() bool {
	switch s {
	case ConvergedResidual, ConvergedStep, ConvergedGradient, ConvergedExact, Linear:
		return true
	}
	return false
}

func (s Status) String() string {
	switch s {
	case StatusNone:
		return "not run"
	case ConvergedResidual:
		return "converged: relative reduction of the sum of squares below tolerance"
	case ConvergedStep:
		return "converged: step below tolerance"
	case ConvergedGradient:
		return "converged: gradient below tolerance"
	case ConvergedExact:
		return "converged: zero residual"
	case MaxIterations:
		return "stopped: iteration limit reached"
	case Stalled:
		return "stopped: no further reduction possible in floating point"
	case Linear:
		return "solved: linear least squares"
	case NumericalFailure:
		return "failed: the step's singular value decomposition did not converge"
	}
	return "unknown status"
}
