package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Azimuth and dip from a single three-axis traverse. The field of an infinite line is
// perpendicular to its direction u everywhere (Biot-Savart, DOMAIN.md), so as the sensor
// passes over the line the background-free field vectors sweep the plane perpendicular
// to u, and that plane fixes u. These tests simulate a 41-point traverse (-2..2 m, 0.1 m
// step, the DOMAIN.md Cramer-Rao geometry) over a 10 A line 1 m deep whose azimuth is 3
// deg off the perpendicular and which dips 4 deg, with the forward model and 5 nT white
// noise on every axis.

// singleTraverseCase returns the traverse, the line and the true azimuth and dip (deg).
func singleTraverseCase() (pts [][3]float64, line Line, az, dip float64) {
	pts = traverse(41, -2, 2, 0, 0)
	az, dip = 3, 4
	line = Line{Point: [3]float64{0.1, 0, -1}, Dir: dirOf(az*math.Pi/180, dip*math.Pi/180)}
	return pts, line, az, dip
}

// TestSingleTraverseAngles: azimuth and dip recovered exactly from noise-free readings
// and within 3 sigma from noisy ones, identifiable, with the current and depth as well.
func TestSingleTraverseAngles(t *testing.T) {
	pts, line, az, dip := singleTraverseCase()
	bg := [3]float64{17000, 1500, -44000}
	t.Run("noise free", func(t *testing.T) {
		f := simulate(pts, []Line{line}, []float64{10}, bg, 0, nil)
		res, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 5}, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		if math.Abs(e.Azimuth-az) > 1e-6 || math.Abs(e.Dip-dip) > 1e-6 || !relClose(e.Current, 10, 1e-8) {
			t.Errorf("azimuth %v dip %v current %v, want %v %v 10", e.Azimuth, e.Dip, e.Current, az, dip)
		}
		if res.RMS > 1e-6 {
			t.Errorf("residual RMS %g nT on noise-free readings", res.RMS)
		}
	})
	t.Run("noisy", func(t *testing.T) {
		rng := rand.New(rand.NewPCG(3, 4))
		f := simulate(pts, []Line{line}, []float64{10}, bg, 5, rng)
		res, err := FitLines(&Problem{Points: pts, Fields: f}, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		t.Logf("azimuth %.4f +- %.4f, dip %.4f +- %.4f, current %.4f +- %.4f, depth %.5f +- %.5f",
			e.Azimuth, e.AzimuthSigma, e.Dip, e.DipSigma, e.Current, e.CurrentSigma, e.Depth, e.DepthSigma)
		if !res.SingleTraverse || !e.Identifiable.Azimuth || !e.Identifiable.Dip {
			t.Fatalf("single %v, identifiable %+v: want azimuth and dip fitted", res.SingleTraverse, e.Identifiable)
		}
		// The depth reported is at the point nearest the centroid: the dipping line's
		// depth there, 1 m at the crossing (0.1 m east) minus the rise over the 0.1 m.
		d := sub([3]float64{}, line.Point)
		u := line.Dir
		near := add(line.Point, scale(u, dot(d, u)))
		checks := []struct {
			name             string
			got, sigma, want float64
		}{
			{"azimuth", e.Azimuth, e.AzimuthSigma, az},
			{"dip", e.Dip, e.DipSigma, dip},
			{"current", e.Current, e.CurrentSigma, 10},
			{"depth", e.Depth, e.DepthSigma, -near[2]},
		}
		for _, c := range checks {
			if !(c.sigma > 0) || math.Abs(c.got-c.want) > 3*c.sigma {
				t.Errorf("%s %v +- %v, want %v within 3 sigma", c.name, c.got, c.sigma, c.want)
			}
		}
		// The angles are determined to a small fraction of a degree, not merely
		// somewhere within the search range.
		if e.AzimuthSigma > 0.5 || e.DipSigma > 0.5 {
			t.Errorf("azimuth sigma %v deg, dip sigma %v deg: expected well under a degree", e.AzimuthSigma, e.DipSigma)
		}
	})
	t.Run("held on request", func(t *testing.T) {
		f := simulate(pts, []Line{line}, []float64{10}, bg, 0, nil)
		zero := 0.0
		res, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 5}, &Settings{Count: 1, Azimuth: &zero, Dip: &zero})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		if e.Identifiable.Azimuth || e.Identifiable.Dip || e.Azimuth != 0 || e.Dip != 0 || e.AzimuthSigma != 0 {
			t.Errorf("held angles: azimuth %v dip %v identifiable %+v", e.Azimuth, e.Dip, e.Identifiable)
		}
		// Held 3 and 4 deg off, the model cannot explain the along-line component.
		if res.RMS < 10 {
			t.Errorf("held off the true direction, RMS %v nT: want the misfit visible", res.RMS)
		}
	})
}

// TestSingleTraverseAnglesMonteCarlo: the reported sigmas of azimuth and dip (delta
// method on the full covariance) agree with the scatter of repeated fits within 20%
// (200 runs estimate a standard deviation to about 5%), with the bias well inside one
// sigma.
func TestSingleTraverseAnglesMonteCarlo(t *testing.T) {
	if testing.Short() {
		t.Skip("Monte Carlo: skipped under -short")
	}
	const runs, tol = 200, 0.20
	pts, line, az, dip := singleTraverseCase()
	rng := rand.New(rand.NewPCG(11, 12))
	truth := [2]float64{az, dip}
	var sum, sum2, rep [2]float64
	for range runs {
		f := simulate(pts, []Line{line}, []float64{10}, [3]float64{120, -40, 300}, 5, rng)
		res, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 5}, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Sources[0]
		est := [2]float64{e.Azimuth, e.Dip}
		sig := [2]float64{e.AzimuthSigma, e.DipSigma}
		for k := range 2 {
			d := est[k] - truth[k]
			sum[k] += d
			sum2[k] += d * d
			rep[k] += sig[k]
		}
	}
	for k, name := range [2]string{"azimuth", "dip"} {
		mean := sum[k] / runs
		sd := math.Sqrt(sum2[k]/runs - mean*mean)
		r := rep[k] / runs
		t.Logf("%s: bias %.3g deg, empirical sd %.4g deg, mean reported %.4g deg", name, mean, sd, r)
		if math.Abs(r-sd) > tol*sd {
			t.Errorf("%s: reported sigma %.4g disagrees with empirical %.4g", name, r, sd)
		}
		if math.Abs(mean) > 0.3*sd {
			t.Errorf("%s: bias %.3g is not well inside one sigma (%.3g)", name, mean, sd)
		}
	}
}

// TestSingleTraverseAnglesUndetermined: the rule that sends a single-traverse fit to
// the fallback (angles held perpendicular and level, as for a two-axis log): rank loss,
// a sigma beyond 15 deg or an azimuth at the bound of its search on a line whose
// current is significant; and, for the final fit (singleAnglesAtEdge), angles fitted
// to such a line at the edge of the search region. (A three-axis traverse that
// determines the current also determines the angles to a fraction of that, so the rule
// is exercised on results directly.)
func TestSingleTraverseAnglesUndetermined(t *testing.T) {
	line := func(cur, curSig, azSig, dipSig float64, notes ...string) SourceEstimate {
		return SourceEstimate{Kind: "line", Current: cur, CurrentSigma: curSig,
			AzimuthSigma: azSig, DipSigma: dipSig, Notes: notes,
			Identifiable: Identifiable{Current: true, Depth: true, Offset: true, Azimuth: azSig != 0, Dip: dipSig != 0}}
	}
	cases := []struct {
		name    string
		sources []SourceEstimate
		want    bool
	}{
		{"determined", []SourceEstimate{line(10, 0.02, 0.08, 0.05)}, false},
		{"azimuth sigma 20 deg", []SourceEstimate{line(10, 2, 20, 1)}, true},
		{"dip sigma 16 deg", []SourceEstimate{line(10, 2, 1, 16)}, true},
		{"sigma not a number", []SourceEstimate{line(10, 2, math.NaN(), 1)}, true},
		{"rank loss", []SourceEstimate{line(10, 0.1, 0, 0.05, "azimuth not resolved by the data")}, true},
		{"azimuth at its bound", []SourceEstimate{line(10, 0.1, 0.2, 0.05, azimuthAtBoundNote())}, true},
		{"weak line judged by the others", []SourceEstimate{line(10, 0.1, 0.1, 0.1), line(0.1, 0.2, 40, 40)}, false},
		{"second line undetermined", []SourceEstimate{line(10, 0.1, 0.1, 0.1), line(-9, 0.2, 40, 1)}, true},
		{"dipoles ignored", []SourceEstimate{line(10, 0.1, 0.1, 0.1), {Kind: "dipole"}}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, why := singleAnglesUndetermined(&Result{Sources: c.sources})
			if got != c.want || (got && why == "") {
				t.Errorf("undetermined = %v (%q), want %v", got, why, c.want)
			}
		})
	}
	edge := []struct {
		name    string
		sources []SourceEstimate
		want    bool
	}{
		{"angles fitted at the edge", []SourceEstimate{line(10, 0.1, 0.2, 0.05, EdgeOfSearchNote)}, true},
		{"angles held at the edge", []SourceEstimate{line(10, 0.1, 0, 0, EdgeOfSearchNote)}, false},
		{"weak line at the edge", []SourceEstimate{line(0.1, 0.1, 0.2, 0.05, EdgeOfSearchNote)}, false},
		{"clear of the edge", []SourceEstimate{line(10, 0.1, 0.2, 0.05)}, false},
	}
	for _, c := range edge {
		t.Run(c.name, func(t *testing.T) {
			got, why := singleAnglesAtEdge(&Result{Sources: c.sources}, 2)
			if got != c.want || (got && why == "") {
				t.Errorf("at edge = %v (%q), want %v", got, why, c.want)
			}
		})
	}
}
