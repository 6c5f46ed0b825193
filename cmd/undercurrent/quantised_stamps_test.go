package main

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// TestLocateMillisecondStamps: the AC walk of the end-to-end tests (a
// 50 Hz cable, 20 A RMS at 0.8 m, its field from Biot-Savart in the
// simulator) logged at 1623.71 Hz, its times written to the millisecond as
// many loggers write them: steps of 0 and 1 ms, each stamp up to 0.5 ms
// off. Read as exact, the repeated times left no window whole and the run
// was refused, with advice to remove a third of the readings as repeated
// rows. locate rebuilds the times on the sampling they fit, says so naming
// the log, and recovers the cable as from the exact times: current, phase,
// depth and position within the allowances of TestE2EACWalk, in 0.1 s
// windows of 162 samples (0.09977 s), which the result states.
func TestLocateMillisecondStamps(t *testing.T) {
	sc, ms := walkMillisecondStamps(t, "1623.71", "walk-ms.csv")
	out := mustCLI(t, "locate", "--json", "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0", ms)
	var doc resultDoc
	var sig struct {
		Signal struct {
			WindowS float64 `json:"window_s"`
		} `json:"signal"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(out), &sig); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range doc.Warnings {
		found = found || strings.Contains(w, "walk-ms.csv") && strings.Contains(w, "quantised to 0.001 s") && strings.Contains(w, "re-timed")
		if strings.Contains(w, "remove repeated rows") {
			t.Errorf("advice to remove rows: %s", w)
		}
	}
	if !found {
		t.Errorf("no warning naming walk-ms.csv and its 1 ms stamps: %q", doc.Warnings)
	}
	// 0.1 s is 162.371 samples: 162, 0.09977 s.
	if w := sig.Signal.WindowS; math.Abs(w-162/1623.71) > 1e-6*w {
		t.Errorf("window %.6g s in the result, want the 162 samples' %.6g s", w, 162/1623.71)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if g.Points < 55 || g.Points > 61 {
			t.Errorf("%s: %d windows, want about 60", g.Key, g.Points)
		}
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want the cable alone", g.Key, len(g.Sources))
			continue
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
}

// writeMillisecondTimes copies the log src to dst with its times (the
// first column, Unix seconds) rounded to the millisecond.
func writeMillisecondTimes(t *testing.T, src, dst string) {
	t.Helper()
	in, err := os.Open(src)
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	var b strings.Builder
	sc := bufio.NewScanner(in)
	for sc.Scan() {
		line := sc.Text()
		head, rest, ok := strings.Cut(line, ",")
		v, err := strconv.ParseFloat(head, 64)
		if !ok || err != nil || strings.HasPrefix(line, "#") {
			b.WriteString(line + "\n")
			continue
		}
		b.WriteString(strconv.FormatFloat(math.Round(v*1e3)/1e3, 'f', 3, 64) + "," + rest + "\n")
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// walkMillisecondStamps simulates the AC walk of ac-walk-2khz.toml sampled at
// rate Hz (its scenario returned) and writes its log with the times rounded
// to the millisecond (writeMillisecondTimes) as name in a temporary
// directory, whose path it returns.
func walkMillisecondStamps(t *testing.T, rate, name string) (*simulate.Scenario, string) {
	t.Helper()
	sc, exact := simulateWalkAt(t, rate)
	dir := filepath.Dir(exact)
	ms := filepath.Join(dir, name)
	writeMillisecondTimes(t, exact, ms)
	return sc, ms
}

// simulateWalkAt simulates the AC walk of ac-walk-2khz.toml sampled at rate
// Hz into walk.csv in a temporary directory, returning its scenario and the
// log's path.
func simulateWalkAt(t *testing.T, rate string) (*simulate.Scenario, string) {
	t.Helper()
	_, path := scenario(t, "ac-walk-2khz.toml")
	text, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	const old = "sample_rate_hz = 2000.0"
	if !strings.Contains(string(text), old) {
		t.Fatalf("%s: no %q to change", path, old)
	}
	dir := t.TempDir()
	scen := filepath.Join(dir, "walk.toml")
	if err := os.WriteFile(scen, []byte(strings.Replace(string(text), old, "sample_rate_hz = "+rate, 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(scen)
	if err != nil {
		t.Fatal(err)
	}
	exact := filepath.Join(dir, "walk.csv")
	mustCLI(t, "simulate", scen, "-o", exact)
	return sc, exact
}
