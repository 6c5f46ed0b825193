package main

import (
	"strconv"
	"strings"
	"testing"
)

// serviceEndScenario is an invented Brackwell Down survey: a 25 A DC main
// 1.0 m deep along east and an 8 A service 1.2 m north of it, 0.7 m deep,
// from east -100 m to SERVICE_END; thirteen 12 m traverses every 3 m from
// east 6 m (T01; T08 at 27 m, T09 at 30 m), the sensor 0.3 m up, 2 nT
// noise.
const serviceEndScenario = `name = "segend"
site = "Brackwell Down (invented)"
seed = SEED
start = "2026-06-01T10:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [48.0, 0.0]]
count = 13
spacing_m = 3.0
first_at_m = 6.0
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "main"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [1.0, 0.0, 0.0]
current_a = 25.0
[[conductor]]
name = "service"
kind = "polyline"
vertices = [[-100.0, 1.2, -0.7], [SERVICE_END, 1.2, -0.7]]
current_a = 8.0
`

// serviceEnds simulates the survey with the service ending at east end
// and returns the further-conductor findings that say a conductor ends.
func serviceEnds(t *testing.T, dir string, seed int, end string) []docFinding {
	t.Helper()
	text := strings.NewReplacer("SEED", strconv.Itoa(seed), "SERVICE_END", end).Replace(serviceEndScenario)
	log := simulateText(t, dir, "segend"+strconv.Itoa(seed)+"-"+end, text, ".csv")
	doc := locateDoc(t, "--group-by", "group", "--reference-z", "0", log)
	var out []docFinding
	for _, f := range doc.Findings {
		if f.Conductor > 1 && strings.Contains(f.Message, "appears to end") {
			out = append(out, f)
		}
	}
	return out
}

// TestLocateServiceEndBesideMain: the service ends at east 28.5 m, between
// T08 (27 m) and T09 (30 m) (the simulated truth). It is followed as
// conductor 2 to T08; past it the field of its end (a half-line's,
// Biot-Savart) is no line, and conductor 1's fits there miss their
// readings. Its end must be reported between T08 and T09 on seeds 1-3,
// naming conductor 1's fits that miss; the same survey with the service
// running on past the traverses (to east 300 m) must report no end.
// Before, no finding said that conductor 2 ended.
func TestLocateServiceEndBesideMain(t *testing.T) {
	dir := t.TempDir()
	for seed := 1; seed <= 3; seed++ {
		got := serviceEnds(t, dir, seed, "28.5")
		if len(got) != 1 {
			t.Errorf("seed %d: %d findings of conductor 2's end, want 1: %v", seed, len(got), got)
			continue
		}
		f := got[0]
		if len(f.Groups) != 2 || f.Groups[0] != "T08" || f.Groups[1] != "T09" {
			t.Errorf("seed %d: end bracketed by %v, want T08 and T09 (the service ends at east 28.5 m): %s", seed, f.Groups, f.Message)
		}
		if !strings.Contains(f.Message, "conductor 1's fits past it miss") || !strings.Contains(f.Message, "T09 by") {
			t.Errorf("seed %d: conductor 1's misfitting fits past the end not named: %s", seed, f.Message)
		}
	}
	if got := serviceEnds(t, dir, 1, "300.0"); len(got) != 0 {
		t.Errorf("a service running on past the survey reported as ending: %v", got)
	}
}
