package report

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// kestrelMoor simulates eight traverses, 20 m apart, across the fictional
// Kestrel Moor gas spur (azimuth 45 degrees, 1.2 m below the sensors)
// carrying 2.0 A of cathodic-protection current that drops to 1.4 A between
// the fourth and fifth traverse, and fits each with inverse.FitLines. The
// field is the infinite line of DOMAIN.md plus a uniform Earth field and
// 2 nT of noise.
func kestrelMoor(t testing.TB) []Fit {
	const (
		depth   = 1.2
		noise   = 2.0 // nT
		spacing = 20.0
	)
	rng := rand.New(rand.NewPCG(45, 12))
	az := 45 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	earth := [3]float64{-310, 17900, -46300}
	var fits []Fit
	for i := 0; i < 8; i++ {
		current := 2.0
		if i >= 4 {
			current = 1.4
		}
		p0 := [3]float64{float64(i) * spacing * u[0], float64(i) * spacing * u[1], -depth}
		prob := acrossLine(p0, u, current, earth, noise, rng)
		res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
		fits = append(fits, Fit{Key: fmt.Sprintf("K%d", i+1), Problem: &prob, Result: res, Err: err})
		if err != nil {
			t.Fatalf("K%d: %v", i+1, err)
		}
	}
	return fits
}

func TestBuildFromFits(t *testing.T) {
	fits := kestrelMoor(t)
	head := Document{Tool: Tool{Name: "undercurrent", Version: "test"}, Title: "Kestrel Moor gas spur"}
	d, err := Build(head, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6, CoverCode: "NEC Table 300.5"})
	if err != nil {
		t.Fatal(err)
	}
	if err := d.Validate(); err != nil {
		t.Fatal(err)
	}
	if d.Route == nil || len(d.Route.Stations) != 8 || math.Abs(d.Route.Length-140) > 0.5 {
		t.Fatalf("route %+v, want 8 stations over about 140 m", d.Route)
	}
	// Each group recovers the simulated depth and current within 3 sigma.
	for i, g := range d.Groups {
		if !g.OK || len(g.Sources) != 1 || g.Profile == nil {
			t.Fatalf("%s: ok %v, %d sources, profile %v (%s)", g.Key, g.OK, len(g.Sources), g.Profile != nil, g.Problem)
		}
		s := g.Sources[0]
		wantI := 2.0
		if i >= 4 {
			wantI = 1.4
		}
		if math.Abs(s.Depth-1.2) > 3*s.DepthSigma || math.Abs(math.Abs(s.Current)-wantI) > 3*s.CurrentSigma {
			t.Errorf("%s: depth %.4f ± %.4f m, current %.4f ± %.4f A; want 1.2 m, %g A", g.Key, s.Depth, s.DepthSigma, s.Current, s.CurrentSigma, wantI)
		}
	}
	var steps []Finding
	for _, f := range d.Findings {
		if f.Kind == "current-step" {
			steps = append(steps, f)
		}
	}
	if len(steps) != 1 || strings.Join(steps[0].Groups, ",") != "K4,K5" {
		t.Fatalf("steps %+v, want one between K4 and K5", steps)
	}
	if v := steps[0].Values[0]; math.Abs(math.Abs(v.Value)-0.6) > 3*v.Sigma {
		t.Errorf("step %v, want 0.6 A within 3 sigma", v)
	}
	// Cover is 1.2 - 0.3 = 0.9 m: no cover finding.
	for _, f := range d.Findings {
		if f.Kind == "shallow-cover" {
			t.Errorf("unexpected cover finding: %s", f.Message)
		}
	}
	for _, w := range []func(io.Writer, *Document) error{WriteJSON, WriteCSV, WriteGeoJSON, WriteHTML} {
		if err := w(io.Discard, d); err != nil {
			t.Error(err)
		}
	}
}

func TestBuildFailedAndSingle(t *testing.T) {
	fits := kestrelMoor(t)
	// A failed fit is reported, not used, and placed at its readings.
	fits[2].Result, fits[2].Err = nil, errors.New("inverse: did not converge")
	d, err := Build(Document{}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	var poor bool
	for _, f := range d.Findings {
		if f.Kind == "poor-fit" && f.Groups[0] == "K3" && strings.Contains(f.Message, "did not converge") {
			poor = true
		}
	}
	if !poor || d.Groups[2].OK {
		t.Errorf("failed fit K3 not reported: %+v", d.Findings)
	}
	// One group: no route, but the cover check still runs.
	d, err = Build(Document{}, fits[:1], &BuildSettings{SensorHeight: 0.8, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	if d.Route != nil || d.Groups[0].Chainage != nil {
		t.Errorf("single group has a route")
	}
	if len(d.Findings) != 1 || d.Findings[0].Kind != "shallow-cover" {
		t.Errorf("findings %+v, want one shallow cover (1.2 - 0.8 = 0.4 m < 0.6 m)", d.Findings)
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if _, err := Build(Document{}, nil, nil); err == nil {
		t.Error("no fits accepted")
	}
	if _, err := Build(Document{}, []Fit{{Key: "x", Problem: fits[0].Problem}}, nil); err == nil {
		t.Error("fit with neither result nor error accepted")
	}
}

// An AC walk: three traverses over a cable carrying 50 A RMS at a phase of
// 30 degrees; the phasors are the infinite-line field times the current
// phasor, with complex noise.
func TestBuildAC(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	u := [3]float64{1, 0, 0}
	var fits []Fit
	for i := 0; i < 3; i++ {
		p0 := [3]float64{10 * float64(i), 0, -0.9}
		var prob inverse.Problem
		for k := -12; k <= 12; k++ {
			r := [3]float64{p0[0], 0.25 * float64(k), 0}
			b := lineField(p0, u, r, 50)
			var ph [3]complex128
			for a := range ph {
				ph[a] = complex(b[a]*1e9, 0)*cmplxRect(30) + complex(rng.NormFloat64(), rng.NormFloat64())
			}
			prob.Points, prob.Phasors = append(prob.Points, r), append(prob.Phasors, ph)
		}
		prob.Sigma = 1
		res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("W%d", i+1), Problem: &prob, Result: res})
	}
	d, err := Build(Document{Signal: Signal{FrequencyHz: 2000, WindowS: 0.5}}, fits, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d.Signal.Mode != SignalAC || d.Signal.FrequencyHz != 2000 {
		t.Errorf("signal %+v, want AC at 2000 Hz", d.Signal)
	}
	for _, g := range d.Groups {
		s := g.Sources[0]
		if s.Phase == nil || g.Profile.Component != ComponentACInPhase {
			t.Fatalf("%s: no phase or not an in-phase profile", g.Key)
		}
		// Along the route (east) the current is +50 A at 30 degrees.
		if math.Abs(s.Current-50) > 3*s.CurrentSigma || math.Abs(*s.Phase-30) > 3**s.PhaseSigma {
			t.Errorf("%s: %.3f ± %.3f A at %.2f ± %.2f deg, want 50 A at 30 deg", g.Key, s.Current, s.CurrentSigma, *s.Phase, *s.PhaseSigma)
		}
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "<th>Phase (°)</th>") || !strings.Contains(buf.String(), "AC at 2000 Hz, 0.5 s windows") {
		t.Error("AC report lacks the phase column or the frequency")
	}
	// A frequency estimated from a log is not a round number: the report
	// gives it to 0.0001 Hz and the window to 0.1 ms, as the console does
	// (it printed 50.001367977717294 Hz and 0.09999726411941788 s).
	d.Signal.FrequencyHz, d.Signal.WindowS = 50.001367977717294, 0.09999726411941788
	buf.Reset()
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "AC at 50.0014 Hz, 0.1 s windows") {
		t.Error("the report's signal line does not round an estimated frequency and window")
	}
}

func cmplxRect(deg float64) complex128 {
	s, c := math.Sincos(deg * math.Pi / 180)
	return complex(c, s)
}

// The depth reference's height is written without the noise of the fits'
// arithmetic: 0.1 + 0.2 is 0.30000000000000004 in IEEE 754 binary64 (the
// nearest doubles to 0.1 and 0.2 sum one unit in the last place above the
// nearest to 0.3), and the document should say 0.3.
func TestBuildDepthReferenceRounded(t *testing.T) {
	fits := kestrelMoor(t)
	a, b := 0.1, 0.2 // variables: Go would add constants exactly
	for _, f := range fits {
		f.Result.ReferenceZ = a + b
	}
	if fits[0].Result.ReferenceZ == 0.3 {
		t.Fatal("0.1 + 0.2 == 0.3: the check cannot fail")
	}
	head := Document{Tool: Tool{Name: "undercurrent", Version: "test"}, Title: "Kestrel Moor gas spur"}
	d, err := Build(head, fits, &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "\"z_m\": 0.3\n") {
		i := strings.Index(buf.String(), `"z_m"`)
		t.Errorf("depth reference not 0.3: %.60s", buf.String()[max(i, 0):])
	}
}

// acrossLine simulates a traverse of 31 readings 0.4 m apart at up = 0, square to
// the straight line through p0 along the horizontal unit u carrying current A: the
// line's Biot-Savart field (lineField) in nT plus the Earth's field and Gaussian
// noise of the given sigma (nT) drawn from rng. The traverse is centred over p0.
func acrossLine(p0, u [3]float64, current float64, earth [3]float64, noise float64, rng *rand.Rand) inverse.Problem {
	right := [3]float64{u[1], -u[0], 0}
	var prob inverse.Problem
	for k := -15; k <= 15; k++ {
		off := 0.4 * float64(k)
		r := [3]float64{p0[0] + off*right[0], p0[1] + off*right[1], 0}
		b := lineField(p0, u, r, current)
		var m [3]float64
		for a := range m {
			m[a] = b[a]*1e9 + earth[a] + noise*rng.NormFloat64()
		}
		prob.Points = append(prob.Points, r)
		prob.Fields = append(prob.Fields, m)
	}
	prob.Sigma = noise
	return prob
}
