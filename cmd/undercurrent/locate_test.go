package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
	"undercurrent/inverse/simulate"
	"undercurrent/report"
)

// simulatedLog writes the single-line scenario's log into dir and returns
// its path.
func simulatedLog(t testing.TB, dir, name string) string {
	t.Helper()
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := ingest.WriteSamples(path, s); err != nil {
		t.Fatal(err)
	}
	return path
}

// entries lists a directory's names.
func entries(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range es {
		names = append(names, e.Name())
	}
	return names
}

// TestLocateBadInput checks that bad input and bad options fail with a
// clear message, the right exit status, and no output directory (nor a
// staging directory) left behind.
func TestLocateBadInput(t *testing.T) {
	dir := t.TempDir()
	good := simulatedLog(t, dir, "good.csv")
	bad := filepath.Join(dir, "bad.csv")
	// A mistyped reading on line 4 (the header is line 1).
	if err := os.WriteFile(bad, []byte("time,x,y,z,bx,by,bz\n0,0,0,0.3,1,2,3\n1,0.1,0,0.3,1,2,3\n2,0.2,0,0.3,1,2,3oo\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	noPos := filepath.Join(dir, "nopos.csv")
	if err := os.WriteFile(noPos, []byte("time,bx,by,bz\n0,1,2,3\n1,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	other := filepath.Join(dir, "other")
	if err := os.MkdirAll(other, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(other, "notes.txt"), []byte("keep me"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		code int
		want []string // substrings of stderr
	}{
		{"no logs", []string{}, 2, []string{"no LOG files"}},
		{"missing log", []string{filepath.Join(dir, "nope.csv")}, 1, []string{"nope.csv"}},
		{"bad number", []string{bad}, 1, []string{"bad.csv:4", "bz", "3oo"}},
		{"no positions", []string{noPos}, 1, []string{"nopos.csv has no positions"}},
		{"bad count", []string{"--count", "7", good}, 2, []string{`--count "7"`}},
		{"window without freq", []string{"--window", "0.1", good}, 2, []string{"--window needs --freq"}},
		{"min cover without ground", []string{"--min-cover", "0.6", good}, 2, []string{"--sensor-height", "--reference-z"}},
		{"ground sigma without ground", []string{"--ground-sigma", "0.02", good}, 2, []string{"--ground-sigma", "--sensor-height"}},
		{"negative ground sigma", []string{"--sensor-height", "0.3", "--ground-sigma", "-0.02", good}, 2, []string{"--ground-sigma -0.02"}},
		{"negative min step", []string{"--min-step", "-1", good}, 2, []string{"--min-step -1"}},
		{"zero step k", []string{"--step-k", "0", good}, 2, []string{"--step-k 0"}},
		// An infinite --step-k had been taken, and the run lost every step in current.
		{"infinite step k", []string{"--step-k", "Inf", good}, 2, []string{"--step-k +Inf"}},
		{"zero window", []string{"--freq", "50", "--window", "0", good}, 2, []string{"--window 0"}},
		{"zero sensor height", []string{"--sensor-height", "0", "--min-cover", "0.6", good}, 2, []string{"--sensor-height 0", "--reference-z"}},
		{"base hold without base", []string{"--base-hold", "60", good}, 2, []string{"--base-hold needs --base"}},
		{"zero base hold without base", []string{"--base-hold", "0", good}, 2, []string{"--base-hold needs --base"}},
		{"negative base hold", []string{"--base-hold", "-1", good}, 2, []string{"--base-hold -1"}},
		{"bad mains", []string{"--freq", "512", "--mains", "fifty", good}, 2, []string{`--mains "fifty"`}},
		{"min step of the whole current", []string{"--min-step", "100", good}, 2, []string{"--min-step 100"}},
		{"both ground references", []string{"--reference-z", "0", "--sensor-height", "0.3", good}, 2, []string{"not both"}},
		{"negative frequency", []string{"--freq", "-50", good}, 2, []string{"--freq"}},
		{"missing group column", []string{"--group-by", "traverse", good}, 1, []string{"traverse"}},
		{"missing calibration", []string{"--calibration", filepath.Join(dir, "cal.json"), good}, 1, []string{"cal.json"}},
		{"missing base", []string{"--base", filepath.Join(dir, "base.min"), good}, 1, []string{"base.min"}},
		{"output holds other files", []string{good, "-o", other}, 2, []string{"notes.txt"}},
		{"output is a file", []string{good, "-o", good}, 2, []string{"not a directory"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(tc.name, " ", "-"))
			args := append([]string{"locate"}, tc.args...)
			if !strings.Contains(strings.Join(tc.args, " "), " -o ") {
				args = append(args, "-o", out)
			}
			code, _, stderr := cli(t, args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, tc.code, stderr)
			}
			if !strings.HasPrefix(stderr, "undercurrent locate: ") {
				t.Errorf("stderr does not start with the command name: %q", stderr)
			}
			for _, w := range tc.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not contain %q", stderr, w)
				}
			}
			if _, err := os.Stat(out); !os.IsNotExist(err) {
				t.Errorf("output directory %s was created", out)
			}
		})
	}
	if got := entries(t, other); len(got) != 1 || got[0] != "notes.txt" {
		t.Errorf("the other directory was changed: %v", got)
	}
	for _, n := range entries(t, dir) {
		if strings.HasPrefix(n, ".") {
			t.Errorf("staging directory %s left behind", n)
		}
	}
}

// TestLocateOutputs checks the four files, that --json prints the document
// written to results.json, and that a second run replaces an earlier result
// directory whole.
func TestLocateOutputs(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.arrow")
	out := filepath.Join(dir, "results")
	stdout := mustCLI(t, "locate", "--group-by", "group", "--json", "-o", out, log)
	var printed map[string]any
	if err := json.Unmarshal([]byte(stdout), &printed); err != nil {
		t.Fatalf("--json output: %v", err)
	}
	data, err := os.ReadFile(filepath.Join(out, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var written map[string]any
	if err := json.Unmarshal(data, &written); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{"groups", "findings", "depth_reference", "schema_version"} {
		if _, ok := written[key]; !ok {
			t.Errorf("results.json has no %q", key)
		}
	}
	if len(printed["groups"].([]any)) != 7 || len(written["groups"].([]any)) != 7 {
		t.Errorf("want 7 groups printed and written")
	}
	got := entries(t, out)
	if strings.Join(got, ",") != "findings.csv,report.html,results.csv,results.json,route.geojson" {
		t.Errorf("output directory holds %v", got)
	}
	csv, _ := os.ReadFile(filepath.Join(out, "results.csv"))
	if n := strings.Count(string(csv), ",T0"); n != 7 {
		t.Errorf("results.csv has %d traverse rows, want 7:\n%s", n, csv)
	}
	// Run again without grouping (naming the directory with a trailing
	// slash): the directory is replaced, not merged.
	before, _ := os.Stat(filepath.Join(out, "results.json"))
	summary := mustCLI(t, "locate", "-o", out+string(filepath.Separator), log)
	if !strings.Contains(summary, "fitted 1 group") || !strings.Contains(summary, "results in "+out) {
		t.Errorf("summary:\n%s", summary)
	}
	data, _ = os.ReadFile(filepath.Join(out, "results.json"))
	if err := json.Unmarshal(data, &written); err != nil {
		t.Fatal(err)
	}
	if len(written["groups"].([]any)) != 1 {
		t.Errorf("the second run's results.json has %d groups, want 1", len(written["groups"].([]any)))
	}
	after, _ := os.Stat(filepath.Join(out, "results.json"))
	if os.SameFile(before, after) {
		t.Error("results.json was not replaced")
	}
	for _, n := range entries(t, dir) {
		if strings.HasPrefix(n, ".") {
			t.Errorf("staging directory %s left behind", n)
		}
	}
}

// TestLocateGroupByOtherColumn renames the group column and groups by it.
func TestLocateGroupByOtherColumn(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	data, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	renamed := filepath.Join(dir, "renamed.csv")
	text := strings.Replace(string(data), "bz,group\n", "bz,traverse\n", 1)
	if text == string(data) {
		t.Fatal("the log's header does not end in bz,group")
	}
	if err := os.WriteFile(renamed, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "locate", "--group-by", "traverse", renamed)
	if !strings.Contains(out, "fitted 7 group(s)") || !strings.Contains(out, "T07") {
		t.Errorf("summary:\n%s", out)
	}
}

// TestLocateHelp checks the help text has examples and the flags the issue
// names.
func TestLocateHelp(t *testing.T) {
	code, out, _ := cli(t, "help", "locate")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"Examples:", "--calibration", "--base", "--freq", "--window", "--count", "--group-by", "--json", "--output", "--min-cover", "--reference-z"} {
		if !strings.Contains(out, want) {
			t.Errorf("help does not mention %q", want)
		}
	}
}

// BenchmarkLocateRoute31 times locate on a DC route survey of 31 traverses
// (the demo's route walked at 1 m/s, one reading per 0.2 m: 1,581
// readings): reading the CSV log, fitting each traverse with the automatic
// choice of the number of conductors, the route analysis and the document.
// Like the locate benchmarks below it reports cpu-ns/op beside ns/op.
func BenchmarkLocateRoute31(b *testing.B) {
	log := routeLog(b, 5)
	o := &locateOptions{count: "auto", groupBy: "group", sensorHeight: 0.3, minCover: 0.6}
	if err := o.check(nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	cpu := ingesttest.CPUTime()
	for b.Loop() {
		if _, err := runLocate(b.Context(), o, []string{log}, nil); err != nil {
			b.Fatal(err)
		}
	}
	ingesttest.ReportCPU(b, cpu)
}

// BenchmarkLocateScaling shows how locate's time grows with the readings
// per traverse and with the number of conductors tried (--count 1, 2 or
// auto, which tries 1 to 4), on the same 31-traverse survey.
func BenchmarkLocateScaling(b *testing.B) {
	for _, rate := range []float64{5, 10, 20} {
		log := routeLog(b, rate)
		for _, count := range []string{"1", "2", "auto"} {
			b.Run(fmt.Sprintf("readings=%d/count=%s", 31*(int(10*rate)+1), count), func(b *testing.B) {
				o := &locateOptions{count: count, groupBy: "group"}
				if err := o.check(nil); err != nil {
					b.Fatal(err)
				}
				cpu := ingesttest.CPUTime()
				for b.Loop() {
					if _, err := runLocate(b.Context(), o, []string{log}, nil); err != nil {
						b.Fatal(err)
					}
				}
				ingesttest.ReportCPU(b, cpu)
			})
		}
	}
}

// BenchmarkLocateRoute31Files adds writing the five result files (results.json,
// results.csv, findings.csv, route.geojson and report.html).
func BenchmarkLocateRoute31Files(b *testing.B) {
	log := routeLog(b, 5)
	o := &locateOptions{count: "auto", groupBy: "group", sensorHeight: 0.3, minCover: 0.6}
	if err := o.check(nil); err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(b.TempDir(), "results")
	b.ResetTimer()
	cpu := ingesttest.CPUTime()
	for b.Loop() {
		doc, err := runLocate(b.Context(), o, []string{log}, nil)
		if err != nil {
			b.Fatal(err)
		}
		if err := writeResults(b.Context(), out, doc, nil, report.CSVOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	ingesttest.ReportCPU(b, cpu)
}

// routeLog writes a DC version of the demo survey sampled rate times a
// second at 1 m/s.
func routeLog(b *testing.B, rate float64) string {
	b.Helper()
	sc, err := simulate.Demo()
	if err != nil {
		b.Fatal(err)
	}
	for i := range sc.Conductors {
		sc.Conductors[i].Frequency, sc.Conductors[i].Phase = 0, 0
	}
	sc.Sensor.SampleRate = rate
	if err := sc.Validate(); err != nil {
		b.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		b.Fatal(err)
	}
	if want := 31 * (int(10*rate) + 1); s.Len() != want {
		b.Fatalf("%d readings, want %d", s.Len(), want)
	}
	log := filepath.Join(b.TempDir(), "route.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		b.Fatal(err)
	}
	return log
}

// TestLocateDespike puts five spikes of 3,000 nT into one traverse: with
// --despike they are removed (and said so) and the traverse is recovered
// within its uncertainty; without it that traverse fits far worse.
func TestLocateDespike(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	spiked := 0
	for i := range s.Len() {
		if s.Group[i] == "T03" && i%13 == 0 {
			s.Bx[i] += 3000
			spiked++
		}
	}
	if spiked < 5 {
		t.Fatalf("only %d spikes", spiked)
	}
	log := filepath.Join(t.TempDir(), "spiky.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	var clean, raw resultDoc
	var warned struct {
		Warnings []string `json:"warnings"`
	}
	out := mustCLI(t, "locate", "--json", "--despike", "--group-by", "group", "--reference-z", "0", log)
	if err := json.Unmarshal([]byte(out), &clean); err != nil {
		t.Fatal(err)
	}
	json.Unmarshal([]byte(out), &warned)
	if len(warned.Warnings) == 0 || !strings.Contains(warned.Warnings[0], "removed") {
		t.Errorf("no warning about removed spikes: %v", warned.Warnings)
	}
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log)), &raw); err != nil {
		t.Fatal(err)
	}
	truth := crossingsByLine(sc)
	for i, g := range clean.Groups {
		checkCrossing(t, g.Key, g.Sources[0], truth[g.Key][0], 0, 0)
		if g.Key == "T03" && raw.Groups[i].RMS < 10*g.RMS {
			t.Errorf("T03 rms %.3g nT with spikes, %.3g without: the spikes do not show", raw.Groups[i].RMS, g.RMS)
		}
	}
}

// TestProgressQuietOffTerminal checks that no progress bar is drawn when
// stderr is not a terminal.
func TestProgressQuietOffTerminal(t *testing.T) {
	var buf strings.Builder
	if progressOn(&buf) != nil {
		t.Error("progress bar on a buffer")
	}
	f, err := os.CreateTemp(t.TempDir(), "stderr")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if progressOn(f) != nil {
		t.Error("progress bar on a regular file")
	}
}

// TestLocateSeveralLogs splits a survey into two logs: the groups of both
// are fitted and ordered into one route.
func TestLocateSeveralLogs(t *testing.T) {
	sc, _ := scenario(t, "single-line.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	split := 0
	for split < s.Len() && s.Group[split] < "T04" {
		split++
	}
	dir := t.TempDir()
	parts := []string{filepath.Join(dir, "morning.csv"), filepath.Join(dir, "afternoon.arrow")}
	for i, r := range [][2]int{{0, split}, {split, s.Len()}} {
		p := *s
		p.Time, p.X, p.Y, p.Z = s.Time[r[0]:r[1]], s.X[r[0]:r[1]], s.Y[r[0]:r[1]], s.Z[r[0]:r[1]]
		p.Bx, p.By, p.Bz, p.Group = s.Bx[r[0]:r[1]], s.By[r[0]:r[1]], s.Bz[r[0]:r[1]], s.Group[r[0]:r[1]]
		if err := ingest.WriteSamples(parts[i], &p); err != nil {
			t.Fatal(err)
		}
	}
	var doc resultDoc
	// Given in the "wrong" order: the route still runs T01 to T07.
	out := mustCLI(t, "locate", "--json", "--group-by", "group", parts[1], parts[0])
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	var keys []string
	for _, g := range doc.Groups {
		keys = append(keys, g.Key)
	}
	if got := strings.Join(keys, ","); got != "T01,T02,T03,T04,T05,T06,T07" && got != "T07,T06,T05,T04,T03,T02,T01" {
		t.Errorf("groups in route order: %s", got)
	}
	if !strings.Contains(out, "morning.csv") || !strings.Contains(out, "afternoon.arrow") {
		t.Error("the document does not list both inputs")
	}
}

// canonicalLog simulates the scenario file name (testdata/scenarios) and
// writes its readings in undercurrent's canonical CSV to canon.csv in a
// fresh temporary directory dir, for tests that rewrite them in other
// shapes and compare the fits.
func canonicalLog(t *testing.T, name string) (s *ingest.Samples, dir, canon string) {
	t.Helper()
	sc, _ := scenario(t, name)
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	dir = t.TempDir()
	canon = filepath.Join(dir, "canon.csv")
	if err := ingest.WriteSamples(canon, s); err != nil {
		t.Fatal(err)
	}
	return s, dir, canon
}

// TestLocateColumnsAndUnits reads a log whose east column has another name
// and whose field is in microtesla, through --column and --unit: the fit is
// the same as from the canonical log.
func TestLocateColumnsAndUnits(t *testing.T) {
	s, dir, canon := canonicalLog(t, "single-line.toml")
	var b strings.Builder
	b.WriteString("t,easting,y,z,bx,by,bz,group\n")
	for i := range s.Len() {
		fmt.Fprintf(&b, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%s\n", s.Time[i], s.X[i], s.Y[i], s.Z[i], s.Bx[i]/1000, s.By[i]/1000, s.Bz[i]/1000, s.Group[i])
	}
	other := filepath.Join(dir, "other.csv")
	if err := os.WriteFile(other, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	decode := func(args ...string) resultDoc { return locateGrouped(t, args...) }
	want := decode(canon)
	got := decode("--column", "time=t", "--column", "x=easting", "--unit", "bx=uT,by=uT,bz=uT", other)
	for i, g := range got.Groups {
		a, w := g.Sources[0], want.Groups[i].Sources[0]
		// The same readings to within the rounding of nT -> uT -> nT.
		if math.Abs(a.Current-w.Current) > 1e-6*math.Abs(w.Current) || math.Abs(a.Depth-w.Depth) > 1e-6 {
			t.Errorf("%s: %.9g A at %.9g m, want %.9g A at %.9g m", g.Key, a.Current, a.Depth, w.Current, w.Depth)
		}
	}
}

// locateGrouped runs locate --json --group-by group with args and decodes
// its JSON.
func locateGrouped(t *testing.T, args ...string) resultDoc {
	t.Helper()
	var doc resultDoc
	if err := json.Unmarshal([]byte(mustCLI(t, append([]string{"locate", "--json", "--group-by", "group"}, args...)...)), &doc); err != nil {
		t.Fatal(err)
	}
	return doc
}
