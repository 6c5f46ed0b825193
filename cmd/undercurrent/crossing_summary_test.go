package main

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// pipeCrossing is a 20 A cable 1.0 m down along north and a 5 A pipe
// 1.8 m down crossing it at north 14 m at 45 degrees (DC) or 135 degrees
// (AC, 50 Hz), under nine 10 m traverses every 3 m from north 2 m: an
// invented Kestrel Moor survey. SEED, NOISE, SIGNAL, CABLEAC, PIPEAC and
// PIPEDIR are filled in.
const pipeCrossing = `name = "pipe-crossing"
site = "Kestrel Moor gas spur (invented)"
seed = SEED
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = NOISE
SIGNAL[survey]
route = [[0.0, 0.0], [0.0, 28.0]]
count = 9
spacing_m = 3
first_at_m = 2.0
length_m = 10
turn_s = 10.0
SPEED[[conductor]]
name = "cable"
kind = "line"
point = [0, 0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 20
CABLEAC[[conductor]]
name = "pipe"
kind = "line"
point = [0, 14, -1.8]
direction = PIPEDIR
current_a = 5
PIPEAC`

var crossingRE = regexp.MustCompile(`Conductor 2 crosses conductor 1 at about ([0-9]+)° near chainage (-?[0-9.]+) m`)

// TestLocateCrossingSummarised: the summary says that the pipe crosses the
// cable, at about 45 degrees, near chainage 12 m (north 14 m, the first
// traverse at north 2 m): the crossing point of two straight lines, plane
// geometry. Before, it said "Conductor 2 was followed for 9 m in 5
// groups, 0.0025 m to the left of conductor 1", the median of offsets
// sweeping from -6 to +6 m. Five seeds, DC and AC.
func TestLocateCrossingSummarised(t *testing.T) {
	dir := t.TempDir()
	for _, ac := range []bool{false, true} {
		r := strings.NewReplacer("NOISE", "2", "SIGNAL", "", "SPEED", "speed_m_s = 0.5\nsample_spacing_m = 0.125\n",
			"CABLEAC", "", "PIPEAC", "", "PIPEDIR", "[0.7071067811865475, 0.7071067811865476, 0.0]")
		args := []string{"--group-by", "group"}
		if ac {
			r = strings.NewReplacer("NOISE", "3", "SIGNAL", "sample_rate_hz = 250\n", "SPEED", "speed_m_s = 1.0\n",
				"CABLEAC", "frequency_hz = 50\nphase_deg = 0\n", "PIPEAC", "frequency_hz = 50\nphase_deg = 60\n",
				"PIPEDIR", "[0.7071067811865476, -0.7071067811865475, 0.0]")
			args = append(args, "--freq", "50")
		}
		for seed := 1; seed <= 5; seed++ {
			name := fmt.Sprintf("cross-ac%v-%d", ac, seed)
			log := simulateText(t, dir, name, strings.Replace(r.Replace(pipeCrossing), "SEED", strconv.Itoa(seed), 1), ".csv")
			out := mustCLI(t, append(append([]string{"locate"}, args...), log)...)
			m := crossingRE.FindStringSubmatch(out)
			if m == nil {
				t.Errorf("%s: no crossing in the summary:\n%s", name, grepLines(out, "Conductor 2"))
				continue
			}
			angle, _ := strconv.ParseFloat(m[1], 64)
			ch, _ := strconv.ParseFloat(m[2], 64)
			if math.Abs(angle-45) > 3 || math.Abs(ch-12) > 0.5 {
				t.Errorf("%s: crossing at about %g° near chainage %g m, want 45° at 12 m: %s", name, angle, ch, m[0])
			}
		}
	}
}

// grepLines returns the lines of s that contain sub.
func grepLines(s, sub string) string {
	var out []string
	for _, l := range strings.Split(s, "\n") {
		if strings.Contains(l, sub) {
			out = append(out, l)
		}
	}
	return strings.Join(out, "\n")
}
