package live

import (
	"math"
	"math/rand/v2"
	"testing"
)

// pipeSite is a DC asset on the invented Sedge Hollow pipeline: six fixed
// sensors 0.5 m up over a pipe 1.5 m down carrying cathodic-protection
// current, window 2 s at 10 Hz with 0.5 nT of noise per sample, its
// geometry commissioned from the first 20 windows, the site file's point
// 0.2 m west of where the pipe runs.
const pipeSite = `
[service]
http = "127.0.0.1:0"
[[asset]]
name = "sedge-hollow"
mode = "dc"
window = "2s"
model = "commission"
commission = "40s"
noise = 0.5
  [[asset.sensor]]
  name = "sh-1"
  position = [-1.5, 0, 0.5]
  [[asset.sensor]]
  name = "sh-2"
  position = [-0.5, 0, 0.5]
  [[asset.sensor]]
  name = "sh-3"
  position = [0.5, 0, 0.5]
  [[asset.sensor]]
  name = "sh-4"
  position = [1.5, 0, 0.5]
  [[asset.sensor]]
  name = "sh-5"
  position = [-0.5, 3, 0.5]
  [[asset.sensor]]
  name = "sh-6"
  position = [0.5, 3, 0.5]
  [[asset.conductor]]
  name = "pipe"
  point = [0.0, 0.0, -1.5]
  direction = [0.0, 1.0, 0.0]
`

// Reviewer's case (rv13a finding 8): a geometry commissioned while the
// current was small (0.05 A, a CP system at low output) is right within
// its sigmas, but once the current rose to 10 A every window was
// "degraded" with an alarm ("reduced chi-square 539 above 25"), though
// the misfit was the geometry's stated error, already in the sigmas, and
// the current right within them. Simulated truth (coresWindow: the
// Biot-Savart field of a long line, 200 nT m/A, with each window's mean
// noise, 0.5 nT over sqrt 20 readings), eight commissionings at 0.05 A,
// each followed by ten windows at 10 A: no window may be degraded, every
// window reads 10 A within 4 sigma, and a window with one sensor's
// readings moved by 300 nT on one axis (a knocked sensor: a misfit the
// geometry's error does not explain) is still degraded.
func TestGeometryCommissionedAtLowCurrentNotDegraded(t *testing.T) {
	site := testSite(t, pipeSite)
	a := &site.Assets[0]
	sigma := a.Noise / math.Sqrt(20)
	ncomm := int(a.Commission.Seconds() / a.Window.Seconds())
	low := []core{{"pipe", 0.2, -1.5, 0.05, 0}}
	high := []core{{"pipe", 0.2, -1.5, 10, 0}}
	degraded := 0
	for seed := 1; seed <= 8; seed++ {
		rng := rand.New(rand.NewPCG(uint64(seed), 37))
		reds := make([]*reduced, ncomm)
		for i := range reds {
			reds[i] = coresWindow(a, low, sigma, rng)
		}
		in := meanReadings(reds, len(a.Sensors), false)
		conds, err := InverseCommissioner{}.Commission(&in, a.Conductors)
		if err != nil {
			t.Fatalf("seed %d: commissioning: %v", seed, err)
		}
		unc, err := geometryCovariance(&in, conds)
		if err != nil {
			t.Fatalf("seed %d: geometry covariance: %v", seed, err)
		}
		p, err := newProcessor(a, "test")
		if err != nil {
			t.Fatal(err)
		}
		if err := p.hold(NewInverseEstimator, conds); err != nil {
			t.Fatal(err)
		}
		if p.shifts, err = geometryShifts(NewInverseEstimator, a.Mode, conds, unc); err != nil {
			t.Fatal(err)
		}
		for k := range 10 {
			w := &window{Index: int64(ncomm + k), Start: float64(2 * (ncomm + k)), End: float64(2 * (ncomm + k + 1)), Reason: "complete"}
			e, alarms := p.solve(w, coresWindow(a, high, sigma, rng))
			if e.Quality != "good" {
				degraded++
				t.Errorf("seed %d window %d: quality %s, reduced chi-square %.3g, chi2_geometry %.3g on %d", seed, k, e.Quality, e.Chi2/float64(e.DOF), e.Chi2Geometry, e.DOF)
			}
			for _, al := range alarms {
				t.Errorf("seed %d window %d: %s alarm: %s", seed, k, al.Kind, al.Message)
			}
			if c := e.Conductors[0]; !(math.Abs(c.Current-10) <= 4*c.CurrentSigma) {
				t.Errorf("seed %d window %d: %.5g ± %.3g A, truth 10 A", seed, k, c.Current, c.CurrentSigma)
			}
		}
		r := coresWindow(a, high, sigma, rng)
		r.in.Fields[2][0] += 300
		w := &window{Index: int64(ncomm + 10), Start: float64(2 * (ncomm + 10)), End: float64(2 * (ncomm + 11)), Reason: "complete"}
		if e, _ := p.solve(w, r); e.Quality != "degraded" {
			t.Errorf("seed %d: a sensor moved by 300 nT: quality %s, reduced chi-square %.3g, chi2_geometry %.3g on %d", seed, e.Quality, e.Chi2/float64(e.DOF), e.Chi2Geometry, e.DOF)
		}
	}
	if degraded > 0 {
		t.Errorf("%d of 80 windows degraded", degraded)
	}
}
