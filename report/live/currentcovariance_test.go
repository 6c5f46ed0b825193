package live

import (
	"encoding/csv"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"net/http/httptest"
	"strings"
	"testing"
)

// covarianceDraws solves n windows of asset a, each with fresh noise on
// the currents truth, and returns the currents of each and the last
// window's estimate.
func covarianceDraws(t *testing.T, a *AssetConfig, names []string, truth []complex128, n int, samples int, rate, noise float64) ([][]float64, *Estimate) {
	t.Helper()
	p := solvingProcessor(t, a, names)
	rng := rand.New(rand.NewPCG(20, 13))
	var cur [][]float64
	var last *Estimate
	bg := [3]float64{}
	if a.Mode == "dc" {
		bg = [3]float64{18000, 2000, -44000}
	}
	for k := range n {
		w := synthWindow(a, truth, bg, 1764650000+float64(k*samples)/rate, rate, samples, noise, rng)
		e, _ := p.solve(w, p.reduce(w))
		if e.Quality != "good" {
			t.Fatalf("window %d: quality %s", k, e.Quality)
		}
		row := make([]float64, len(e.Conductors))
		for i, c := range e.Conductors {
			row[i] = c.Current
		}
		cur = append(cur, row)
		last = e
	}
	return cur, last
}

// sampleCov is the sample covariance of columns i and j of x.
func sampleCov(x [][]float64, i, j int) float64 {
	var mi, mj float64
	for _, r := range x {
		mi += r[i]
		mj += r[j]
	}
	mi /= float64(len(x))
	mj /= float64(len(x))
	var s float64
	for _, r := range x {
		s += (r[i] - mi) * (r[j] - mj)
	}
	return s / float64(len(x)-1)
}

// TestCurrentCovarianceMatchesScatter: each estimate's
// current_covariance_a2 is the covariance of its currents' errors, as
// the scatter of many windows with independent noise shows (the
// definition of a covariance; the sample covariance's standard error is
// about sqrt((1 + rho^2) / N) of sigma_i sigma_j, the sample variance's
// sqrt(2 / N) of itself: Kendall and Stuart, from memory), its diagonal
// is current_sigma_a squared, and a ratio's sigma formed from it by first-order
// propagation matches the ratio's scatter, and the sum's variance with
// the covariance term matches the sum's scatter. rv20b's tram depot: a
// return cable of 320 A 2 m from a pipe of 20 A, four sensors in a row
// across them; the two currents' errors are correlated (about -0.3), so
// the sum's variance without the covariance term is 40% too large.
// Also AC: the
// Fenwick Lane go and return (harrow-fen.toml), where the RMS
// magnitudes' covariance carries the cosine of their phase difference.
// Before, an estimate carried no covariance and no ratio sigma could be
// formed.
func TestCurrentCovarianceMatchesScatter(t *testing.T) {
	const n = 1500
	// 5 standard errors of the sample statistics at n draws.
	tolVar := 5 * math.Sqrt(2.0/n)
	t.Run("dc", func(t *testing.T) {
		a := tractionSite(t, "", "")
		cur, e := covarianceDraws(t, a, []string{"cable", "pipe"}, []complex128{320, 20}, n, 20, 10, 0.5)
		checkCovariance(t, cur, e, tolVar, n)
		// The ratio pipe/cable (the pipe's share of the return).
		C := e.CurrentCovariance
		ic, ip := e.Conductors[0].Current, e.Conductors[1].Current
		r := ip / ic
		sr := math.Abs(r) * math.Sqrt(C[1][1]/(ip*ip)+C[0][0]/(ic*ic)-2*C[0][1]/(ip*ic))
		var ratios [][]float64
		for _, c := range cur {
			ratios = append(ratios, []float64{c[1] / c[0]})
		}
		got := math.Sqrt(sampleCov(ratios, 0, 0))
		if math.Abs(got/sr-1) > tolVar/2+0.01 { // a standard deviation's standard error is half its variance's
			t.Errorf("ratio sigma %.4g from the covariance, scatter %.4g", sr, got)
		}
		// The sum (the current of both paths), whose variance the
		// correlation changes: C_cc + C_pp + 2 C_cp.
		vs := C[0][0] + C[1][1] + 2*C[0][1]
		var sums [][]float64
		for _, c := range cur {
			sums = append(sums, []float64{c[0] + c[1]})
		}
		if got := sampleCov(sums, 0, 0); math.Abs(got/vs-1) > tolVar {
			t.Errorf("sum's variance %.4g from the covariance, scatter %.4g", vs, got)
		}
		t.Logf("sum variance %.4g, without the covariance %.4g", vs, C[0][0]+C[1][1])
		if naive := C[0][0] + C[1][1]; math.Abs(naive/vs-1) < 2*tolVar {
			t.Errorf("the case does not test the correlation: the sum's variance without it %.4g, with %.4g", naive, vs)
		}
	})
	t.Run("ac", func(t *testing.T) {
		site := harrowFen(t)
		a := site.Asset("fenwick-lane")
		truth := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(100, 0.3+2)}
		cur, e := covarianceDraws(t, a, []string{"go", "return"}, truth, 400, 200, 1000, 2)
		checkCovariance(t, cur, e, 5*math.Sqrt(2.0/400), 400)
	})
}

// checkCovariance compares the estimate's covariance with the sample
// covariance of the n draws cur, and its diagonal with the sigmas.
func checkCovariance(t *testing.T, cur [][]float64, e *Estimate, tolVar float64, n int) {
	t.Helper()
	C := e.CurrentCovariance
	if len(C) != len(e.Conductors) {
		t.Fatalf("current_covariance_a2 %v for %d conductors", C, len(e.Conductors))
	}
	for i, c := range e.Conductors {
		if d := C[i][i]; math.Abs(d/(c.CurrentSigma*c.CurrentSigma)-1) > 1e-9 {
			t.Errorf("%s: covariance diagonal %.6g, current_sigma_a^2 %.6g", c.Name, d, c.CurrentSigma*c.CurrentSigma)
		}
		if got := sampleCov(cur, i, i); math.Abs(got/C[i][i]-1) > tolVar {
			t.Errorf("%s: variance %.4g, scatter %.4g", c.Name, C[i][i], got)
		}
	}
	rho := C[0][1] / math.Sqrt(C[0][0]*C[1][1])
	got := sampleCov(cur, 0, 1) / math.Sqrt(sampleCov(cur, 0, 0)*sampleCov(cur, 1, 1))
	// The sample correlation's standard error is (1 - rho^2)/sqrt(n).
	if se := (1 - rho*rho) / math.Sqrt(float64(n)); math.Abs(got-rho) > 5*se+1e-3 {
		t.Errorf("correlation %.4f, scatter %.4f (5 standard errors %.4f)", rho, got, 5*se)
	}
	if C[0][1] != C[1][0] {
		t.Errorf("covariance not symmetric: %v", C)
	}
	t.Logf("correlation %.4f, scatter %.4f", rho, got)
}

// TestCurrentCovarianceCSV: the history CSV's current_covariance_a2
// column gives each row's conductor's covariance with every conductor,
// in order, as "name: value" joined by "; ".
func TestCurrentCovarianceCSV(t *testing.T) {
	e := Estimate{Asset: "depot", Mode: "dc", Quality: "good",
		Conductors:        []ConductorEstimate{{Name: "cable", Current: 320, CurrentSigma: 0.002}, {Name: "pipe", Current: 20, CurrentSigma: 0.003}},
		CurrentCovariance: [][]float64{{4e-6, -5e-6}, {-5e-6, 9e-6}}}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, []Estimate{e})
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := -1
	for i, h := range rows[0] {
		if h == "current_covariance_a2" {
			col = i
		}
	}
	// Column 36 (index 35), where it was added: the columns added since
	// (start_utc, end_utc) come after it.
	if col != 35 {
		t.Fatalf("current_covariance_a2 at column %d of %v: want 35, where it was added", col, rows[0])
	}
	want := []string{"cable: 4e-06; pipe: -5e-06", "cable: -5e-06; pipe: 9e-06"}
	for k, w := range want {
		if got := rows[k+1][col]; got != w {
			t.Errorf("row %d: %q, want %q", k+1, got, w)
		}
	}
}
