package main

import (
	"encoding/json"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// kestrelMoor simulates the README's Kestrel Moor survey (21 traverses
// along a 400 m gas spur) and returns its samples.
func kestrelMoor(t *testing.T) *ingest.Samples {
	t.Helper()
	sc, _ := scenario(t, "kestrel-moor-step.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// decodeDoc decodes locate's JSON output.
func decodeDoc(t *testing.T, out string) resultDoc {
	t.Helper()
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("not JSON: %v\n%.300s", err, out)
	}
	return doc
}

// TestLocateWarnsWithoutGroupBy: the Kestrel Moor survey fitted without
// --group-by gives one straight line through a route that bends and
// loses current (the scenario's truth is 1.4-1.8 A, the single fit about
// 0.6 A); the run says so first in the summary, the JSON warnings and the
// report, and names the flag. With --group-by, or for a single traverse,
// it does not.
func TestLocateWarnsWithoutGroupBy(t *testing.T) {
	dir := t.TempDir()
	s := kestrelMoor(t)
	log := filepath.Join(dir, "survey.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	const want = `the log has a group column "group" with 21 values`
	res := filepath.Join(dir, "res")
	out := mustCLI(t, "locate", "-o", res, log)
	if !strings.Contains(out, "warning: "+log+": "+want) || !strings.Contains(out, "fit each traverse with --group-by group") {
		t.Errorf("summary lacks the --group-by warning:\n%s", out)
	}
	doc := decodeDoc(t, mustCLI(t, "locate", "--json", log))
	if len(doc.Warnings) == 0 || !strings.Contains(doc.Warnings[0], want) {
		t.Errorf("JSON warnings %q: want the --group-by warning first", doc.Warnings)
	}
	html, err := os.ReadFile(filepath.Join(res, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(html), "fit each traverse with --group-by group") {
		t.Error("report.html lacks the --group-by warning")
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", log))
	if containsAll(doc.Warnings, "--group-by") {
		t.Errorf("warnings %q with --group-by given", doc.Warnings)
	}

	// Without a group column the readings' run along the fitted line
	// (about 280 m against a depth near 1 m) gives the warning.
	s.Group = nil
	flat := filepath.Join(dir, "nogroup.csv")
	if err := ingest.WriteSamples(flat, s); err != nil {
		t.Fatal(err)
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", flat))
	if len(doc.Warnings) == 0 || !strings.Contains(doc.Warnings[0], "along the fitted line") || !strings.Contains(doc.Warnings[0], "--group-by") {
		t.Errorf("JSON warnings %q: want the span warning first", doc.Warnings)
	}

	// With spikes too, both warnings.
	addSpikes(s, 0.02, 3)
	both := filepath.Join(dir, "nogroup-spiky.csv")
	if err := ingest.WriteSamples(both, s); err != nil {
		t.Fatal(err)
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", both))
	if !containsAll(doc.Warnings, "along the fitted line") || !containsAll(doc.Warnings, "rerun with --despike") {
		t.Errorf("no group column, spikes: warnings %q: want both", doc.Warnings)
	}

	// One traverse across a line: no warning.
	one, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	first := one.Group[0]
	n := 0
	for n < one.Len() && one.Group[n] == first {
		n++
	}
	cut := func(v []float64) []float64 { return v[:n] }
	one.Time, one.X, one.Y, one.Z, one.Bx, one.By, one.Bz = cut(one.Time), cut(one.X), cut(one.Y), cut(one.Z), cut(one.Bx), cut(one.By), cut(one.Bz)
	one.Group = nil
	single := filepath.Join(dir, "single.csv")
	if err := ingest.WriteSamples(single, one); err != nil {
		t.Fatal(err)
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", single))
	if containsAll(doc.Warnings, "--group-by") {
		t.Errorf("one traverse: warnings %q", doc.Warnings)
	}
}

// addSpikes adds spikes of 500-1500 nT on every axis, of either sign, to
// a share of the rows picked at random (a fixed seed), as a loose
// connector or radio interference does; it returns how many rows it hit.
func addSpikes(s *ingest.Samples, share float64, seed uint64) int {
	r := rand.New(rand.NewPCG(seed, 1))
	hit := 0
	for i := range s.Len() {
		if r.Float64() >= share {
			continue
		}
		hit++
		for _, c := range [][]float64{s.Bx, s.By, s.Bz} {
			d := 500 + 1000*r.Float64()
			if r.IntN(2) == 0 {
				d = -d
			}
			c[i] += d
		}
	}
	return hit
}

// TestLocateWarnsOfSpikes: spikes in 2% of the Kestrel Moor readings
// take the fitted current far from the scenario's 1.4-1.8 A; without
// --despike the run warns, with the share of readings, and suggests it.
// The clean simulated surveys (Kestrel Moor, the single line, the AC walk
// at 2 kHz) give no such warning.
func TestLocateWarnsOfSpikes(t *testing.T) {
	dir := t.TempDir()
	s := kestrelMoor(t)
	clean := filepath.Join(dir, "clean.csv")
	if err := ingest.WriteSamples(clean, s); err != nil {
		t.Fatal(err)
	}
	hit := addSpikes(s, 0.02, 7)
	spiky := filepath.Join(dir, "spiky.csv")
	if err := ingest.WriteSamples(spiky, s); err != nil {
		t.Fatal(err)
	}
	res := filepath.Join(dir, "res")
	out := mustCLI(t, "locate", "--group-by", "group", "-o", res, spiky)
	if !strings.Contains(out, "warning: "+spiky+": spikes in ") || !strings.Contains(out, "rerun with --despike") {
		t.Errorf("summary lacks the spike warning:\n%s", out)
	}
	doc := decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", spiky))
	if len(doc.Warnings) == 0 || !strings.Contains(doc.Warnings[0], "rerun with --despike") {
		t.Fatalf("JSON warnings %q: want the spike warning first", doc.Warnings)
	}
	// The count is of the spikes added (a spike of 500 nT or more on each
	// axis stands far out of 1 nT noise), give or take a few.
	m := regexp.MustCompile(`\((\d+) of (\d+) depart`).FindStringSubmatch(doc.Warnings[0])
	if m == nil {
		t.Fatalf("warning %q gives no count", doc.Warnings[0])
	}
	found, _ := strconv.Atoi(m[1])
	total, _ := strconv.Atoi(m[2])
	if total != s.Len() || found < hit*9/10 || found > hit+hit/10 {
		t.Errorf("warning counts %d of %d spikes; %d were added to %d readings", found, total, hit, s.Len())
	}
	html, err := os.ReadFile(filepath.Join(res, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(html), "rerun with --despike") {
		t.Error("report.html lacks the spike warning")
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", "--despike", spiky))
	if containsAll(doc.Warnings, "rerun with --despike") {
		t.Errorf("warnings %q with --despike given", doc.Warnings)
	}

	doc = decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", clean))
	if containsAll(doc.Warnings, "spikes") {
		t.Errorf("clean Kestrel Moor survey: warnings %q", doc.Warnings)
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "group", simulatedLog(t, dir, "line.csv")))
	if containsAll(doc.Warnings, "spikes") {
		t.Errorf("clean single-line survey: warnings %q", doc.Warnings)
	}
	_, ac := locateJSON(t, "ac-walk-2khz.toml", "--freq", "50", "--group-by", "group")
	if containsAll(ac.Warnings, "spikes") {
		t.Errorf("clean AC walk: warnings %q", ac.Warnings)
	}
}
