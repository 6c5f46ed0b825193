package live

import "math"

// A commissioned geometry's error moves every window's predicted field:
// the window's chi-square holds, besides its readings' noise, the misfit
// of a geometry off by that error, which grows with the square of the
// current. Fitted at a small current, the geometry's error may be tiny
// against the commissioning readings' noise and large against a later
// window's, at a current a hundred times higher: the window's chi-square
// then stood far above its degrees of freedom and the window was
// "degraded", with an alarm in every window, although the error was
// already in its sigmas (CurrentSigmaGeometry) and the current right
// within them. So a window solved with a commissioned geometry is judged
// against the chi-square its noise and the geometry's stated error give
// together: DOF plus geometryChi2.

// geometryChi2 returns the chi-square the held geometry's error is
// expected to add to a window with readings in, whose chi-square with the
// geometry held is chi0: for a geometry off by a draw from its covariance
// C, E[x' H x] = tr(H C) = sum over C's principal axes of lambda_j h_j,
// h_j the chi-square's curvature along axis j, from the solves with the
// geometry moved step_j either way (central second difference,
// h_j = (chi2(+) + chi2(-) - 2 chi0) / (2 step_j^2)); with the shift's
// factor f = sqrt(lambda_j) / (2 step_j) that is 2 f^2 (chi2(+) + chi2(-)
// - 2 chi0). It returns 0 when no geometry error is held (a fixed
// geometry) or a moved solve fails.
func (p *processor) geometryChi2(in *SolveInput, chi0 float64) float64 {
	var g float64
	for _, s := range p.shifts {
		a, err := s.plus.Solve(in)
		if err != nil {
			return 0
		}
		b, err := s.minus.Solve(in)
		if err != nil {
			return 0
		}
		if d := 2 * s.f * s.f * (a.Chi2 + b.Chi2 - 2*chi0); d > 0 && !math.IsInf(d, 0) {
			g += d
		}
	}
	return g
}
