package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// roundLog writes a copy of the simulated CSV log src with its field
// values bx, by, bz rounded to q nT (a sensor logged to that resolution),
// and returns the largest |value| and its group.
func roundLog(t *testing.T, src, dst string, q float64) (maxAbs float64, maxGroup string) {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	header := true
	group := -1
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		c := strings.Split(l, ",")
		if header {
			if !strings.HasPrefix(l, "time,x,y,z,bx,by,bz,") {
				t.Fatalf("unexpected columns %q", l)
			}
			for k, name := range c {
				if name == "group" {
					group = k
				}
			}
			header = false
			continue
		}
		for k := 4; k <= 6; k++ {
			v, err := strconv.ParseFloat(c[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			if q > 0 {
				v = q * math.Round(v/q)
				c[k] = strconv.FormatFloat(v, 'g', -1, 64)
			}
			if math.Abs(v) > maxAbs && group >= 0 {
				maxAbs, maxGroup = math.Abs(v), c[group]
			}
		}
		lines[i] = strings.Join(c, ",")
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	return maxAbs, maxGroup
}

// TestQuietQuantisedAxisNotClipped: the Corley Fen gas main
// (testdata/scenarios/open/end-loss-trend.toml, simulated truth: 10 A
// 1 m down, 0.5 A leaving at chainage 1.5 m, 21 traverses) read by a
// sensor of 0.1 nT noise logged to whole nanotesla. Its bx, an axis the
// line barely touches, then holds -300 and -301 nT only, -300 on most
// readings: in review that was taken as a rail at the sensor's range,
// 82% of the readings were left out, T01-T08 vanished and the current
// lost at the defect was no longer found, although bz read 46000 nT in
// the same rows (no range of 300 nT reads that). locate must take no
// reading as clipped, fit all 21 traverses, and find the fall in current
// near the defect.
func TestQuietQuantisedAxisNotClipped(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", "end-loss-trend.toml"))
	if err != nil {
		t.Fatal(err)
	}
	toml := strings.Replace(string(src), "noise_nt = 5.0", "noise_nt = 0.1", 1)
	if toml == string(src) {
		t.Fatal("end-loss-trend.toml has no noise_nt = 5.0 line")
	}
	sc := filepath.Join(dir, "quiet.toml")
	if err := os.WriteFile(sc, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	log, base := filepath.Join(dir, "quiet.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", "--seed", "7", sc, "-o", log, "--base-log", base)
	rounded := filepath.Join(dir, "rounded.csv")
	roundLog(t, log, rounded, 1)
	type finding struct {
		Kind   string   `json:"kind"`
		From   *float64 `json:"chainage_from_m"`
		To     *float64 `json:"chainage_to_m"`
		Groups []string `json:"groups"`
	}
	doc := locateInto[struct {
		Warnings []string `json:"warnings"`
		Groups   []struct {
			Key string `json:"key"`
			OK  bool   `json:"ok"`
		} `json:"groups"`
		Findings []finding `json:"findings"`
	}](t, "--group-by", "group", "--reference-z", "0", "--base", base, rounded)
	for _, w := range doc.Warnings {
		if strings.Contains(w, "clipped") || strings.Contains(w, "--range-nt") {
			t.Errorf("whole-nanotesla log taken as clipped: %q", w)
		}
	}
	if len(doc.Groups) != 21 {
		t.Errorf("%d groups fitted, the scenario walks 21 traverses", len(doc.Groups))
	}
	step := false
	for _, f := range doc.Findings {
		// Simulated truth: 0.5 A leaves at chainage 1.5 m.
		if f.Kind == "current-step" && f.From != nil && f.To != nil && *f.From <= 1.5 && 1.5 <= *f.To {
			step = true
		}
	}
	if !step {
		t.Errorf("no current-step finding over chainage 1.5 m (simulated loss 0.5 A there): %+v", doc.Findings)
	}
}

// TestClippedRowsRailAtTheRange: a three-axis sensor's axes share one
// range, so a rail sits at about the largest |reading| of any axis. A
// line's field (simulated: 1 m down, 5000 nT peak, rounded to 1 nT, bz
// about -45000 nT): an axis held at 23000 nT while bz reads 45000 nT is
// not a rail; bz cut at -47000 nT is; an axis of 0.1 nT noise rounded to
// 1 nT, two values, is not, even where it is the largest.
func TestClippedRowsRailAtTheRange(t *testing.T) {
	line := func(bx func(i int, b float64) float64) *ingest.Samples {
		var s ingest.Samples
		for i := range 1200 {
			x := -3 + 0.005*float64(i)
			b := 5000 / (1 + x*x)
			s.Time = append(s.Time, float64(i))
			s.Bx = append(s.Bx, bx(i, b))
			s.By = append(s.By, math.Round(19000+b))
			s.Bz = append(s.Bz, math.Round(-45000-0.5*b))
		}
		return &s
	}
	s := line(func(_ int, b float64) float64 { return math.Round(100 + 0.3*b) })
	for i, v := range s.By {
		s.By[i] = math.Min(v, 23000)
	}
	if keep, w, note, err := clippedRows("peak.csv", s, 0, 0); keep != nil || note != "" || err != nil {
		t.Errorf("by held at 23000 nT with |bz| 45000 nT taken as a rail: %q %q %v", w, note, err)
	}
	// A quiet bx near 60000 nT, the largest axis: 0.1 nT noise (a fixed
	// pseudo-random sequence) on -60000.41 nT, rounded to 1 nT, holds
	// -60000 nT on more than four times as many readings as -60001.
	s = line(func(i int, _ float64) float64 { return math.Round(-60000.41 + 0.1*math.Sin(float64(i*i))) })
	at := map[float64]int{}
	for _, v := range s.Bx {
		at[v]++
	}
	if len(at) != 2 || at[-60000] < 4*at[-60001] {
		t.Fatalf("quiet bx holds %v", at)
	}
	if keep, w, note, _ := clippedRows("quiet.csv", s, 0, 0); keep != nil || note != "" {
		t.Errorf("quiet bx of two values taken as a rail: %q %q", w, note)
	}
	s = line(func(_ int, b float64) float64 { return math.Round(100 + 0.3*b) })
	n := 0
	for i, v := range s.Bz {
		if v <= -47000 {
			s.Bz[i] = -47000
			n++
		}
	}
	keep, w, _, _ := clippedRows("peak.csv", s, 0, 0)
	if keep == nil || !strings.Contains(w, fmt.Sprintf("bz reads exactly -47000 nT, its smallest value, on %d readings", n)) {
		t.Errorf("rail at -47000 nT on %d readings: %q", n, w)
	}
}

// TestClippedRowsKeptPastAQuarter: the line's field of
// TestClippedRowsRailAtTheRange cut at -45800 nT on bz holds 40% of the
// readings at the cut, and the readings beside the cut lie 2 nT (two
// resolution steps) from it: past a quarter of the log, a cut that
// shallow is not told from a trace's own extreme logged to a whole
// nanotesla (railCut), so the readings are kept, with a note naming
// --range-nt, and left out when the range is given.
func TestClippedRowsKeptPastAQuarter(t *testing.T) {
	var s ingest.Samples
	for i := range 1200 {
		x := -3 + 0.005*float64(i)
		b := 5000 / (1 + x*x)
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, math.Round(100+0.3*b))
		s.By = append(s.By, math.Round(19000+b))
		s.Bz = append(s.Bz, math.Max(math.Round(-45000-0.5*b), -45800))
	}
	n := 0
	for _, v := range s.Bz {
		if v == -45800 {
			n++
		}
	}
	if float64(n) < 0.3*float64(len(s.Bz)) {
		t.Fatalf("only %d of %d readings at the cut", n, len(s.Bz))
	}
	keep, w, note, err := clippedRows("cut.csv", &s, 0, 0)
	if keep != nil || err != nil || !strings.Contains(note, "--range-nt 45800") || !strings.Contains(note, fmt.Sprintf("%d of 1200 readings", n)) {
		t.Errorf("%d of 1200 readings at the cut: keep %v, %q, note %q, %v", n, keep != nil, w, note, err)
	}
	// Given, the readings within a ten-thousandth of it are left out
	// (live.SaturationMargin).
	near := 0
	for _, v := range s.Bz {
		if v <= -45800*(1-1e-4) {
			near++
		}
	}
	keep, w, _, err = clippedRows("cut.csv", &s, 45800, 0)
	if keep == nil || err != nil || !strings.Contains(w, fmt.Sprintf("%d of 1200 readings were left out", near)) {
		t.Errorf("range given: %q, %v", w, err)
	}
}

// TestRangeBelowReadingsIsUsageError: the single-line scenario
// (simulated truth: bz about -45000 nT, |B| about 48000 nT) located with
// --range-nt 40000, below every |bz|. In review every reading was taken
// as "within 4 nT of the ±40000 nT range" and left out, and the run
// ended in a bare "no readings to fit". No sensor reads beyond its range:
// it is a usage error naming the axis, the largest reading and where; a
// range just above the largest reading runs.
func TestRangeBelowReadingsIsUsageError(t *testing.T) {
	dir := t.TempDir()
	sim := filepath.Join(dir, "sim.csv")
	_, path := scenario(t, "single-line.toml")
	mustCLI(t, "simulate", "--seed", "7", path, "-o", sim)
	log := filepath.Join(dir, "log.csv")
	worst, g := roundLog(t, sim, log, 0)
	if worst < 44000 {
		t.Fatalf("largest |reading| %g nT", worst)
	}
	for _, rng := range []float64{40000, worst - 20} {
		code, _, errOut := cli(t, "locate", "--json", "--group-by", "group", "--range-nt", strconv.FormatFloat(rng, 'f', 0, 64), log)
		want := fmt.Sprintf("is below |bz| = %.6g nT read at %s of %s", worst, g, log)
		if code != 2 || !strings.Contains(errOut, want) || strings.Contains(errOut, "no readings to fit") {
			t.Errorf("--range-nt %g: exit %d, %q; want exit 2 and %q", rng, code, errOut, want)
		}
	}
	mustCLI(t, "locate", "--json", "--group-by", "group", "--range-nt", strconv.FormatFloat(math.Ceil(worst+1), 'f', 0, 64), log)
}
