package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// baseNoiseScenario is the single line of testdata/scenarios/single-line.toml
// (25 A at 1.1 m below ground, seven traverses) read 50 times a second
// (sample_spacing 0.01 m at 0.5 m/s) with 2 nT of noise, against a base
// read once a second with 1 nT of noise: each base value is shared by 50
// survey readings. The seed and the base's noise are filled in.
const baseNoiseScenario = `name = "base-noise"
site = "Harrow Fen substation, earthing conductor"
seed = %d
start = "2026-02-02T14:00:00Z"

[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [6.0, 30.0, -12.0]

[sensor]
height_m = 0.3
noise_nt = 2.0

[survey]
count = 7
spacing_m = 4.0
first_at_m = 2.0
length_m = 8.0
speed_m_s = 0.5
sample_spacing_m = 0.01
turn_s = 10.0

[base]
sample_rate_hz = 1.0
noise_nt = %g
margin_s = 60.0

[[conductor]]
name = "earthing conductor"
kind = "line"
point = [0.0, 0.0, -1.1]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = 25.0
`

// TestBaseNoiseInSigmas checks the fits' sigmas against simulated truth
// when the base record's own noise is shared by many survey readings
// (found in review: 0.2 nT of base noise under a 250 Hz log gave pulls of
// spread 1.8, 1 nT gave 7.2, all "sound", no warning). Here the base adds
// 50 x 1² / 2² = 12.5 times the survey's own variance to the fits (for
// weights smooth over a second: basenoise.go), so sigmas that counted the
// survey's noise only were 3.7 times too small. Over six seeds of seven
// traverses the RMS of the pulls (fit minus truth over sigma) of current
// and depth must lie within 0.6 and 1.5 (one for honest sigmas; the RMS of
// 42 standard normal values lies within 1 ± 0.33 at over 3 sigma), and a
// warning must say that the base's noise widened them.
func TestBaseNoiseInSigmas(t *testing.T) {
	var pc, pd []float64
	for seed := 1; seed <= 6; seed++ {
		dir := t.TempDir()
		scen := filepath.Join(dir, "scen.toml")
		if err := os.WriteFile(scen, []byte(fmt.Sprintf(baseNoiseScenario, seed, 1.0)), 0o644); err != nil {
			t.Fatal(err)
		}
		sc, err := simulate.Load(scen)
		if err != nil {
			t.Fatal(err)
		}
		log, base := filepath.Join(dir, "log.arrows"), filepath.Join(dir, "base.csv")
		mustCLI(t, "simulate", scen, "-o", log, "--base-log", base)
		doc := locateInto[struct {
			resultDoc
			BaseStation *struct {
				Summary string `json:"summary"`
			} `json:"base_station"`
		}](t, "--count", "1", "--group-by", "group", "--reference-z", "0", "--base", base, log)
		warned := false
		for _, w := range doc.Warnings {
			warned = warned || strings.Contains(w, "its own noise") && strings.Contains(w, "uncertainties were widened")
		}
		if !warned {
			t.Errorf("seed %d: no warning of the base's noise; warnings: %q", seed, doc.Warnings)
		}
		if doc.BaseStation == nil || !strings.Contains(doc.BaseStation.Summary, "widened the fits' uncertainties") {
			t.Errorf("seed %d: the base summary does not give the widening: %+v", seed, doc.BaseStation)
		}
		truth := map[string]simulate.Crossing{}
		for _, c := range sc.Crossings() {
			truth[c.Line] = c
		}
		for _, g := range doc.Groups {
			c, ok := truth[g.Key]
			if !ok || len(g.Sources) != 1 {
				t.Fatalf("seed %d: group %s: %d sources, truth found %v", seed, g.Key, len(g.Sources), ok)
			}
			s := g.Sources[0]
			align := s.Direction[0]*c.Dir[0] + s.Direction[1]*c.Dir[1] + s.Direction[2]*c.Dir[2]
			pc = append(pc, (s.Current-c.Current*math.Copysign(1, align))/s.CurrentSigma)
			pd = append(pd, (s.Depth-c.Depth)/s.DepthSigma)
		}
	}
	for _, q := range []struct {
		name  string
		pulls []float64
	}{{"current", pc}, {"depth", pd}} {
		var ss float64
		for _, p := range q.pulls {
			ss += p * p
		}
		rms := math.Sqrt(ss / float64(len(q.pulls)))
		t.Logf("%s: RMS pull %.2f over %d traverses", q.name, rms, len(q.pulls))
		if rms < 0.6 || rms > 1.5 {
			t.Errorf("%s: RMS pull %.2f over %d traverses, want 0.6 to 1.5 (sigmas that cover the base's noise)", q.name, rms, len(q.pulls))
		}
	}
}

// TestQuietBaseNotWarned: the same survey against a base with 0.05 nT of
// noise, where the base adds 50 x 0.05² / 2² = 3% to the fits' variance,
// has its sigmas widened by under 5% and draws no warning.
func TestQuietBaseNotWarned(t *testing.T) {
	dir := t.TempDir()
	scen := filepath.Join(dir, "scen.toml")
	if err := os.WriteFile(scen, []byte(fmt.Sprintf(baseNoiseScenario, 1, 0.05)), 0o644); err != nil {
		t.Fatal(err)
	}
	log, base := filepath.Join(dir, "log.arrows"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", scen, "-o", log, "--base-log", base)
	doc := locateInto[struct {
		resultDoc
		BaseStation *struct {
			Summary string `json:"summary"`
		} `json:"base_station"`
	}](t, "--count", "1", "--group-by", "group", "--reference-z", "0", "--base", base, log)
	for _, w := range doc.Warnings {
		if strings.Contains(w, "its own noise") {
			t.Errorf("a quiet base warned of: %s", w)
		}
	}
	var k float64
	if doc.BaseStation == nil {
		t.Fatal("no base_station in the document")
	}
	if i := strings.Index(doc.BaseStation.Summary, "up to x"); i < 0 {
		t.Errorf("the base summary does not give the widening: %s", doc.BaseStation.Summary)
	} else if _, err := fmt.Sscanf(doc.BaseStation.Summary[i:], "up to x%g", &k); err != nil || k >= 1.05 || k < 1 {
		t.Errorf("widened up to x%g (%v), want under x1.05: %s", k, err, doc.BaseStation.Summary)
	}
}

// TestScaleSigmas checks that the widening reaches every uncertainty of a
// fit (sources, pairs, background, covariance) and leaves the estimates
// and the reading noise alone.
func TestScaleSigmas(t *testing.T) {
	p := &inverse.Problem{Sigma: 2}
	for i := range 81 {
		x := float64(i)*0.1 - 4
		p.Points = append(p.Points, [3]float64{x, 0, 0.3})
	}
	line := inverse.Line{Point: [3]float64{0, 0, -1.1}, Dir: [3]float64{0, 1, 0}}
	for i, r := range p.Points {
		b := line.Field(r, 25)
		// Deterministic ±1.5 nT of "noise" so that the fit has sigmas.
		d := 1.5 * math.Sin(float64(7*i))
		p.Fields = append(p.Fields, [3]float64{b[0]*1e9 + d, b[1]*1e9 - d, b[2]*1e9 + d})
	}
	r, err := inverse.FitLines(p, &inverse.Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	was := *r
	src := append([]inverse.SourceEstimate(nil), r.Sources...)
	cov := r.Covariance.At(0, 0)
	r.Pairs = []inverse.PairEstimate{{NetCurrentSigma: 0.5, DepthSigma: 0.1}}
	scaleSigmas(r, 3)
	if r.Sigma != was.Sigma || r.Sources[0].Current != src[0].Current || r.Sources[0].Depth != src[0].Depth {
		t.Errorf("estimates or noise changed: sigma %g -> %g, current %g -> %g", was.Sigma, r.Sigma, src[0].Current, r.Sources[0].Current)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"current sigma", r.Sources[0].CurrentSigma, 3 * src[0].CurrentSigma},
		{"depth sigma", r.Sources[0].DepthSigma, 3 * src[0].DepthSigma},
		{"offset sigma", r.Sources[0].OffsetSigma, 3 * src[0].OffsetSigma},
		{"background sigma", r.BackgroundSigma[2], 3 * was.BackgroundSigma[2]},
		{"pair net current sigma", r.Pairs[0].NetCurrentSigma, 1.5},
		{"pair depth sigma", r.Pairs[0].DepthSigma, 0.3},
		{"covariance", r.Covariance.At(0, 0), 9 * cov},
	} {
		if math.Abs(c.got-c.want) > 1e-12*math.Abs(c.want) || c.want == 0 {
			t.Errorf("%s: %g, want %g", c.name, c.got, c.want)
		}
	}
}
