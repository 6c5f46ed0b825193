package report

import (
	"bytes"
	"math"
	"regexp"
	"strconv"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// TestCurrentPlotMarksStepAtItsLocation: the current plot marks a step
// where its finding says it most likely is, the finding's "location
// (chainage)" value (README: "most likely at chainage ..."), shaded one
// sigma either side, and midway between the stations either side only
// when the finding gives no location. Before, every step was drawn at the
// midpoint: on a survey with a step placed at 99.8 ± 1.1 m between
// stations at 99.8 m and 109.8 m, the line stood at 104.8 m, 4.5 sigma
// from the finding.
func TestCurrentPlotMarksStepAtItsLocation(t *testing.T) {
	d := fenwickLane(false)
	var step *Finding
	for i := range d.Findings {
		if d.Findings[i].Kind == "current-step" {
			step = &d.Findings[i]
		}
	}
	if step == nil {
		t.Fatal("the fixture has no current step")
	}
	// A second step, fixture values, placed well off its bracket's midpoint.
	const at, sigma = 36.5, 2.0
	placed := *step
	placed.ChainageFrom, placed.ChainageTo = 30, 60
	placed.Values = append(append([]Value(nil), step.Values...), Value{Name: "location (chainage)", Value: at, Sigma: sigma, Unit: "m"})
	d.Findings = append(d.Findings, placed)

	p, err := alongPlot(d, d.Route, 0, "current", false)
	if err != nil {
		t.Fatal(err)
	}
	c := vgsvg.New(20*vg.Centimeter, 8.5*vg.Centimeter)
	dc := draw.New(c)
	p.Draw(dc)
	data := p.DataCanvas(dc)
	trX, _ := p.Transforms(&data)
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	svg := buf.String()

	// The step lines: vertical dashed paths in the warning colour.
	var xs []float64
	for _, m := range regexp.MustCompile(`<path d="M([-0-9.]+),[-0-9.]+L([-0-9.]+),[-0-9.]+" style="[^"]*stroke:#B3261E;stroke-dasharray`).FindAllStringSubmatch(svg, -1) {
		x0, _ := strconv.ParseFloat(m[1], 64)
		x1, _ := strconv.ParseFloat(m[2], 64)
		if x0 == x1 {
			xs = append(xs, x0)
		}
	}
	want := []float64{float64(trX((step.ChainageFrom + step.ChainageTo) / 2)), float64(trX(at))}
	if len(xs) != len(want) {
		t.Fatalf("%d step lines, want %d", len(xs), len(want))
	}
	for i := range want {
		if math.Abs(xs[i]-want[i]) > 0.01 {
			t.Errorf("step line %d at x = %.2f pt, want %.2f pt", i+1, xs[i], want[i])
		}
	}

	// The placed step's band: a filled rectangle from at-sigma to at+sigma.
	m := regexp.MustCompile(`<path d="M([-0-9.]+),[-0-9.]+L([-0-9.]+),[-0-9.]+L[^"]*" style="fill:#[0-9A-F]{6};fill-opacity:`).FindStringSubmatch(svg)
	if m == nil {
		t.Fatal("no one-sigma band drawn for the placed step")
	}
	a, _ := strconv.ParseFloat(m[1], 64)
	b, _ := strconv.ParseFloat(m[2], 64)
	if math.Abs(a-float64(trX(at-sigma))) > 0.01 || math.Abs(b-float64(trX(at+sigma))) > 0.01 {
		t.Errorf("band from x = %.2f to %.2f pt, want %.2f to %.2f", a, b, float64(trX(at-sigma)), float64(trX(at+sigma)))
	}
}
