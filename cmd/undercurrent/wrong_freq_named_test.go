package main

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"testing"
)

// wrongFreqSite is a tracer survey (a 2 A line at 512 Hz, 1 m deep, and
// 30 A of 50 Hz mains 3 m south) over three traverses at 5 nT of reading
// noise, logged at 4 kHz.
func wrongFreqSite(seed int) string {
	return fmt.Sprintf(`name = "wrong frequency"
site = "Brackenhythe tracer test"
seed = %d
start = "2026-05-02T09:00:00Z"
[origin]
lat_deg = 52.3
lon_deg = 0.2
height_m = 2.0
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 5
sample_rate_hz = 4000
[survey]
pattern = "traverses"
route = [[0.0, 0.0], [40.0, 0.0]]
count = 3
spacing_m = 8.0
first_at_m = 4.0
length_m = 10
speed_m_s = 1.0
turn_s = 3
zigzag = true
`, seed) + walkLine("tracer cable", 0, -1, 2, 512, 20) + walkLine("mains cable", -3, -0.6, 30, 50, 0)
}

// TestWrongFreqNamedWhenUnchecked: the tracer above located with --freq
// 640 (a wrong frequency the check cannot decide on: at 640 Hz no window
// holds a clear signal) found no current in any group, and the warnings
// counted the windows and offered conductors too deep or weak, never
// naming --freq. The run must now say the demodulation frequency may be
// wrong and name the log's line at the simulated 512 Hz (within a
// spectral bin, about 1 Hz at 4 kHz in one-second stretches) as the one
// to try; located at the simulated 512 Hz it finds the tracer and says
// nothing of the kind.
func TestWrongFreqNamedWhenUnchecked(t *testing.T) {
	_, log := simulateScenario(t, t.TempDir(), "wrongfreq", wrongFreqSite(1))
	doc := locateDoc(t, "--freq", "640", "--group-by", "group", log)
	w := warned(doc, "demodulation frequency may be wrong")
	if w == "" {
		t.Fatalf("no warning names --freq as the likely cause; warnings %q", doc.Warnings)
	}
	m := regexp.MustCompile(`--freq ([0-9.]+)\)`).FindStringSubmatch(w)
	if m == nil {
		t.Fatalf("warning %q names no frequency to try", w)
	}
	if f, _ := strconv.ParseFloat(m[1], 64); !(math.Abs(f-512) <= 1) {
		t.Errorf("warning names --freq %s, want the simulated tracer's 512 Hz", m[1])
	}
	right := locateDoc(t, "--freq", "512", "--group-by", "group", log)
	if w := warned(right, "demodulation frequency may be wrong"); w != "" {
		t.Errorf("at the simulated 512 Hz, warning %q", w)
	}
}
