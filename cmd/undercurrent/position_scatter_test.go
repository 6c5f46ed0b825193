package main

import (
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// jitterLog writes a copy of the simulated CSV log src with Gaussian
// scatter of sd metres added to each reading's x and y (the field stays
// that of the true position, as with satellite positioning jitter).
func jitterLog(t *testing.T, src, dst string, sd float64, seed uint64) {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 17))
	lines := strings.Split(string(raw), "\n")
	header := true
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if header { // the column names: time,x,y,z,...
			if !strings.HasPrefix(l, "time,x,y,z,") {
				t.Fatalf("unexpected columns %q", l)
			}
			header = false
			continue
		}
		c := strings.Split(l, ",")
		for k := 1; k <= 2; k++ {
			v, err := strconv.ParseFloat(c[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			c[k] = strconv.FormatFloat(v+sd*rng.NormFloat64(), 'g', -1, 64)
		}
		lines[i] = strings.Join(c, ",")
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestPositionScatterWarning: positions scattered from reading to reading
// (simulated truth: the single-line scenario, 25 A 1.1 m down, with
// Gaussian scatter added to x and y while the field stays that of the
// true positions) bias depths deep and currents high and make the fits
// miss the readings many times over, with every fit "sound"; the only
// warning blamed conductors closer together than the fit can part. locate
// must measure the positions' scatter and warn of it, naming satellite
// positioning jitter, with the scatter it measured within a quarter of the
// truth, and the shared-misfit warning, where it is given, must name the
// scattered positions as the likely cause. The clean log draws neither.
func TestPositionScatterWarning(t *testing.T) {
	dir := t.TempDir()
	clean := filepath.Join(dir, "line.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", clean)
	for _, c := range []struct {
		name string
		sd   float64
	}{{"clean", 0}, {"jitter 0.05 m", 0.05}, {"jitter 0.2 m", 0.2}} {
		t.Run(c.name, func(t *testing.T) {
			log := clean
			if c.sd > 0 {
				log = filepath.Join(dir, strings.ReplaceAll(c.name, " ", "-")+".csv")
				jitterLog(t, clean, log, c.sd, 5)
			}
			doc := locateDoc(t, "--group-by", "group", "--reference-z", "0", log)
			var scatter, shared string
			for _, w := range doc.Warnings {
				if strings.Contains(w, "positions scatter from reading to reading") && strings.Contains(w, "groups (") {
					scatter = w
				}
				if strings.Contains(w, "groups' fits") && strings.Contains(w, "miss the readings") {
					shared = w
				}
			}
			if c.sd == 0 {
				if scatter != "" || shared != "" {
					t.Errorf("clean log: warnings %q", doc.Warnings)
				}
				return
			}
			if !strings.Contains(scatter, "satellite positioning jitter") {
				t.Fatalf("no position-scatter warning naming satellite positioning jitter: %q", doc.Warnings)
			}
			// "by 0.049 m (median; ...": within 25% of the scatter added
			// (a median of some 230 robust values per group).
			_, after, _ := strings.Cut(scatter, "reading to reading by ")
			v, err := strconv.ParseFloat(strings.Fields(after)[0], 64)
			if err != nil {
				t.Fatalf("scatter in %q: %v", scatter, err)
			}
			if v < 0.75*c.sd || v > 1.25*c.sd {
				t.Errorf("scatter measured %g m, added %g m", v, c.sd)
			}
			if shared != "" && !strings.Contains(shared, "scattered positions (satellite positioning jitter) are the likely cause") {
				t.Errorf("shared-misfit warning does not name the scattered positions: %q", shared)
			}
			if c.sd >= 0.2 && shared == "" {
				t.Errorf("no shared-misfit warning at %g m of scatter: %q", c.sd, doc.Warnings)
			}
		})
	}
}
