package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// strongLineLog simulates the single-line scenario (testdata/scenarios/
// single-line.toml: seven 8 m traverses at 0.1 m, sensors 0.3 m up, 2 nT
// noise, the Earth's bz -45100 nT) with its conductor carrying current A
// at depth m below ground, and returns the log's path.
func strongLineLog(t *testing.T, dir string, current, depth float64) string {
	t.Helper()
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), "current_a = 25.0", fmt.Sprintf("current_a = %g", current), 1)
	text = strings.Replace(text, "point = [0.0, 0.0, -1.1]", fmt.Sprintf("point = [0.0, 0.0, %g]", -depth), 1)
	if !strings.Contains(text, fmt.Sprintf("current_a = %g", current)) || !strings.Contains(text, fmt.Sprintf("%g]", -depth)) {
		t.Fatal("single-line.toml no longer has the current_a and point lines this test edits")
	}
	return simulateText(t, dir, "strong", text, ".csv")
}

// TestClippedRailOverMostOfATraverseLeftOut: a 500 A line 1.0 m down
// (simulated truth, 1.3 m below the sensors) under a magnetometer of
// ±65000 nT range, whose bz the Earth's field already holds at -45100 nT:
// bz rails over most of each 8 m traverse, more than a quarter of the
// log. In review such rails were kept in the fits (past clipMaxShare), and
// every traverse read 401 ± 10 A 1.17 m down with a phantom second line,
// "sound". The trace is cut at the rail (its readings jump onto it by
// hundreds of nT), so the rails must be left out, with the warning naming
// them, and every traverse must then find the one 500 A line at 1.3 m.
func TestClippedRailOverMostOfATraverseLeftOut(t *testing.T) {
	dir := t.TempDir()
	clean := strongLineLog(t, dir, 500, 1.0)
	clippedLog := filepath.Join(dir, "clipped.csv")
	_, rows := clipLog(t, clean, clippedLog, 65000, 0)
	s, err := ingest.ReadSamples(clippedLog)
	if err != nil {
		t.Fatal(err)
	}
	if float64(rows) <= clipMaxShare*float64(s.Len()) {
		t.Fatalf("only %d of %d readings railed: the scenario no longer rails over a quarter of the log", rows, s.Len())
	}
	doc := locateDoc(t, "--group-by", "group", clippedLog)
	var clip string
	for _, w := range doc.Warnings {
		if strings.Contains(w, "kept in the fits") {
			t.Errorf("rails kept: %q", w)
		}
		if strings.Contains(w, "clipped at the magnetometer's range") {
			clip = w
		}
	}
	if want := fmt.Sprintf("%d of %d readings were left out", rows, s.Len()); !strings.Contains(clip, want) || !strings.Contains(clip, "-65000 nT") {
		t.Errorf("clipping warning %q; want the rail -65000 nT and %q", clip, want)
	}
	if len(doc.Groups) != 7 {
		t.Fatalf("%d groups, the scenario walks 7", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) != 1 {
			t.Errorf("%s: ok %v with %d sources; want one sound line", g.Key, g.OK, len(g.Sources))
			continue
		}
		src := g.Sources[0]
		// Simulated truth: 500 A, 1.3 m below the sensors; each fit's
		// sigmas are about 0.01 A and 0.03 mm: 5 sigma plus 0.05 A and
		// 1 mm.
		if d := math.Abs(math.Abs(src.Current) - 500); d > 5*src.CurrentSigma+0.05 {
			t.Errorf("%s: current %.4f ± %.4f A, truth 500 A", g.Key, src.Current, src.CurrentSigma)
		}
		if d := math.Abs(src.Depth - 1.3); d > 5*src.DepthSigma+0.001 {
			t.Errorf("%s: depth %.5f ± %.5f m, truth 1.3 m", g.Key, src.Depth, src.DepthSigma)
		}
	}
}

// TestClippedRailOverAlmostAllReadingsNotSound: a 3000 A line 0.7 m down
// (simulated truth, 1.0 m below the sensors) under a ±100000 nT
// magnetometer rails on every axis over almost every reading of the 8 m
// traverses. In review they were kept (past clipMaxShare) and every
// traverse read 2423 ± 140 A 2.27 m down, "sound", missing the readings
// by 18600 nT with no warning of it. The rails cut the trace: they must
// be left out and said so, and no traverse may then read sound at a
// current or depth the truth is many sigma from.
func TestClippedRailOverAlmostAllReadingsNotSound(t *testing.T) {
	dir := t.TempDir()
	clean := strongLineLog(t, dir, 3000, 0.7)
	clippedLog := filepath.Join(dir, "clipped.csv")
	_, rows := clipLog(t, clean, clippedLog, 100000, 0)
	s, err := ingest.ReadSamples(clippedLog)
	if err != nil {
		t.Fatal(err)
	}
	if float64(rows) < 0.8*float64(s.Len()) {
		t.Fatalf("only %d of %d readings railed", rows, s.Len())
	}
	code, out, errOut := cli(t, "locate", "--json", "--group-by", "group", clippedLog)
	if !strings.Contains(out+errOut, fmt.Sprintf("%d of %d readings were left out", rows, s.Len())) {
		t.Errorf("exit %d: no warning that the %d railed readings were left out:\n%.1000s", code, rows, errOut)
	}
	if code != 0 {
		return // refused: no answer given
	}
	doc := locateInto[resultDoc](t, "--group-by", "group", clippedLog)
	for _, g := range doc.Groups {
		for _, src := range g.Sources {
			if !g.OK {
				continue
			}
			// Simulated truth: 3000 A, 1.0 m below the sensors.
			if math.Abs(math.Abs(src.Current)-3000) > 5*src.CurrentSigma+1 || math.Abs(src.Depth-1.0) > 5*src.DepthSigma+0.01 {
				t.Errorf("%s sound at %.1f ± %.1f A, %.3f ± %.3f m; truth 3000 A at 1.0 m", g.Key, src.Current, src.CurrentSigma, src.Depth, src.DepthSigma)
			}
		}
	}
}

// TestClippedRowsFlatBackgroundKept: a quiet background is no rail even
// over most of a log. An axis carrying the largest field (bx about
// -45000 nT, as a horizontal axis near the magnetic equator) with 0.1 nT
// of noise logged to whole nanotesla holds -45000 nT wherever a one-signed
// 30 nT anomaly falling as steeply as a small magnetised object's
// (simulated: 1/(1+x²)³, 1 m down, readings every 10 mm over ±10 m) has
// fallen below half a nanotesla, most of the readings, and climbs from
// it one step at a time: it is kept, with a note naming --range-nt, as
// before.
func TestClippedRowsFlatBackgroundKept(t *testing.T) {
	var s ingest.Samples
	for i := range 2001 {
		x := -10 + 0.01*float64(i)
		b := 30 / math.Pow(1+x*x, 3)
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, math.Round(-45000.3+0.1*math.Sin(float64(i*i))+b))
		s.By = append(s.By, math.Round(2000+0.5*b))
		s.Bz = append(s.Bz, math.Round(-8000+3*x*b/(1+x*x)))
	}
	n := 0
	for _, v := range s.Bx {
		if v == -45000 {
			n++
		}
	}
	if 2*n < len(s.Bx) {
		t.Fatalf("only %d of %d readings at the background", n, len(s.Bx))
	}
	keep, w, note, err := clippedRows("flat.csv", &s, 0, 0)
	if keep != nil || err != nil || !strings.Contains(note, "kept in the fits") || !strings.Contains(note, "--range-nt 45000") {
		t.Errorf("%d of %d readings at a flat background: keep %v, %q, note %q, %v", n, len(s.Bx), keep != nil, w, note, err)
	}
}
