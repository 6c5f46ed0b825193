package main

import (
	"math"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/report"
)

// oneCable25 is one 25 A DC cable 1.1 m down under seven 8 m traverses with
// 2 nT readings, running 10 degrees off the route so that it crosses them 0.3
// to 3.8 m from their centres (an invented site).
const oneCable25 = `name = "one-cable"
site = "Harrow Fen substation (invented)"
seed = 1
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 2
[survey]
route = [[0.0, 0.0], [14.0, 24.248711305964285]]
count = 7
spacing_m = 4
first_at_m = 2.0
length_m = 8
speed_m_s = 0.5
turn_s = 10.0
sample_spacing_m = 0.1
[[conductor]]
name = "cable"
kind = "line"
point = [0, 0, -1.1]
direction = [0.6427876096865393, 0.766044443118978, -0.0]
current_a = 25
`

// TestLocateForcedCountOnOneCable: --count 2 on traverses over one cable.
// Every traverse finds the cable (25 A, 1.4 m below the sensors, within
// kSigma sigmas; the field of an infinite line, Biot-Savart), sound, and says
// that two lines are more than the readings support. Before, on this seed
// T06 was fitted as a collapsed pair of 69 ± 228527 A and -45 ± 228526 A
// missing the readings by 106 nT and reported as "no current found", where
// the automatic count gives 25.003 ± 0.015 A at 1.98 nT; on seed 18 T07
// split the cable into 23 ± 18 A and 1.9 ± 18 A, "no current found" again.
func TestLocateForcedCountOnOneCable(t *testing.T) {
	for _, seed := range []string{"1", "18"} {
		t.Run("seed"+seed, func(t *testing.T) {
			sc := strings.Replace(oneCable25, "seed = 1\n", "seed = "+seed+"\n", 1)
			log := simulateText(t, t.TempDir(), "one-cable", sc, ".csv")
			forcedCountOnOneCable(t, locateInto[report.Document](t, "--group-by", "group", "--count", "2", log))
		})
	}
}

func forcedCountOnOneCable(t *testing.T, doc *report.Document) {
	if len(doc.Groups) != 7 {
		t.Fatalf("%d groups, want 7", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if !g.OK || g.Problem != "" || len(g.Sources) != 2 {
			t.Errorf("%s: OK %v, %d sources, problem %q; want a sound fit of two lines", g.Key, g.OK, len(g.Sources), g.Problem)
			continue
		}
		s := g.Sources[0]
		if math.Abs(math.Abs(s.Current)-25) > kSigma*s.CurrentSigma || math.Abs(s.Depth-1.4) > kSigma*s.DepthSigma {
			t.Errorf("%s: first line %.4g ± %.2g A at %.4g ± %.2g m, want the cable's 25 A at 1.4 m", g.Key, s.Current, s.CurrentSigma, s.Depth, s.DepthSigma)
		}
		said := false
		for _, n := range g.Notes {
			said = said || strings.HasPrefix(n, inverse.UnsupportedCountNote)
		}
		if !said {
			t.Errorf("%s: no note that two lines are more than the readings support: %q", g.Key, g.Notes)
		}
	}
	for _, f := range doc.Findings {
		if strings.Contains(f.Message, "failed") || strings.Contains(f.Message, "no current") {
			t.Errorf("finding: %s", f.Message)
		}
	}
}
