package simulate

import (
	"math"
	"strings"
	"testing"
)

// harmonicLine is a line running north 1 m down carrying 100 A at 50 Hz
// and a 5th harmonic of 20 A at 250 Hz, read by a noiseless sensor 0.3 m
// up in no Earth field, walked across it east at 1000 readings a second.
const harmonicLine = `
name = "harmonic-line"
start = "2026-05-12T10:00:00Z"
[earth]
field_nt = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 0.0
sample_rate_hz = 1000.0
[survey]
route = [[0.0, 0.0], [0.0, 10.0]]
count = 1
spacing_m = 1.0
first_at_m = 5.0
length_m = 4.0
speed_m_s = 0.5
[[conductor]]
name = "phase"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 100.0
frequency_hz = 50.0
phase_deg = 30.0
harmonics = [{frequency_hz = 250.0, current_a = 20.0, phase_deg = -40.0}]
`

// TestSimulateHarmonicsAddTones: a conductor's harmonics add their own
// tones to its field. Each reading is checked against Biot-Savart for an
// infinite line, |B| = mu0 |i(t)| / (2 pi r) with mu0 = 4 pi 1e-7 T m/A
// (the classical value; CODATA's differs by 1e-10), where i(t) is the sum
// of root-2 times each RMS current at its frequency and phase (phases at
// Unix time zero, as the scenario format says).
func TestSimulateHarmonicsAddTones(t *testing.T) {
	sc, err := Parse([]byte(harmonicLine), "harmonic-line.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	var worst, peak float64
	for j := range s.Time {
		tt := s.Time[j]
		i := math.Sqrt2 * (100*math.Cos(2*math.Pi*math.Mod(50*tt, 1)+30*math.Pi/180) +
			20*math.Cos(2*math.Pi*math.Mod(250*tt, 1)-40*math.Pi/180))
		r := math.Hypot(s.X[j], s.Z[j]+1)
		want := 2e-7 * math.Abs(i) / r * 1e9
		got := math.Sqrt(s.Bx[j]*s.Bx[j] + s.By[j]*s.By[j] + s.Bz[j]*s.Bz[j])
		worst = math.Max(worst, math.Abs(got-want))
		peak = math.Max(peak, want)
	}
	// A time near 1.78e9 s is held to 2.4e-7 s, 6e-5 of a 250 Hz cycle:
	// the check's own phase (f·t in float64) is good to about 4e-4 rad,
	// some 2 nT of the 20 A tone's 4350 nT peak.
	if worst > 2e-4*peak {
		t.Errorf("readings differ from Biot-Savart for the two tones by up to %.3g nT (peak %.0f nT)", worst, peak)
	}
	// The 250 Hz tone is a band of its own in the peaks together; the
	// conductor's own peak stays its 50 Hz current's.
	bands := sc.PeakTotalFields()
	if len(bands) != 2 || bands[0].Frequency != 50 || bands[1].Frequency != 250 {
		t.Fatalf("bands %+v, want 50 and 250 Hz", bands)
	}
	// Straight above the line, r = 1.3 m: 20 A gives 3077 nT RMS.
	if want := 2e-7 * 20 / 1.3 * 1e9; math.Abs(bands[1].Peak-want) > 1e-3*want {
		t.Errorf("250 Hz peak %.2f nT, Biot-Savart %.2f nT", bands[1].Peak, want)
	}
	if want := 2e-7 * 100 / 1.3 * 1e9; math.Abs(sc.PeakFields()[0]-want) > 1e-3*want {
		t.Errorf("conductor's own peak %.2f nT, Biot-Savart for its 100 A %.2f nT", sc.PeakFields()[0], want)
	}
	for _, c := range sc.Crossings() {
		if len(c.Harmonics) != 1 || c.Harmonics[0].Current != 20 {
			t.Errorf("crossing %s: harmonics %+v, want the 20 A 250 Hz tone", c.Line, c.Harmonics)
		}
	}
}

// TestSimulateHarmonicsRefused: harmonics that cannot be simulated are
// refused with the key named.
func TestSimulateHarmonicsRefused(t *testing.T) {
	for _, tc := range []struct{ from, to, want string }{
		{"frequency_hz = 250.0, current_a = 20.0", "frequency_hz = 50.0, current_a = 20.0", "is the conductor's own frequency_hz"},
		{"frequency_hz = 250.0, current_a = 20.0", "frequency_hz = 600.0, current_a = 20.0", "below half the sample rate"},
		{"frequency_hz = 250.0, current_a = 20.0", "frequency_hz = 0.0, current_a = 20.0", "above 0"},
		{"harmonics = [{frequency_hz = 250.0, current_a = 20.0, phase_deg = -40.0}]", "harmonics = [{frequency_hz = 250.0, current_a = 20.0}, {frequency_hz = 250.0, current_a = 5.0}]", "both at 250 Hz"},
	} {
		text := strings.Replace(harmonicLine, tc.from, tc.to, 1)
		_, err := Parse([]byte(text), "h.toml")
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "harmonic") {
			t.Errorf("%s: error %v, want one saying %q", tc.to, err, tc.want)
		}
	}
}
