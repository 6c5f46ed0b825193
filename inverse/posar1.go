package inverse

import "math"

// Position errors that wander (a receiver's fix drifting slowly, as
// satellite positions do over seconds) are not independent from reading to
// reading: each reading's misfit is still the field's gradient times a
// displacement of about the stated size, but the displacement of one
// reading is nearly that of the next. The weighted fit (positionWeights)
// takes the displacement's variance; positionAR1 takes its correlation
// along the traverse, as an AR(1) series per axis,
//
//	r_i = G_i u_i + e_i,   u_i = rho u_(i-1) + sqrt(1 - rho^2) w_i
//
// (r_i the reading's three residuals, G_i the model's gradient times the
// sigmas taken, u_i the displacement in units of them, w_i and e_i white,
// e_i of the noise's and the curvature's variance), by the likelihood of a
// Kalman filter along each traverse over a grid of rho (the filter's
// innovations are independent with the covariance it predicts when the
// model holds: e.g. Harvey, Forecasting, Structural Time Series Models and
// the Kalman Filter, 1989, on the prediction-error decomposition; from
// memory). A conductor, a bend or an object left out of the model leaves
// residuals that no displacement of the stated size explains: where the
// gradient is small (far from the line) or where they do not follow it,
// the innovations stay large and smooth (positionsRefused).

// posAR1Grid is the number of values of 1 - rho, log-spaced from 1 to
// 10^-posAR1Decades, that positionAR1 tries beside rho = 0.
const posAR1Grid, posAR1Decades = 31, 3.0

// posAR1Chi2 is the least rise of twice the log-likelihood, from rho = 0
// to the rho found, for positionAR1 to take the displacements as
// correlated: the chi-square of one degree of freedom at p = 0.001
// (10.83, from tables; common practice for a likelihood-ratio test, the
// grid's search making it somewhat less strict than that).
const posAR1Chi2 = 10.83

// positionAR1 returns the lag-1 correlation rho of the displacements
// (per reading, within each traverse of readings starting at starts) that
// best explains the residuals res of a DC fit (3 per reading) as the
// gradient's shares grad (per row, east, north, up, each the gradient
// times the displacement's sigma) times an AR(1) displacement, beside
// white noise of variance s2 + curv (per row), and the filter's
// innovations at that rho, each whitened by its predicted covariance and
// times sqrt(s2) (nT, independent of unit variance times s2 when the model
// holds). ok is false when the sizes do not match.
func positionAR1(res []float64, grad [][3]float64, curv []float64, s2 float64, starts []int) (rho float64, innov []float64, ok bool) {
	if len(res)%3 != 0 || len(grad) != len(res) || len(curv) != len(res) || !(s2 > 0) {
		return 0, nil, false
	}
	best := math.Inf(-1)
	try := func(r float64) {
		if ll := posAR1Filter(res, grad, curv, s2, starts, r, nil); ll > best {
			best, rho = ll, r
		}
	}
	try(0)
	white := best
	for k := range posAR1Grid {
		try(1 - math.Pow(10, -posAR1Decades*float64(k)/float64(posAR1Grid-1)))
	}
	if !(2*(best-white) > posAR1Chi2) {
		// Not told from independent displacements.
		rho = 0
	}
	innov = make([]float64, len(res))
	posAR1Filter(res, grad, curv, s2, starts, rho, innov)
	return rho, innov, true
}

// posAR1Filter runs the Kalman filter of positionAR1 at rho and returns
// its log-likelihood (less the constant); with innov non-nil it writes
// the whitened innovations there.
func posAR1Filter(res []float64, grad [][3]float64, curv []float64, s2 float64, starts []int, rho float64, innov []float64) float64 {
	n := len(res) / 3
	ll := 0.0
	var u [3]float64
	var p [3][3]float64
	q := 1 - rho*rho
	next := 0
	for i := range n {
		if next < len(starts) && starts[next] == i || i == 0 {
			// A traverse begins: the displacement at its stationary law.
			for next < len(starts) && starts[next] <= i {
				next++
			}
			u, p = [3]float64{}, [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
		} else {
			for a := range 3 {
				u[a] *= rho
				for b := range 3 {
					p[a][b] *= rho * rho
				}
				p[a][a] += q
			}
		}
		// H: the reading's three rows of grad; S = H P H^T + R.
		var h [3][3]float64
		for r := range 3 {
			h[r] = grad[3*i+r]
		}
		var hp [3][3]float64 // H P
		for r := range 3 {
			for b := range 3 {
				for a := range 3 {
					hp[r][b] += h[r][a] * p[a][b]
				}
			}
		}
		var s [3][3]float64
		var v [3]float64
		for r := range 3 {
			for c := range 3 {
				for a := range 3 {
					s[r][c] += hp[r][a] * h[c][a]
				}
			}
			s[r][r] += s2 + curv[3*i+r]
			v[r] = res[3*i+r] - (h[r][0]*u[0] + h[r][1]*u[1] + h[r][2]*u[2])
		}
		l, ok := chol3(s)
		if !ok {
			return math.Inf(-1)
		}
		// z = L^-1 v; the likelihood's terms |z|^2 and log det S.
		var z [3]float64
		for r := range 3 {
			t := v[r]
			for c := range r {
				t -= l[r][c] * z[c]
			}
			z[r] = t / l[r][r]
			ll -= 0.5*z[r]*z[r] + math.Log(l[r][r])
		}
		if innov != nil {
			for r := range 3 {
				innov[3*i+r] = z[r] * math.Sqrt(s2)
			}
		}
		// K = P H^T S^-1 (3 x 3): solve S K^T = H P.
		var kt [3][3]float64 // K^T, rows by observation
		for b := range 3 {
			col := [3]float64{hp[0][b], hp[1][b], hp[2][b]}
			x := cholSolve3(l, col)
			for r := range 3 {
				kt[r][b] = x[r]
			}
		}
		for a := range 3 {
			for r := range 3 {
				u[a] += kt[r][a] * v[r]
			}
		}
		// P -= K H P.
		var np [3][3]float64
		for a := range 3 {
			for b := range 3 {
				t := p[a][b]
				for r := range 3 {
					t -= kt[r][a] * hp[r][b]
				}
				np[a][b] = t
			}
		}
		for a := range 3 {
			for b := range 3 {
				p[a][b] = (np[a][b] + np[b][a]) / 2
			}
		}
	}
	return ll
}

// chol3 returns the lower Cholesky factor of the symmetric 3 x 3 s.
func chol3(s [3][3]float64) (l [3][3]float64, ok bool) {
	for i := range 3 {
		for j := 0; j <= i; j++ {
			t := s[i][j]
			for k := range j {
				t -= l[i][k] * l[j][k]
			}
			if i == j {
				if !(t > 0) {
					return l, false
				}
				l[i][i] = math.Sqrt(t)
			} else {
				l[i][j] = t / l[j][j]
			}
		}
	}
	return l, true
}

// cholSolve3 solves L L^T x = b.
func cholSolve3(l [3][3]float64, b [3]float64) [3]float64 {
	var y, x [3]float64
	for i := range 3 {
		t := b[i]
		for k := range i {
			t -= l[i][k] * y[k]
		}
		y[i] = t / l[i][i]
	}
	for i := 2; i >= 0; i-- {
		t := y[i]
		for k := i + 1; k < 3; k++ {
			t -= l[k][i] * x[k]
		}
		x[i] = t / l[i][i]
	}
	return x
}
