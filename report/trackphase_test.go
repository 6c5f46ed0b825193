package report

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// phaseRoute is a route of four stations, T01 to T04, along east, each
// carrying current i (A, sigma 0.05 A) at phase p (degrees, sigma sp).
func phaseRoute(i, p, sp float64) Route {
	var r Route
	for _, k := range []string{"T01", "T02", "T03", "T04"} {
		ph, sg := p, sp
		r.Stations = append(r.Stations, Station{Key: k, Direction: [3]float64{1, 0, 0}, Current: i, CurrentSigma: 0.05, Phase: &ph, PhaseSigma: &sg, Used: true})
	}
	return r
}

// phaseDoc is a document whose conductor 1 carries i1 A at 0° and whose
// further conductors carry currents is at phases ps (degrees, sigma sp).
func phaseDoc(i1 float64, is, ps []float64, sp float64) *Document {
	r := phaseRoute(i1, 0, 0.05)
	d := &Document{Route: &r}
	for k := range is {
		d.Conductors = append(d.Conductors, Track{Number: k + 2, Route: phaseRoute(is[k], ps[k], sp)})
	}
	d.addTrackPhases()
	return d
}

// TestReturnShareOnlyForAReturn: a return share and a net current to
// remote earth are given only for conductor 1's return path. Before, any
// further AC conductor within 90° of anti-phase got one (found in
// review): the demo's separate 15 A LV feeder at 135° beside the 40 A
// cable was said to carry back 25.89% and leave 32.62 A to remote earth.
// The truths are phasor arithmetic: 12 A at 165° beside 20 A carries back
// 12 cos 15° / 20 = 0.5796 and leaves |20 + 12 e^{i165°}| = 8.964 A.
func TestReturnShareOnlyForAReturn(t *testing.T) {
	// A separate circuit 45° off anti-phase: no return.
	d := phaseDoc(40, []float64{15}, []float64{135}, 0.05)
	if c := d.Conductors[0]; c.ReturnShare != nil || c.NetToEarthA != nil || returnShareClause(&c) != "" {
		t.Errorf("an LV feeder at 135° is given a return share and net current: %q", returnShareClause(&c))
	}
	// A return 15° off anti-phase keeps its share.
	d = phaseDoc(20, []float64{12}, []float64{165}, 0.05)
	c := d.Conductors[0]
	share, net := 12*math.Cos(15*math.Pi/180)/20, cmplx.Abs(20+cmplx.Rect(12, 165*math.Pi/180))
	if c.ReturnShare == nil || c.NetToEarthA == nil {
		t.Fatal("a return at 165° is given no return share")
	}
	if math.Abs(*c.ReturnShare-share) > 1e-9 || math.Abs(*c.NetToEarthA-net) > 1e-9 {
		t.Errorf("share %.6f net %.6f A, phasor arithmetic %.6f and %.6f A", *c.ReturnShare, *c.NetToEarthA, share, net)
	}
	if !strings.Contains(returnShareClause(&c), "carries back") {
		t.Errorf("the return's clause does not word its share: %q", returnShareClause(&c))
	}
	// Two near anti-phase: only the best partner, the one leaving the
	// least net current (|20 + 12∠165°| = 8.96 A against |20 + 5∠175°| =
	// 15.0 A), is the return.
	d = phaseDoc(20, []float64{12, 5}, []float64{165, 175}, 0.05)
	if d.Conductors[0].ReturnShare == nil || d.Conductors[1].ReturnShare != nil {
		t.Errorf("two near anti-phase: shares given %v and %v, want the 12 A one's only", d.Conductors[0].ReturnShare != nil, d.Conductors[1].ReturnShare != nil)
	}
	// A phase too uncertain (150 ± 15°: 30° a station over four) to tell
	// a return from a three-phase partner 60° away: no share.
	d = phaseDoc(20, []float64{12}, []float64{150}, 30)
	if c := d.Conductors[0]; c.ReturnShare != nil {
		t.Errorf("a phase of %.0f ± %.0f° is given a return share %v", *c.PhaseFromConductor1, *c.PhaseFromConductor1Sigma, *c.ReturnShare)
	}
}

// TestPolyphaseSetResidual: three conductors about 120° apart (one
// three-phase circuit, 60 A at 0°, 45 A at -120°, 30 A at +120°, the
// scenario three-core.toml's) were each given a pairwise return share and
// "net 54.1 A" and "net 52.0 A" to remote earth (found in review); they
// now get none, and the later of the two further ones carries the set's
// residual, |60 + 45 e^{-i120°} + 30 e^{i120°}| = sqrt(675) = 25.98 A
// (phasor arithmetic), worded as holding if the three are one circuit.
func TestPolyphaseSetResidual(t *testing.T) {
	d := phaseDoc(60, []float64{45, 30}, []float64{-120, 120}, 0.1)
	for _, c := range d.Conductors {
		if c.ReturnShare != nil || c.NetToEarthA != nil {
			t.Errorf("conductor %d of a three-phase set is given a return share: %q", c.Number, returnShareClause(&c))
		}
	}
	if d.Conductors[0].PolyphaseResidualA != nil {
		t.Error("the residual is given twice")
	}
	c := d.Conductors[1]
	want := cmplx.Abs(60 + cmplx.Rect(45, -120*math.Pi/180) + cmplx.Rect(30, 120*math.Pi/180))
	if c.PolyphaseResidualA == nil || c.PolyphaseResidualSigmaA == nil {
		t.Fatal("no residual for the three-phase set")
	}
	if math.Abs(*c.PolyphaseResidualA-want) > 1e-9 || !(*c.PolyphaseResidualSigmaA > 0) {
		t.Errorf("residual %.6f ± %.3g A, phasor arithmetic %.6f A", *c.PolyphaseResidualA, *c.PolyphaseResidualSigmaA, want)
	}
	if w := returnShareClause(&c); !strings.Contains(w, "conductors 1, 2 and 3") || !strings.Contains(w, "if they are one circuit") || strings.Contains(w, "carries back") {
		t.Errorf("the set's clause: %q", w)
	}
	// A balanced set leaves about nothing: its residual's sigma is then
	// first order in the currents' sigmas only.
	d = phaseDoc(30, []float64{30, 30}, []float64{-120, 120}, 0.1)
	if r := d.Conductors[1].PolyphaseResidualA; r == nil || *r > 0.01 {
		t.Errorf("a balanced set's residual %v, want about 0 A", r)
	}
}
