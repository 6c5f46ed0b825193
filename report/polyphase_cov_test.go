package report

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"undercurrent/inverse"
)

// TestPolyphaseResidualFromCovariance: a three-phase set's residual takes
// its sigmas from the fit's covariance of the lines' complex currents, not
// from the stations' sigmas taken as independent. Cores of 200, 150 and
// 120 A at 0°, -120° and +120°, each with 0.05 A of error per real
// part, their errors correlated -0.45 between cores (as the cores of one
// fit, which trade current between them): the sum's error per real part
// is then sqrt(3 - 6·0.45) = 0.548 of one core's. The fit lists the lines
// in another order than the conductors, and the first core's line turned
// (its Dir the other way: its parameters read minus its current). The
// residual's sigma and its phase's from conductor 1's are checked against
// the scatter of 40000 draws of correlated errors (a Monte Carlo, the
// reference outside the code), over four stations of equal values (no
// Birge widening). Before, the sigma was sqrt(3) times one core's, three
// times too wide here (700-2000 times in review, where the correlations
// run nearer -0.5), and no phase was given.
func TestPolyphaseResidualFromCovariance(t *testing.T) {
	const s, rho = 0.05, -0.45
	cur := []complex128{200, cmplx.Rect(150, -120*math.Pi/180), cmplx.Rect(120, 120*math.Pi/180)}
	station := func(key string, c complex128) Station {
		p, sp := cmplx.Phase(c)*180/math.Pi, s/cmplx.Abs(c)*180/math.Pi
		return Station{Key: key, Direction: [3]float64{1, 0, 0}, Current: cmplx.Abs(c), CurrentSigma: s, Phase: &p, PhaseSigma: &sp, Used: true}
	}
	keys := []string{"T01", "T02", "T03", "T04"}
	routes := make([]Route, 3)
	for _, k := range keys {
		for j := range routes {
			routes[j].Stations = append(routes[j].Stations, station(k, cur[j]))
		}
	}
	// The fit's lines: conductor 3's first, then conductor 1's turned,
	// then conductor 2's, with noise and bystanders' parameters around.
	order := []int{2, 0, 1}
	turn := []float64{1, -1, 1}
	names := []string{"line1.offset", "line1.height", "line2.offset", "line2.height", "line3.offset", "line3.height",
		"line1.current.re", "line2.current.re", "line3.current.re", "bg.e.re",
		"line1.current.im", "line2.current.im", "line3.current.im", "bg.e.im"}
	at := func(l, part int) int { return 6 + 4*part + l }
	cov := mat.NewSymDense(len(names), nil)
	for i := range names {
		cov.SetSym(i, i, 1e-6)
	}
	res := &inverse.Result{ParamNames: names, Covariance: cov}
	for l, j := range order {
		res.LineCurrents = append(res.LineCurrents, complex(turn[l], 0)*cur[j])
	}
	for a := range 3 {
		for b := range 3 {
			c := s * s * rho
			if a == b {
				c = s * s
			}
			// In the stations' frame corr(j_a, j_b); the fit reads each
			// line times its turn.
			c *= turn[a] * turn[b]
			for part := range 2 {
				cov.SetSym(at(a, part), at(b, part), c)
			}
		}
	}
	fits := map[string]*inverse.Result{}
	for _, k := range keys {
		fits[k] = res
	}
	r0 := routes[0]
	d := &Document{Route: &r0}
	for j := 1; j < 3; j++ {
		d.Conductors = append(d.Conductors, Track{Number: j + 1, Route: routes[j]})
	}
	d.addTrackPhasesWith(fits)
	c := d.Conductors[1]
	if c.PolyphaseResidualA == nil || c.PolyphaseResidualPhaseDeg == nil {
		t.Fatalf("no residual or no phase: %+v", c)
	}
	// The Monte Carlo: correlated errors L z, L the Cholesky factor of
	// the cores' correlation, per real part.
	var ch mat.Cholesky
	corr := mat.NewSymDense(3, []float64{1, rho, rho, rho, 1, rho, rho, rho, 1})
	if !ch.Factorize(corr) {
		t.Fatal("correlation not positive definite")
	}
	var L mat.TriDense
	ch.LTo(&L)
	rng := rand.New(rand.NewPCG(7, 11))
	const n = 40000
	var m1, m2, p1, p2 float64
	sum0 := cur[0] + cur[1] + cur[2]
	for range n {
		var e [2][3]float64
		for part := range 2 {
			z := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
			for i := range 3 {
				for k := 0; k <= i; k++ {
					e[part][i] += L.At(i, k) * z[k] * s
				}
			}
		}
		var sum complex128
		for j := range 3 {
			sum += cur[j] + complex(e[0][j], e[1][j])
		}
		i1 := cur[0] + complex(e[0][0], e[1][0])
		r := cmplx.Abs(sum)
		ph := (cmplx.Phase(sum) - cmplx.Phase(i1)) * 180 / math.Pi
		m1, m2, p1, p2 = m1+r, m2+r*r, p1+ph, p2+ph*ph
	}
	// Four stations of one value each: the mean's sigma is half one's.
	sdR := math.Sqrt(m2/n-(m1/n)*(m1/n)) / 2
	sdP := math.Sqrt(p2/n-(p1/n)*(p1/n)) / 2
	want, wantPhase := cmplx.Abs(sum0), cmplx.Phase(sum0)*180/math.Pi
	t.Logf("residual %.6f ± %.6f A at %.5f ± %.5f°; Monte Carlo sigmas %.6f A, %.5f°", *c.PolyphaseResidualA, *c.PolyphaseResidualSigmaA, *c.PolyphaseResidualPhaseDeg, *c.PolyphaseResidualPhaseSigmaDeg, sdR, sdP)
	if math.Abs(*c.PolyphaseResidualA-want) > 1e-9 || math.Abs(*c.PolyphaseResidualPhaseDeg-wantPhase) > 1e-9 {
		t.Errorf("residual %.9f A at %.9f°, phasor arithmetic %.9f A at %.9f°", *c.PolyphaseResidualA, *c.PolyphaseResidualPhaseDeg, want, wantPhase)
	}
	if r := *c.PolyphaseResidualSigmaA / sdR; math.Abs(r-1) > 0.03 {
		t.Errorf("residual's sigma %.6f A, the draws scatter %.6f A", *c.PolyphaseResidualSigmaA, sdR)
	}
	if r := *c.PolyphaseResidualPhaseSigmaDeg / sdP; math.Abs(r-1) > 0.03 {
		t.Errorf("residual's phase sigma %.5f°, the draws scatter %.5f°", *c.PolyphaseResidualPhaseSigmaDeg, sdP)
	}
	// Without the fits the stations' sigmas are taken as independent:
	// sqrt(3) times one core's, the wider answer kept where no fit's
	// covariance is at hand.
	d.addTrackPhasesWith(nil)
	if c := d.Conductors[1]; c.PolyphaseResidualSigmaA == nil || math.Abs(*c.PolyphaseResidualSigmaA-math.Sqrt(3)*s/2) > 1e-9 {
		t.Errorf("without the fits the sigma is %v A, want %.6f", c.PolyphaseResidualSigmaA, math.Sqrt(3)*s/2)
	}
}
