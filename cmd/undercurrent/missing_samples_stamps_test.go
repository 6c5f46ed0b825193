package main

import (
	"bufio"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// dropEveryTenth copies the log src to dst without every 10th data row,
// as a logger whose buffer overruns loses one sample in ten: the rows left
// keep their exact times.
func dropEveryTenth(t *testing.T, src, dst string) {
	t.Helper()
	in, err := os.Open(src)
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	var b strings.Builder
	sc := bufio.NewScanner(in)
	row := -1 // the header is not a data row
	for sc.Scan() {
		line := sc.Text()
		if !strings.HasPrefix(line, "#") {
			row++
			if row > 0 && row%10 == 0 {
				continue
			}
		}
		b.WriteString(line + "\n")
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLocateMissingSamplesKeepTheirTimes: the AC walk of the end-to-end
// tests (a 50 Hz cable, 20 A RMS, its field from Biot-Savart in the
// simulator) logged at 2 kHz with exact times, every 10th row lost. The
// steps of 0.5 and 1 ms are also those of 1800 Hz written to 0.5 ms, and
// the samples were re-timed so, moving each by up to 0.22 ms: every
// current came out 8 to 9 sigma low. The single missing samples are
// spanned on the samples' own times, and the cable is recovered within the
// allowances of TestE2EACWalk, without a word of quantised stamps.
func TestLocateMissingSamplesKeepTheirTimes(t *testing.T) {
	sc, path := scenario(t, "ac-walk-2khz.toml")
	dir := t.TempDir()
	exact := filepath.Join(dir, "walk.csv")
	mustCLI(t, "simulate", path, "-o", exact)
	dropped := filepath.Join(dir, "walk-drop10.csv")
	dropEveryTenth(t, exact, dropped)
	out := mustCLI(t, "locate", "--json", "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0", dropped)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, w := range doc.Warnings {
		if strings.Contains(w, "quantised") || strings.Contains(w, "more digits") {
			t.Errorf("warning of quantised stamps: %s", w)
		}
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want the cable alone", g.Key, len(g.Sources))
			continue
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
}

// TestInspectFixedSensorsRate: the five fixed sensors of the Harrow Fen
// scenario each log 500 Hz, their rows interleaved on shared time stamps
// (the group column names the sensor). inspect gives 500 Hz and says
// nothing of quantised stamps; read without the groups, the stamps looked
// like 2500 Hz written to 2 ms.
func TestInspectFixedSensorsRate(t *testing.T) {
	_, path := scenario(t, "harrow-fen-fixed.toml")
	log := filepath.Join(t.TempDir(), "fixed.csv")
	mustCLI(t, "simulate", path, "-o", log)
	out := mustCLI(t, "inspect", log)
	if !strings.Contains(out, "(500 Hz)") || strings.Contains(out, "quantised") {
		t.Errorf("inspect of five sensors at 500 Hz:\n%s", out)
	}
}

// TestLocate812HzMillisecondStamps: the same walk logged at a steady
// 812.345 Hz, its times written to the millisecond, steps 1 and 2 ms like
// a 1000 Hz logger missing about one sample in five. With 23% of the steps
// long and every stamp on the millisecond, the stamps are taken as
// quantised, the samples re-timed at 812.345 Hz with a warning naming the
// log, and the cable recovered within the allowances of TestE2EACWalk. (At
// exactly 800 Hz the stamps repeat every 4 samples and fix the times only
// to within 1/8 ms, a phase of up to 2.25° at 50 Hz: see
// calibrate.TestDemodulateQuantisedStamps.)
func TestLocate812HzMillisecondStamps(t *testing.T) {
	sc, ms := walkMillisecondStamps(t, "812.345", "walk-812-ms.csv")
	out := mustCLI(t, "locate", "--json", "--freq", "50", "--window", "0.1", "--group-by", "group", "--reference-z", "0", ms)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range doc.Warnings {
		found = found || strings.Contains(w, "walk-812-ms.csv") && strings.Contains(w, "quantised to 0.001 s") && strings.Contains(w, "(812.345 Hz;")
	}
	if !found {
		t.Errorf("no warning naming walk-812-ms.csv, its 1 ms stamps and 812.345 Hz: %q", doc.Warnings)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want the cable alone", g.Key, len(g.Sources))
			continue
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
}
