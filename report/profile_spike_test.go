package report

import (
	"bytes"
	"math"
	"sort"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// spikeScenario is a 25 A DC line 1.1 m under level ground crossed by
// three 8 m traverses read every 5 mm (1601 readings each), 0.3 m over the
// ground with 2 nT noise: an invented Harrow Fen earthing conductor.
const spikeScenario = `name = "spike"
site = "Harrow Fen earthing conductor (invented)"
seed = 12
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
count = 3
spacing_m = 4.0
first_at_m = 2.0
length_m = 8.0
speed_m_s = 0.5
sample_spacing_m = 0.005
turn_s = 10.0
[[conductor]]
name = "earthing conductor"
kind = "line"
point = [0.0, 0.0, -1.1]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = 25.0
`

// TestPoorFitProfileKeepsSpikes: three consecutive readings of the middle
// traverse are given a glitch of +3000 nT east and -3000 nT up (a logger
// or radio spike; the simulated truth has none). The fit is rightly poor,
// and its profile, thinned to 240 of the 1601 readings, is the data of the
// plot the report offers for that finding. Thinned by a fixed stride it
// left all three out, and the plot showed a clean fit: the plotted
// readings' largest misfit was 33 nT. The profile must keep all three
// (|measured - predicted| over 2000 nT, from the injected 3000 nT less
// what the fit absorbed), still span the readings' offsets end to end,
// and the report must plot that group.
func TestPoorFitProfileKeepsSpikes(t *testing.T) {
	sc, err := simulate.Parse([]byte(spikeScenario), "spike.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	spiked := keys[1]
	p := byKey[spiked]
	if len(p.Points) < 1500 {
		t.Fatalf("%s has %d readings, want about 1601", spiked, len(p.Points))
	}
	mid := len(p.Points) / 2
	glitch := map[[3]float64]bool{}
	for i := mid; i < mid+3; i++ {
		p.Fields[i][0] += 3000
		p.Fields[i][2] -= 3000
		glitch[p.Points[i]] = true
	}
	ground := 0.0
	var fits []Fit
	for _, k := range keys {
		res, err := inverse.FitLines(byKey[k], &inverse.Settings{ReferenceZ: &ground})
		fits = append(fits, Fit{Key: k, Problem: byKey[k], Result: res, Err: err, MeasuredNoise: secondDiffNoise(byKey[k].Fields)})
	}
	d, err := Build(Document{}, fits, &BuildSettings{})
	if err != nil {
		t.Fatal(err)
	}
	var g *Group
	for i := range d.Groups {
		if d.Groups[i].Key == spiked {
			g = &d.Groups[i]
		}
	}
	if g == nil || g.Profile == nil {
		t.Fatalf("no profile for %s", spiked)
	}
	pr := g.Profile
	if n := len(pr.Offset); n > 240 || n < 200 {
		t.Errorf("profile keeps %d readings, want at most 240 and most of them", n)
	}
	var kept int
	var worst float64
	for i, q := range pr.Positions {
		var r2 float64
		for a := range 3 {
			r := pr.Measured[i][a] - pr.Predicted[i][a]
			r2 += r * r
		}
		worst = math.Max(worst, math.Sqrt(r2))
		if glitch[q] {
			kept++
			if math.Sqrt(r2) < 2000 {
				t.Errorf("glitch reading at %v misfit %.0f nT in the profile, want over 2000", q, math.Sqrt(r2))
			}
		}
	}
	if kept != 3 {
		t.Errorf("profile of %s keeps %d of the 3 glitch readings (largest plotted misfit %.0f nT)", spiked, kept, worst)
	}
	// The ends of the traverse are still plotted: the offsets span what
	// the readings span (8 m, less the part not across the conductor).
	if span := pr.Offset[len(pr.Offset)-1] - pr.Offset[0]; span < 7.5 {
		t.Errorf("profile spans %.2f m of offset, want the traverse's 8 m", span)
	}
	if !sort.Float64sAreSorted(pr.Offset) {
		t.Error("profile offsets not in order")
	}
	if g.Problem == "" {
		t.Errorf("%s with a 3000 nT spike not flagged poor", spiked)
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "measured and fitted field, group "+spiked) {
		t.Errorf("report does not plot the poor fit's group %s", spiked)
	}
}
