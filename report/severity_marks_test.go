package report

import (
	"image/color"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// relLuminance is the relative luminance of c as WCAG 2.2 defines it
// (W3C, "Web Content Accessibility Guidelines 2.2", definition of
// relative luminance, sRGB).
func relLuminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		x := float64(v) / 0xffff
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}

// TestSeverityMarksApartInGrey: the plan view's marks of a warning, a
// caution and a note differ by how much of the triangle is inked, not by
// colour alone: drawn and read as a grey print, each covers clearly more
// than the next (solid, half filled, hollow). And every mark's colour stands at
// least 3:1 against white paper (WCAG 2.2 success criterion 1.4.11,
// non-text contrast, with its contrast ratio (L1+0.05)/(L2+0.05)); the
// page's amber, #c98a00, stood at 2.95:1. Before, all three were the same
// thin hollow triangle.
func TestSeverityMarksApartInGrey(t *testing.T) {
	ink := map[string]float64{}
	for _, s := range []string{SeverityWarning, SeverityCaution, SeverityInfo} {
		if ratio := 1.05 / (relLuminance(severityColour(s)) + 0.05); ratio < 3 {
			t.Errorf("%s mark's colour stands %.2f:1 against white, want at least 3:1", s, ratio)
		}
		const side = 40
		c := vgimg.New(side, side)
		dc := draw.New(c)
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		glyph := severityGlyph(s)
		dc.DrawGlyph(draw.GlyphStyle{Color: severityColour(s), Radius: markRadius * 3, Shape: glyph}, vg.Point{X: side / 2, Y: side / 2})
		img := c.Image()
		n, dark := 0, 0.0
		for y := img.Bounds().Min.Y; y < img.Bounds().Max.Y; y++ {
			for x := img.Bounds().Min.X; x < img.Bounds().Max.X; x++ {
				n++
				dark += 1 - relLuminance(img.At(x, y)) // ink laid in grey
			}
		}
		ink[s] = dark / float64(n)
	}
	if !(ink[SeverityWarning] > 1.3*ink[SeverityCaution] && ink[SeverityCaution] > 2*ink[SeverityInfo]) {
		t.Errorf("grey ink of the marks: warning %.3f, caution %.3f, note %.3f; want the warning's 1.3 times the caution's, and that twice the note's", ink[SeverityWarning], ink[SeverityCaution], ink[SeverityInfo])
	}

	// The plan view draws them so: the warning's and the caution's marks
	// are filled, in their colours.
	d := fenwickLane(false)
	d.Findings = []Finding{
		{Kind: "shallow-cover", Severity: SeverityWarning, Position: d.Route.Stations[3].Point, Message: "fixture warning"},
		{Kind: "poor-fit", Severity: SeverityCaution, Position: d.Route.Stations[7].Point, Message: "fixture caution"},
	}
	p, err := planPlot(d, planSide)
	if err != nil {
		t.Fatal(err)
	}
	page, err := svg(p, planSide, planSide, "plan")
	if err != nil {
		t.Fatal(err)
	}
	for _, fill := range []string{"fill:#B3261E", "fill:#A87000"} {
		if !strings.Contains(string(page), fill) {
			t.Errorf("plan view has no mark drawn with %s", fill)
		}
	}
}
