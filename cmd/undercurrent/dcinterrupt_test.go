package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// interruptedLog simulates single-line.toml (25 A DC) with seed, and the
// same walk with the current off, and splices them by the time within an
// on/off cycle of period s, the first on s of each on (the rectifier's
// interrupter a crew runs while surveying). It returns the three logs'
// paths: spliced, on, off.
func interruptedLog(t *testing.T, seed int, period, on float64) (string, string, string) {
	t.Helper()
	dir := t.TempDir()
	_, path := scenario(t, "single-line.toml")
	text, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	onText := strings.Replace(string(text), "seed = 11", "seed = "+strconv.Itoa(seed), 1)
	offText := strings.Replace(onText, "current_a = 25.0", "current_a = 0.0", 1)
	if onText == string(text) && seed != 11 || offText == onText {
		t.Fatal("single-line.toml changed: seed or current line not found")
	}
	onLog := simulateText(t, dir, "on", onText, ".csv")
	offLog := simulateText(t, dir, "off", offText, ".csv")
	a, _ := os.ReadFile(onLog)
	b, _ := os.ReadFile(offLog)
	al, bl := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	if len(al) != len(bl) {
		t.Fatalf("on and off logs differ in length: %d, %d", len(al), len(bl))
	}
	t0 := math.NaN()
	out := make([]string, len(al))
	for i, l := range al {
		out[i] = l
		f := strings.SplitN(l, ",", 2)
		tm, err := strconv.ParseFloat(f[0], 64)
		if err != nil || strings.HasPrefix(l, "#") {
			continue
		}
		if math.IsNaN(t0) {
			t0 = tm
		}
		if math.Mod(tm-t0, period) >= on-1e-6 {
			out[i] = bl[i]
		}
	}
	log := filepath.Join(dir, "interrupted.csv")
	if err := os.WriteFile(log, []byte(strings.Join(out, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	return log, onLog, offLog
}

// intDoc holds what TestInterruptedDCNamedAndFitted reads of a result
// document.
type intDoc struct {
	Warnings []string `json:"warnings"`
	Notes    []string `json:"notes"`
	Groups   []struct {
		Key     string      `json:"key"`
		OK      bool        `json:"ok"`
		Problem string      `json:"problem"`
		Sources []docSource `json:"sources"`
	} `json:"groups"`
}

// TestInterruptedDCNamedAndFitted: a 25 A DC line whose current is
// switched off 1 s in every 5 (and 2 s in every 10) while it is
// walked. Before, locate fitted the log as one steady current without a
// word about the cycle and called the fits sound (a review's pipe lost
// both its real losses and gained phantom conductors). Now a warning
// names the cycle (period and on time within a reading interval, 0.2 s,
// of the splice's), no fit is sound, and --interrupted ON,OFF (or auto)
// fits the on-state readings alone: each station's current then matches
// the scenario's stated 25 A within 4 sigma (the simulator's truth, as
// the end-to-end tests take it). The on and off logs alone draw no
// warning.
func TestInterruptedDCNamedAndFitted(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates several logs")
	}
	const tolTime = 0.2 // one reading interval at 5 Hz, s
	re := regexp.MustCompile(`fixed cycle, every ([0-9.]+) s: ([0-9.]+) s at the stronger level and ([0-9.]+) s at the weaker`)
	for _, c := range []struct {
		seed       int
		period, on float64
		flag       string
	}{{1, 5, 4, "4,1"}, {2, 5, 4, "auto"}, {3, 10, 8, "8,2"}} {
		log, onLog, offLog := interruptedLog(t, c.seed, c.period, c.on)
		doc := locateInto[intDoc](t, "--group-by", "group", log)
		w := strings.Join(doc.Warnings, "\n")
		m := re.FindStringSubmatch(w)
		if m == nil {
			t.Errorf("seed %d, %g/%g s: no warning of the cycle:\n%s", c.seed, c.on, c.period-c.on, w)
		} else {
			p, _ := strconv.ParseFloat(m[1], 64)
			on, _ := strconv.ParseFloat(m[2], 64)
			if math.Abs(p-c.period) > tolTime || math.Abs(on-c.on) > tolTime {
				t.Errorf("seed %d: cycle %g s with %g s on, spliced %g s with %g s on", c.seed, p, on, c.period, c.on)
			}
		}
		for _, g := range doc.Groups {
			if g.OK && g.Problem == "" {
				t.Errorf("seed %d: group %s of the interrupted log is sound", c.seed, g.Key)
			}
		}
		fit := locateInto[intDoc](t, "--group-by", "group", "--interrupted", c.flag, log)
		if w := strings.Join(fit.Warnings, "\n"); strings.Contains(w, "fixed cycle") {
			t.Errorf("seed %d: --interrupted %s still warns of the cycle", c.seed, c.flag)
		}
		if n := strings.Join(fit.Notes, "\n"); !strings.Contains(n, "only the readings of the on state") {
			t.Errorf("seed %d: no note that the on-state readings alone were fitted:\n%s", c.seed, n)
		}
		for _, g := range fit.Groups {
			if !g.OK || len(g.Sources) == 0 {
				t.Errorf("seed %d: group %s not fitted with --interrupted", c.seed, g.Key)
				continue
			}
			s := g.Sources[0]
			if pull := (s.Current - 25) / s.CurrentSigma; math.Abs(pull) > 4 {
				t.Errorf("seed %d: group %s: %.4g ± %.2g A for 25 A (%.1f sigma)", c.seed, g.Key, s.Current, s.CurrentSigma, pull)
			}
		}
		for _, plain := range []string{onLog, offLog} {
			if w := strings.Join(locateDoc(t, "--group-by", "group", plain).Warnings, "\n"); strings.Contains(w, "fixed cycle") {
				t.Errorf("seed %d: %s, never switched, drew %q", c.seed, filepath.Base(plain), w)
			}
		}
	}
}
