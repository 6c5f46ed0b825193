package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// clipLog writes a copy of the simulated CSV log src with every field
// value beyond ±rail nT set to the rail (a magnetometer of that range),
// plus Gaussian readout noise of sd nT on the rail value (0: the rail
// exactly), and returns how many values and rows it clipped.
func clipLog(t *testing.T, src, dst string, rail, sd float64) (values, rows int) {
	t.Helper()
	rng := rand.New(rand.NewPCG(7, 13))
	rewriteFieldCells(t, src, dst, func(c []string) {
		hit := false
		for k := 4; k <= 6; k++ {
			v, err := strconv.ParseFloat(c[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(v) > rail {
				c[k] = strconv.FormatFloat(math.Copysign(rail, v)+sd*rng.NormFloat64(), 'g', -1, 64)
				values++
				hit = true
			}
		}
		if hit {
			rows++
		}
	})
	return values, rows
}

// rewriteFieldCells writes to dst the simulate log src (columns time, x,
// y, z, bx, by, bz, ...) with each data row's cells passed to edit, which
// may change them in place (bx, by, bz are c[4:7]).
func rewriteFieldCells(t *testing.T, src, dst string, edit func(c []string)) {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	header := true
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if header {
			if !strings.HasPrefix(l, "time,x,y,z,bx,by,bz,") {
				t.Fatalf("unexpected columns %q", l)
			}
			header = false
			continue
		}
		c := strings.Split(l, ",")
		edit(c)
		lines[i] = strings.Join(c, ",")
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestClippedReadingsLeftOut: a walked DC log over a 600 A line 1.1 m
// down (simulated truth: the single-line scenario with its current raised
// to 600 A), read by a magnetometer whose range is ±80000 nT, so that the
// readings over the line sit at the rail. In review such a log was fitted
// "sound" at 200 times the noise, with a phantom second line and a
// warning blaming the sensor's axes and calibration, and no word of
// clipping. locate must name the clipped readings (axis, value, count),
// leave those rows out of the fits, and then find the simulated 600 A;
// the same log unclipped draws no such warning.
func TestClippedReadingsLeftOut(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
	if err != nil {
		t.Fatal(err)
	}
	toml := strings.Replace(string(src), "current_a = 25.0", "current_a = 600.0", 1)
	if toml == string(src) {
		t.Fatal("single-line.toml has no current_a = 25.0 line")
	}
	sc := filepath.Join(dir, "strong.toml")
	if err := os.WriteFile(sc, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	clean := filepath.Join(dir, "strong.csv")
	mustCLI(t, "simulate", sc, "-o", clean)
	clippedLog := filepath.Join(dir, "clipped.csv")
	values, rows := clipLog(t, clean, clippedLog, 80000, 0)
	if values < 20 {
		t.Fatalf("only %d values beyond the rail: the scenario does not clip", values)
	}
	// A rail with 1 nT of readout noise on it repeats no value: only the
	// range given (--range-nt) finds it (within 8 nT of it, a
	// ten-thousandth, as serve's range_nt test).
	noisyLog := filepath.Join(dir, "noisy-rail.csv")
	_, noisyRows := clipLog(t, clean, noisyLog, 80000, 1)
	for _, c := range []struct {
		name string
		log  string
		args []string
		rows int
	}{{"unclipped", clean, nil, 0}, {"clipped", clippedLog, nil, rows}, {"noisy rail, range given", noisyLog, []string{"--range-nt", "80000"}, noisyRows}} {
		t.Run(c.name, func(t *testing.T) {
			doc := locateDoc(t, append(append([]string{"--group-by", "group"}, c.args...), c.log)...)
			var clip string
			for _, w := range doc.Warnings {
				if strings.Contains(w, "clipped at the magnetometer's range") {
					clip = w
				}
			}
			if c.log == clean {
				if clip != "" {
					t.Errorf("unclipped log: %q", clip)
				}
			} else {
				if clip == "" {
					t.Fatalf("no clipping warning: %q", doc.Warnings)
				}
				if !strings.Contains(clip, "80000 nT") || !strings.Contains(clip, fmt.Sprintf("%d of ", c.rows)) {
					t.Errorf("clipping warning %q; want the rail 80000 nT and %d readings left out", clip, c.rows)
				}
			}
			// Simulated truth 600 A; each fit's sigma is a few mA.
			groupsSoundAt(t, doc, 600, 0.05, 3)
		})
	}
}

// TestClippedRowsNotASmoothPeak: a smooth anomaly's extreme is no rail,
// even logged to a whole nanotesla, where its top value repeats: a line's
// field (simulated, 5000 nT peak, 1 m down, readings every 5 mm, rounded
// to 1 nT) is not taken as clipped; the same readings cut at a rail on
// bz, the largest axis (a sensor's axes share one range), are.
func TestClippedRowsNotASmoothPeak(t *testing.T) {
	var s ingest.Samples
	for i := range 1200 {
		x := -3 + 0.005*float64(i)
		b := 5000 / (1 + x*x) // a line 1 m down: the field falls as 1/(1+x²)
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, math.Round(100+0.3*b))
		s.By = append(s.By, math.Round(19000+b))
		s.Bz = append(s.Bz, math.Round(-45000-0.5*b))
	}
	if keep, w, note, _ := clippedRows("peak.csv", &s, 0, 0); keep != nil || note != "" {
		t.Errorf("smooth quantised peak taken as clipped: %q %q", w, note)
	}
	n := 0
	for i, v := range s.Bz {
		if v <= -47000 {
			s.Bz[i] = -47000
			n++
		}
	}
	keep, w, _, _ := clippedRows("peak.csv", &s, 0, 0)
	if keep == nil || !strings.Contains(w, fmt.Sprintf("bz reads exactly -47000 nT, its smallest value, on %d readings", n)) {
		t.Errorf("rail at -47000 nT on %d readings: %q", n, w)
	}
}
