package live

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/calibrate"
)

// A sensor with a hard-iron offset (in its own frame, here a sensor turned
// 90 degrees) biases the fit unless its calibration file is applied;
// with the file named in the site, the currents come back to the truth.
func TestCalibrationFileApplied(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Mode, a.Frequency, a.Noise = "dc", 0, 1
	const si = 4 // fl-n1, yaw 90
	offset := [3]float64{250, -180, 90}
	cal := calibrate.FromOffset(calibrate.MethodZero, &calibrate.OffsetResult{Offset: offset, Determined: [3]bool{true, true, true}})
	path := filepath.Join(t.TempDir(), "fl-n1.json")
	if err := cal.Save(path); err != nil {
		t.Fatal(err)
	}
	truth := []complex128{60, -60}
	solve := func(withCal bool) *Estimate {
		a.Sensors[si].Calibration = ""
		if withCal {
			a.Sensors[si].Calibration = path
		}
		rng := rand.New(rand.NewPCG(21, 22))
		w := synthWindow(a, truth, [3]float64{1520, 17850, -45760}, 0, 200, 200, 1, rng)
		for i := range w.Sensors[si].T { // raw = true + offset, in the sensor frame
			w.Sensors[si].Bx[i] += offset[0]
			w.Sensors[si].By[i] += offset[1]
			w.Sensors[si].Bz[i] += offset[2]
		}
		p := solvingProcessor(t, a, []string{"go", "return"})
		e, _ := p.solve(w, p.reduce(w))
		return e
	}
	raw, fixed := solve(false), solve(true)
	// Without the file the offset sensor contradicts the others: it is
	// named and left out (isolate), the window partial.
	if name := a.Sensors[si].Name; raw.Quality != "partial" || !strings.Contains(raw.Missing[name], "inconsistent") {
		t.Errorf("uncorrected offset: quality %s, missing %v; want partial with %s left out as inconsistent (reduced chi2 %.3g)", raw.Quality, raw.Missing, name, raw.Chi2/float64(raw.DOF))
	}
	for i, c := range fixed.Conductors {
		if math.Abs(c.Current-real(truth[i])) > 5*c.CurrentSigma {
			t.Errorf("%s with calibration: %.4f +- %.2g A, truth %v", c.Name, c.Current, c.CurrentSigma, real(truth[i]))
		}
	}
	if fixed.Quality != "good" {
		t.Errorf("with calibration: quality %s", fixed.Quality)
	}
}

func TestMissingCalibrationFile(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Sensors[0].Calibration = filepath.Join(t.TempDir(), "absent.json")
	if _, err := newProcessor(a, "test"); err == nil {
		t.Fatal("a missing calibration file was accepted")
	}
}
