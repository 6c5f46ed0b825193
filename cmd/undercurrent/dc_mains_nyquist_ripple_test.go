package main

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// simulateDCLog writes the scenario text to dir/name.toml and simulates
// it (Biot-Savart, the simulate command) into dir/name.csv; every is the
// share of the simulated rows kept: 2 keeps every other reading, the same
// survey logged at half the rate (the simulator refuses to put a line at
// or over half its rate, so a 100 Hz log of 50 Hz mains is made from a
// 200 Hz one).
func simulateDCLog(t *testing.T, dir, name, text string, every int) string {
	t.Helper()
	toml := filepath.Join(dir, name+".toml")
	if err := os.WriteFile(toml, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, name+".csv")
	mustCLI(t, "simulate", toml, "-o", log)
	if every <= 1 {
		return log
	}
	data, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	row := 0
	header := false
	for _, l := range strings.Split(strings.TrimRight(string(data), "\n"), "\n") {
		if strings.HasPrefix(l, "#") || !header {
			header = header || !strings.HasPrefix(l, "#")
			out = append(out, l)
			continue
		}
		if row%every == 0 {
			out = append(out, l)
		}
		row++
	}
	if err := os.WriteFile(log, []byte(strings.Join(out, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	return log
}

// dcStationRow reads a station row of locate's table: group, current,
// its sigma, depth, its sigma, rms.
var dcStationRow = regexp.MustCompile(`(?m)^(T\d\d) +[0-9.]+ m +([0-9.]+) ± ([0-9.]+) +([0-9.]+) ± ([0-9.]+) +([0-9.]+)`)

// checkDCStations checks every station row of out against a line of
// current amps at depth m below the sensors (simulated truth): within
// 3 sigma plus 0.1% of the current and 1 mm of depth; rmsMax bounds each
// fit's rms, nT. It returns the rows read.
func checkDCStations(t *testing.T, out string, amps, depth, rmsMax float64) int {
	t.Helper()
	rows := dcStationRow.FindAllStringSubmatch(out, -1)
	for _, m := range rows {
		v := make([]float64, 5)
		for i := range v {
			v[i], _ = strconv.ParseFloat(m[i+2], 64)
		}
		if math.Abs(v[0]-amps) > 3*v[1]+0.001*amps {
			t.Errorf("%s: %.5f ± %.5f A, want %g A", m[1], v[0], v[1], amps)
		}
		if math.Abs(v[2]-depth) > 3*v[3]+0.001 {
			t.Errorf("%s: depth %.5f ± %.5f m, want %g m", m[1], v[2], v[3], depth)
		}
		if v[4] > rmsMax {
			t.Errorf("%s: rms %.3g nT, want under %g nT", m[1], v[4], rmsMax)
		}
	}
	return len(rows)
}

// nyquistScenario is a DC survey (Corran Flats, invented) of a
// cathodically protected main carrying 3 A, 1.2 m down, beside a 20 A,
// 50 Hz low-voltage cable 4 m off, 0.7 m down, whose field at the
// traverses is some hundreds of times the main's; logged at 200 Hz, and
// kept at 100 Hz by the test.
const nyquistScenario = `name = "corran-flats-100hz"
site = "Corran Flats CP main beside a 50 Hz cable (invented)"
seed = 7
start = "2026-03-04T10:00:00Z"
[earth]
field_nt = [1200.0, 19800.0, -44600.0]
[sensor]
height_m = 0.3
noise_nt = 1.0
sample_rate_hz = 200.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 5
spacing_m = 10.0
first_at_m = 0.0
length_m = 12.0
speed_m_s = 0.6
turn_s = 5.0
[[conductor]]
name = "CP main"
kind = "line"
point = [0.0, 0.0, -1.2]
direction = [1.0, 0.0, 0.0]
current_a = 3.0
[[conductor]]
name = "LV cable"
kind = "line"
point = [0.0, 4.0, -0.7]
direction = [1.0, 0.0, 0.0]
current_a = 20.0
frequency_hz = 50.0
phase_deg = 60.0
`

// TestDCMainsAtNyquist100Hz: a DC survey beside a 50 Hz cable logged at
// 100 Hz, two readings a cycle, the mains exactly at the Nyquist
// frequency, alternating in sign from reading to reading (simulated
// truth: the 200 Hz simulation with every other reading kept). By
// default the mains are found and averaged over whole cycles (blocks of
// two readings, taken as a triangle of three), and every traverse gives
// the main's 3 A at 1.5 m below the sensors. Before, the line search
// stopped a bin short of the Nyquist frequency: no alternating field was
// named, nothing was averaged, and every traverse read "no current found"
// (found in review). With --dc-mains off the run names the alternating
// field.
//
// And in a plain series (analytic truth, mainsLog): a line at the Nyquist
// frequency a sin(2 pi f t + phi), read at t = k/fs, is a sin(phi)
// (-1)^k: the RMS found per component is that amplitude, not a/sqrt 2
// (the readings see the line's value at its phase only; read at its
// zeros it would be invisible, and harmless).
func TestDCMainsAtNyquist100Hz(t *testing.T) {
	s := mainsLog(100, 50, 1000, func(t float64) float64 { return t }, nil)
	f, rms, share, ok := alternatingLine(s)
	// mainsLog's axes: amplitudes 1, 0.7 and 0.5 of amp at phases 0.3,
	// 1.9 and 0.8 rad, read at whole multiples of 10 ms.
	want := 1000 * math.Sqrt((math.Pow(math.Sin(0.3), 2)+math.Pow(0.7*math.Sin(1.9), 2)+math.Pow(0.5*math.Sin(0.8), 2))/3)
	if !ok || math.Abs(f-50) > 0.1 || math.Abs(rms-want) > 0.05*want || share < 0.9 {
		t.Errorf("a 50 Hz line in a 100 Hz log: found %v at %.4g Hz, %.4g nT RMS (want %.4g), share %.3g", ok, f, rms, want, share)
	}
	a, note, alert := dcMains(&locateOptions{dcMainsAuto: true}, "mains.csv", s)
	if note == "" || a == s {
		t.Fatalf("a 100 Hz log of 50 Hz mains is not averaged by default (alert %q)", alert)
	}
	if d := mainsLeftOver(a); d > 0.05 {
		t.Errorf("the averaged readings depart from the direct current's field by %.3g nT: %s", d, note)
	}

	dir := t.TempDir()
	log := simulateDCLog(t, dir, "nyquist", nyquistScenario, 2)
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", log)
	out := stdout + stderr
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, out)
	}
	if !strings.Contains(out, "5 sound, 0 poor or ambiguous") {
		t.Errorf("not every traverse sound:\n%s", out)
	}
	if !strings.Contains(out, "the 50 Hz mains, so the readings were averaged over whole cycles before the DC fits, in blocks of 3") {
		t.Errorf("the run does not say the mains were averaged out in blocks of whole cycles:\n%s", out)
	}
	// The main 1.2 m down, the sensor 0.3 m up: 1.5 m below the sensors.
	if n := checkDCStations(t, stdout, 3, 1.5, 2); n != 5 {
		t.Errorf("read %d station rows, want 5:\n%s", n, stdout)
	}

	_, stdout, stderr = cli(t, "locate", "--dc-mains", "off", "--group-by", "group", log)
	if out := stdout + stderr; !strings.Contains(out, "the field alternates at about 50 Hz") || !strings.Contains(out, "it is the 50 Hz mains") {
		t.Errorf("--dc-mains off: the 50 Hz field at the Nyquist frequency is not named:\n%s", out)
	}
}

// rippleScenario is a DC survey (Corran Flats, invented) of a
// cathodically protected main carrying 2 A, 1.1 m down, from a
// transformer-rectifier whose output holds 0.6 A RMS of RIPPLE Hz ripple
// on the same conductor, logged at RATE Hz with 2 nT of noise.
const rippleScenario = `name = "corran-flats-ripple"
site = "Corran Flats CP main with rectifier ripple (invented)"
seed = 11
start = "2026-03-04T11:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
sample_rate_hz = RATE
[survey]
count = 4
spacing_m = 4.0
length_m = 8.0
speed_m_s = 1.0
turn_s = 10.0
zigzag = true
[[conductor]]
name = "CP main"
kind = "line"
point = [0.0, 0.0, -1.1]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = 2.0
[[conductor]]
name = "CP main, rectifier ripple"
kind = "line"
point = [0.0, 0.0, -1.1]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = 0.6
frequency_hz = RIPPLE
phase_deg = 0.0
`

// TestDCMainsRectifierRipple: a cathodic-protection current with the
// ripple of a single-phase full-wave rectifier, 100 Hz on 50 Hz mains
// (simulated truth, Biot-Savart), is averaged by default over whole
// 50 Hz cycles, which cancel every harmonic of the mains: the run says
// it is twice the mains' frequency, the fits' rms falls to the noise and
// each traverse gives the 2 A at 1.4 m below the sensors; no warning
// names a live AC conductor or two cores of a pair. With --dc-mains 50
// the same averaging draws no warning that the fits may miss. Before,
// auto averaged only a line at 50 or 60 Hz: the ripple stayed in (rms
// 33 nT, sigmas 5.5 times wider), with both warnings, and --dc-mains 50
// warned beside its own figure of 7e-6% left (found in review).
//
// And in plain series (analytic truth, mainsLog with a further tone):
// 120 Hz ripple at 960 Hz is put to 60 Hz mains, 300 Hz (a three-phase
// bridge's, a harmonic of both) to 50 Hz when nothing else tells, and
// to 60 Hz beside a weaker 60 Hz mains field; each averaged to 0.05 nT of
// the direct current's field.
func TestDCMainsRectifierRipple(t *testing.T) {
	exact := func(t float64) float64 { return t }
	for _, c := range []struct {
		fs, ripple, mains, mainsAmp float64
		want                        float64
		words                       string
	}{
		{960, 120, 0, 0, 60, "twice the 60 Hz mains' frequency"},
		{1000, 300, 0, 0, 50, "six times the 50 Hz mains' frequency"},
		{1200, 300, 60, 40, 60, "five times the 60 Hz mains' frequency"},
	} {
		s := mainsLog(c.fs, c.ripple, 400, exact, nil)
		rng := rand.New(rand.NewPCG(5, 9))
		for i := range s.Time {
			w := 2 * math.Pi * c.mains * s.Time[i]
			s.Bx[i] += c.mainsAmp*math.Sin(w) + 0.5*rng.NormFloat64()
			s.By[i] += 0.5 * rng.NormFloat64()
			s.Bz[i] += -0.8*c.mainsAmp*math.Sin(w+0.4) + 0.5*rng.NormFloat64()
		}
		a, note, alert := dcMains(&locateOptions{dcMainsAuto: true}, "ripple.csv", s)
		if note == "" || a == s {
			t.Errorf("%g Hz ripple at %g Hz: not averaged (alert %q)", c.ripple, c.fs, alert)
			continue
		}
		if !strings.Contains(note, c.words) {
			t.Errorf("%g Hz ripple at %g Hz: the note does not say %q: %s", c.ripple, c.fs, c.words, note)
		}
		if alert != "" {
			t.Errorf("%g Hz ripple at %g Hz: alert %q", c.ripple, c.fs, alert)
		}
		// The noise averaged over a block: about 0.5 nT over sqrt of the
		// triangle's effective count; the mains and ripple must be gone.
		var worst float64
		for i := range a.Time {
			for k, col := range [][]float64{a.Bx, a.By, a.Bz} {
				worst = math.Max(worst, math.Abs(col[i]-mainsTruth(k, a.Time[i])))
			}
		}
		if worst > 0.7 {
			t.Errorf("%g Hz ripple at %g Hz: the averaged readings depart from the direct current's field by up to %.3g nT: %s", c.ripple, c.fs, worst, note)
		}
	}

	dir := t.TempDir()
	text := strings.NewReplacer("RATE", "500.0", "RIPPLE", "100.0").Replace(rippleScenario)
	log := simulateDCLog(t, dir, "ripple", text, 1)
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", log)
	out := stdout + stderr
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, out)
	}
	if !strings.Contains(out, "twice the 50 Hz mains' frequency") || !strings.Contains(out, "so the readings were averaged over whole cycles before the DC fits") {
		t.Errorf("the ripple is not averaged out as a harmonic of the mains:\n%s", out)
	}
	for _, bad := range []string{"may sit over a live AC conductor", "two cores of a pair"} {
		if strings.Contains(out, bad) {
			t.Errorf("the run says %q of rectifier ripple:\n%s", bad, out)
		}
	}
	// The main 1.1 m down, the sensor 0.3 m up: 1.4 m below the sensors;
	// the averaged readings' noise is under the 2 nT of each reading.
	if n := checkDCStations(t, stdout, 2, 1.4, 2); n != 4 {
		t.Errorf("read %d station rows, want 4:\n%s", n, stdout)
	}

	_, stdout, stderr = cli(t, "locate", "--dc-mains", "50", "--group-by", "group", log)
	if out := stdout + stderr; strings.Contains(out, "the fits may miss the readings") {
		t.Errorf("--dc-mains 50, whose whole cycles cancel 100 Hz ripple, warns that the fits may miss:\n%s", out)
	}
}
