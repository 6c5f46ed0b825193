package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// editRows writes a copy of the CSV log src to dst with each data row
// (counted from 0 after the header) passed through edit, which returns
// the rows to write in its place (none to drop it, two to repeat it).
func editRows(t *testing.T, src, dst string, edit func(i int, row string) []string) {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	i, header := 0, false
	for _, line := range strings.SplitAfter(string(raw), "\n") {
		if line == "" || strings.HasPrefix(line, "#") || !header {
			header = header || !strings.HasPrefix(line, "#") && line != ""
			out = append(out, line)
			continue
		}
		out = append(out, edit(i, line)...)
		i++
	}
	if err := os.WriteFile(dst, []byte(strings.Join(out, "")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLocateACLogWithBrokenTime: a logger that drops one sample in 150,
// or repeats a row, or repeats one so often that no window fits. Before,
// the windows around each break were thrown away without a word (a third
// of them for one sample in 150 missing), and the refusal when none was
// left did not say why. Now a single missing sample is spanned (the
// window fitted on its own time stamps) and the answers are the whole
// log's within the noise, checked against the simulated cable (20 A RMS
// at 0.8 m, Biot-Savart's law in the simulator); windows lost to
// repeated times are counted per group in a warning, in the summary and
// in results.json; and the refusal names the cause and the remedies.
func TestLocateACLogWithBrokenTime(t *testing.T) {
	sc, _ := scenario(t, "ac-walk-2khz.toml")
	dir := t.TempDir()
	full := filepath.Join(dir, "walk.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "ac-walk-2khz.toml"), "-o", full)
	args := []string{"--freq", "50", "--group-by", "group", "--reference-z", "0"}
	whole := locateDoc(t, append(args, full)...)

	gappy := filepath.Join(dir, "gappy.csv")
	editRows(t, full, gappy, func(i int, row string) []string {
		if i%150 == 149 {
			return nil
		}
		return []string{row}
	})
	doc := locateDoc(t, append(args, gappy)...)
	checkOnly(t, doc, sc, sc.Conductors[0].Frequency, 0, 1e-9)
	for i, g := range doc.Groups {
		w := whole.Groups[i]
		if g.Points < w.Points*99/100 {
			t.Errorf("%s: %d windows with one sample in 150 missing, %d without", g.Key, g.Points, w.Points)
		}
		a, b := g.Sources[0], w.Sources[0]
		if d := math.Abs(a.Current - b.Current); d > b.CurrentSigma {
			t.Errorf("%s: %.5f ± %.2g A with one sample in 150 missing, %.5f ± %.2g A without", g.Key, a.Current, a.CurrentSigma, b.Current, b.CurrentSigma)
		}
		if d := math.Abs(a.Depth - b.Depth); d > b.DepthSigma {
			t.Errorf("%s: depth %.5f ± %.2g m with one sample in 150 missing, %.5f ± %.2g m without", g.Key, a.Depth, a.DepthSigma, b.Depth, b.DepthSigma)
		}
	}
	for _, w := range doc.Warnings {
		if strings.Contains(w, "windows lost") {
			t.Errorf("a warning of windows lost for single missing samples: %s", w)
		}
	}

	// Every 1000th row repeated: windows are lost, and said so per group.
	repeated := filepath.Join(dir, "repeated.csv")
	editRows(t, full, repeated, func(i int, row string) []string {
		if i%1000 == 999 {
			return []string{row, row}
		}
		return []string{row}
	})
	doc = locateDoc(t, append(args, repeated)...)
	var said string
	for _, w := range doc.Warnings {
		if strings.Contains(w, "AC windows lost to breaks in the time column") {
			said = w
		}
	}
	for _, want := range []string{"repeats a time 36 times", "T01 ", "T02 ", "T03 ", "repeated times)"} {
		if !strings.Contains(said, want) {
			t.Errorf("results.json warning %q does not say %q", said, want)
		}
	}
	code, out, errOut := cli(t, append(append([]string{"locate"}, args...), repeated)...)
	if code != 0 || !strings.Contains(out+errOut, "AC windows lost to breaks in the time column") {
		t.Errorf("summary (exit %d) does not warn of the windows lost:\n%s%s", code, out, errOut)
	}

	// Every 300th row repeated: no run holds a 0.2 s window (400 samples).
	often := filepath.Join(dir, "often.csv")
	editRows(t, full, often, func(i int, row string) []string {
		if i%300 == 299 {
			return []string{row, row}
		}
		return []string{row}
	})
	code, _, errOut = cli(t, append(append([]string{"locate"}, args...), often)...)
	for _, want := range []string{"often.csv", "no run of the log is as long as one 0.2 s window", "repeats a time", "remove repeated rows", "--window 0.14 or shorter (7 cycles of 50 Hz)"} {
		if code != 1 || !strings.Contains(errOut, want) {
			t.Errorf("exit %d, want 1 and a refusal saying %q:\n%s", code, want, errOut)
		}
	}
}
