package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestResidualAR1 checks the lag-1 autocorrelation against series of known
// correlation: x_i = rho x_{i-1} + e_i has lag-1 autocorrelation rho (the
// AR(1) process; common practice in time-series analysis). 3 axes of 2,000
// readings give a standard error near sqrt((1 - rho^2)/6000), under 0.013.
func TestResidualAR1(t *testing.T) {
	for _, rho := range []float64{0, 0.5, 0.9} {
		rng := rand.New(rand.NewPCG(7, uint64(rho*10)))
		r := &Result{Residuals: make([][3]float64, 2000)}
		var prev [3]float64
		for i := range r.Residuals {
			for a := range 3 {
				prev[a] = rho*prev[a] + rng.NormFloat64()
			}
			r.Residuals[i] = prev
		}
		if got := ResidualAR1(r); math.Abs(got-rho) > 4*math.Sqrt((1-rho*rho)/6000)+0.005 {
			t.Errorf("rho %.1f: estimated %.4f", rho, got)
		}
	}
}

// TestAR1Factor checks the variance factor (1 + rho)/(1 - rho) of the mean
// of an AR(1) series (from memory) by simulation: the variance of the mean
// of 400 values with rho = 0.8 over 2,000 series, against the white
// variance 1/(400 (1 - rho^2)) of each value's spread, within 10%.
func TestAR1Factor(t *testing.T) {
	if AR1Factor(-0.3) != 1 || AR1Factor(0) != 1 || AR1Factor(0.999) != 100 {
		t.Errorf("AR1Factor bounds: %g %g %g", AR1Factor(-0.3), AR1Factor(0), AR1Factor(0.999))
	}
	const rho, n, runs = 0.8, 400, 2000
	rng := rand.New(rand.NewPCG(11, 3))
	var v float64
	for range runs {
		x := rng.NormFloat64() / math.Sqrt(1-rho*rho) // stationary start
		var m float64
		for range n {
			m += x / n
			x = rho*x + rng.NormFloat64()
		}
		v += m * m / runs
	}
	white := 1 / (n * (1 - rho*rho))
	if got, want := v/white, AR1Factor(rho); math.Abs(got-want) > 0.1*want {
		t.Errorf("variance of the mean %.3g times the white one, want %.3g", got, want)
	}
}
