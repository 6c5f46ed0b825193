package report

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// TestRoutePlotsDotTheUnsearchedStretch: on the current and depth plots a
// station not used (here the fixture's third station, its fit failed) is
// crossed by a dotted line, not a solid one, and an unsearched stretch a
// finding names is shaded over its chainage. Before, one solid segment
// joined the stations either side of three failed fits, a steady current
// drawn where the report said none was known (found in review).
func TestRoutePlotsDotTheUnsearchedStretch(t *testing.T) {
	d := fenwickLane(false)
	if len(d.Route.Stations) < 5 {
		t.Fatalf("fixture route of %d stations", len(d.Route.Stations))
	}
	gap := d.Route.Stations[2]
	d.Route.Stations[2].Used = false
	for i := range d.Groups {
		if d.Groups[i].Key == gap.Key {
			d.Groups[i].OK = false
		}
	}
	a, b := d.Route.Stations[1].Chainage, d.Route.Stations[3].Chainage
	d.Findings = append(d.Findings, Finding{Kind: "unsearched", Severity: SeverityCaution, ChainageFrom: a, ChainageTo: b,
		Groups: []string{gap.Key}, Message: "fixture"})
	for _, which := range []string{"current", "depth"} {
		p, err := alongPlot(d, d.Route, 0, which, false)
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
		xa, xb := float64(trX(a)), float64(trX(b))
		// Lines in the fit's colour: a two-point path from a to b,
		// dashed; no solid path reaching from a past b.
		var dotted, solidAcross bool
		for _, m := range regexp.MustCompile(`<path d="([^"]*)" style="([^"]*stroke:#1B6F8A[^"]*)"`).FindAllStringSubmatch(svg, -1) {
			var xs []float64
			for _, q := range regexp.MustCompile(`[ML]([-0-9.]+),`).FindAllStringSubmatch(m[1], -1) {
				x, _ := strconv.ParseFloat(q[1], 64)
				xs = append(xs, x)
			}
			if len(xs) < 2 {
				continue
			}
			lo, hi := xs[0], xs[len(xs)-1]
			across := lo <= xa+0.01 && hi >= xb-0.01
			dashed := strings.Contains(m[2], "stroke-dasharray")
			if across && dashed && len(xs) == 2 {
				dotted = true
			}
			if across && !dashed {
				solidAcross = true
			}
		}
		band := regexp.MustCompile(`fill:#C[89]8[9A]00;fill-opacity`).MatchString(svg)
		if !dotted || solidAcross {
			t.Errorf("%s plot: dotted line across %s %v, solid line across it %v; want dotted only", which, gap.Key, dotted, solidAcross)
		}
		if !band {
			t.Errorf("%s plot: the unsearched stretch %g-%g m is not shaded", which, a, b)
		}
	}
}

// TestPlanLeavesWholeRouteFindingUnmarked: an attenuation finding (the
// route's current falling steadily end to end) placed at the same point
// as a current step gets no mark or number on the plan view; the step
// keeps its own ("1", not "1,2"). Before, the two shared one triangle
// labelled "1,2", a dig site for a finding that says there is none (found
// in review on a welded main).
func TestPlanLeavesWholeRouteFindingUnmarked(t *testing.T) {
	at := [3]float64{248.1, 31.1, -1.2}
	fs := []Finding{
		{Kind: "current-step", Severity: SeverityWarning, Position: at},
		{Kind: "attenuation", Severity: SeverityInfo, Position: at},
	}
	st := text.Style{Font: font.Font{Variant: "Sans", Size: vg.Points(9)}, Handler: plot.DefaultTextHandler}
	ls := findingLabels(fs, 0.5, st)
	if len(ls) != 1 || ls[0].text != "1" {
		var got []string
		for _, l := range ls {
			got = append(got, l.text)
		}
		t.Errorf("plan labels %q, want the step's \"1\" alone", strings.Join(got, " "))
	}
}
