package main

// End-to-end checks of the along-route analysis on the scenarios of
// testdata/scenarios/open (invented sites): each is simulated with several
// seeds and located as DEVELOPERS.md says, and the findings are compared
// with the scenario's own truth, its conductor's currents.

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// openLocate simulates testdata/scenarios/open/NAME with seed (or the
// scenario text given instead) and locates it by traverse, with the base
// station when the scenario has one.
func openLocate(t *testing.T, name string, seed int, text string) *resultDoc {
	t.Helper()
	dir := t.TempDir()
	path := filepath.Join("..", "..", "testdata", "scenarios", "open", name)
	if text != "" {
		path = filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "log.csv")
	sim := []string{"simulate", "--seed", strconv.Itoa(seed), path, "-o", log}
	loc := []string{"--group-by", "group", "--reference-z", "0"}
	if strings.Contains(string(src), "[base]") {
		base := filepath.Join(dir, "base.csv")
		sim = append(sim, "--base-log", base)
		loc = append(loc, "--base", base)
	}
	mustCLI(t, sim...)
	return locateDoc(t, append(loc, log)...)
}

func stepFindings(doc *resultDoc) []docFinding {
	var out []docFinding
	for _, f := range doc.Findings {
		if f.Kind == "current-step" || f.Kind == "current-anomaly" {
			out = append(out, f)
		}
	}
	return out
}

// TestOpenBendNoStep: bend.toml, a constant 20 A DC cable turning 45
// degrees, must give no current step or anomaly: the currents fitted near
// the bend are biased by the turned arm, and before the steps straddling
// the bend were withheld it reported "current rises" then "current falls"
// (0.8 A, 4%) at the stations the bend finding names, on every seed. The
// bend's poor-fit finding says what was withheld, or, where the fits at
// the bend widened their sigmas for residuals correlated along the
// traverse (the straight line's misfit to the turned arm is smooth), so
// that no change within the bend stands out to be withheld, the notes of
// the bend's fits so widened and the run's warning say so.
func TestOpenBendNoStep(t *testing.T) {
	for seed := 1; seed <= 6; seed++ {
		doc := openLocate(t, "bend.toml", seed, "")
		for _, f := range stepFindings(doc) {
			t.Errorf("seed %d: %s %s", seed, f.Kind, f.Message)
		}
		noted := false
		for _, f := range doc.Findings {
			if f.Kind == "poor-fit" && strings.Contains(f.Message, "not reported as current joining or leaving") {
				noted = true
			}
		}
		warned, widened := false, false
		for _, w := range doc.Warnings {
			warned = warned || strings.Contains(w, "residuals correlated from reading to reading")
		}
		for _, f := range doc.Findings {
			if f.Kind != "poor-fit" || !strings.Contains(f.Message, "which one straight line cannot follow") {
				continue
			}
			for _, g := range doc.Groups {
				if !strings.Contains(f.Message, "fit at "+g.Key+" ") {
					continue
				}
				for _, n := range g.Notes {
					widened = widened || warned && strings.HasPrefix(n, inverse.SerialNotePrefix)
				}
			}
		}
		if !noted && !widened {
			t.Errorf("seed %d: no poor-fit finding notes the change withheld at the bend, nor do the bend's fits say their sigmas were widened", seed)
		}
	}
}

// TestOpenBendLossReported: the same cable losing 2 A at the bend (20 A
// before the vertex, 18 A after: the scenario with its current split) is
// still reported, as one step across the bend, sized from the levels
// either side within three sigma of the 2 A lost.
func TestOpenBendLossReported(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", "bend.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), "current_a = 20.0", "currents_a = [20.0, 18.0]", 1)
	if text == string(src) {
		t.Fatal("bend.toml no longer gives current_a = 20.0")
	}
	for seed := 1; seed <= 3; seed++ {
		doc := openLocate(t, "bend-loss.toml", seed, text)
		st := stepFindings(doc)
		if len(st) != 1 || st[0].Kind != "current-step" {
			t.Fatalf("seed %d: want one step across the bend, got %+v", seed, st)
		}
		v := st[0].Values[0]
		if math.Abs(v.Value+2) > 3*v.Sigma {
			t.Errorf("seed %d: step %.3f ± %.3f A, want -2 A", seed, v.Value, v.Sigma)
		}
		if !strings.Contains(st[0].Message, "across the bend") {
			t.Errorf("seed %d: the step does not say it is measured across the bend: %s", seed, st[0].Message)
		}
	}
}

// leakLoss is the current lost at the coating defect of the leak
// scenarios: their conductor carries 1.9604 A on the segment before the
// vertex at x = 105 m and 1.75648 A after it (currents_a).
const leakLoss = 1.9604 - 1.75648

// TestOpenLeakSpreadFound: leak-n10.toml on the seeds where the 0.2 A loss
// (eight station sigmas) was missed, its change spread over the two
// intervals either side of the traverse at 100 m or 110 m, and
// leak-sparse.toml (a traverse 0-5 m from the defect) on seeds 1-12, of
// which five were missed. The loss must be found on all but at most one
// seed of each, bracketing the defect, its size within three sigma.
// leak-n10 seed 24 is the one expected miss: its levels, with the
// stations' scatter, differ by 2.8 of their sigma.
func TestOpenLeakSpreadFound(t *testing.T) {
	cases := []struct {
		name  string
		seeds []int
		at    float64 // the defect's chainage: x = 105 m less the first traverse's x
	}{
		{"leak-n10.toml", []int{3, 14, 16, 18, 20, 24, 25, 27, 28, 30}, 105},
		{"leak-sparse.toml", []int{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12}, 100},
	}
	for _, tc := range cases {
		missed := 0
		for _, seed := range tc.seeds {
			doc := openLocate(t, tc.name, seed, "")
			found := false
			for _, f := range stepFindings(doc) {
				if f.Kind != "current-step" || f.From > tc.at+1 || f.To < tc.at-1 {
					t.Errorf("%s seed %d: false finding %s", tc.name, seed, f.Message)
					continue
				}
				found = true
				v := f.Values[0]
				if math.Abs(v.Value+leakLoss) > 3*v.Sigma {
					t.Errorf("%s seed %d: step %.3f ± %.3f A, want -%.3f A", tc.name, seed, v.Value, v.Sigma, leakLoss)
				}
			}
			if !found {
				missed++
				t.Logf("%s seed %d: loss missed", tc.name, seed)
			}
		}
		if missed > 1 {
			t.Errorf("%s: loss missed on %d of %d seeds, want at most 1", tc.name, missed, len(tc.seeds))
		}
	}
}

// TestOpenNoLeakClean: the leak scenarios with the defect taken out (the
// 0.2 A added back to every segment after it) give no current step or
// anomaly on ten seeds each.
func TestOpenNoLeakClean(t *testing.T) {
	cur := regexp.MustCompile(`currents_a = \[([^\]]*)\]`)
	for _, name := range []string{"leak-n10.toml", "leak-sparse.toml", "leak-sparse2.toml"} {
		src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", name))
		if err != nil {
			t.Fatal(err)
		}
		m := cur.FindStringSubmatch(string(src))
		if m == nil {
			t.Fatalf("%s: no currents_a", name)
		}
		parts := strings.Split(m[1], ",")
		for i := range parts {
			v, err := strconv.ParseFloat(strings.TrimSpace(parts[i]), 64)
			if err != nil {
				t.Fatal(err)
			}
			if v < 1.9 {
				v += 0.2
			}
			parts[i] = strconv.FormatFloat(v, 'f', 5, 64)
		}
		text := strings.Replace(string(src), m[0], "currents_a = ["+strings.Join(parts, ", ")+"]", 1)
		for seed := 1; seed <= 10; seed++ {
			doc := openLocate(t, "no"+name, seed, text)
			for _, f := range stepFindings(doc) {
				t.Errorf("%s without the defect, seed %d: %s %s", name, seed, f.Kind, f.Message)
			}
		}
	}
}

// TestOpenNearStationSize: leak-sparse2.toml has a traverse 5 m before the
// defect, which reads about a tenth of the 0.2 A step low (the free
// azimuth and dip magnify the semi-infinite transition). The sharp step
// fitted to the levels took that up in its slope: over seeds 1-30 the
// sizes came out 0.17-0.185 A with z = (size - truth) / sigma of RMS 2.3.
// The sizing now widens the sigma where leaving out the station beside the
// fault enlarges the step beyond the noise (inverse/route/plateau.go,
// nearStation): the RMS of z must be under 2 (1.8 measured; a limit
// remains where the noise hides the partial reading).
func TestOpenNearStationSize(t *testing.T) {
	var sum float64
	n := 0
	for seed := 1; seed <= 30; seed++ {
		doc := openLocate(t, "leak-sparse2.toml", seed, "")
		for _, f := range stepFindings(doc) {
			if f.Kind != "current-step" || f.From > 106 || f.To < 104 {
				t.Errorf("seed %d: false finding %s", seed, f.Message)
				continue
			}
			v := f.Values[0]
			z := (v.Value + leakLoss) / v.Sigma
			sum += z * z
			n++
		}
	}
	if n < 27 {
		t.Fatalf("the loss was found on %d of 30 seeds, want at least 27", n)
	}
	rms := math.Sqrt(sum / float64(n))
	t.Logf("z RMS %.2f over %d seeds", rms, n)
	if rms > 2 {
		t.Errorf("size z RMS %.2f over %d seeds, want at most 2", rms, n)
	}
}
