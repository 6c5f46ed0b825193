package main

// The base log in locate: gaps, spikes, units, and the base log given as
// the survey log. Each test simulates the README walk-through's Kestrel
// Moor survey with its base station (testdata/scenarios/kestrel-moor-step.toml,
// whose base records a drift the survey sees too) and changes the base log.

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
)

// kestrelWithBase simulates the Kestrel Moor survey and its base log into
// dir and returns their paths and the base log read back.
func kestrelWithBase(t *testing.T, dir string) (survey, basePath string, base *ingest.Samples) {
	t.Helper()
	_, path := scenario(t, "kestrel-moor-step.toml")
	survey, basePath = filepath.Join(dir, "survey.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", path, "-o", survey, "--base-log", basePath)
	base, err := ingest.ReadSamples(basePath)
	if err != nil {
		t.Fatal(err)
	}
	return survey, basePath, base
}

// writeBaseCSV writes a base log as plain CSV (time, bx, by, bz, no unit
// in the names, so read as nT) with each field value multiplied by scale,
// leaving out the rows for which keep returns false.
func writeBaseCSV(t *testing.T, path string, b *ingest.Samples, scale float64, keep func(i int) bool) {
	t.Helper()
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range b.Len() {
		if keep != nil && !keep(i) {
			continue
		}
		fmt.Fprintf(&sb, "%s,%s,%s,%s\n", f(b.Time[i]), f(b.Bx[i]*scale), f(b.By[i]*scale), f(b.Bz[i]*scale))
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// baseLocateDoc runs locate --json and decodes the document.
func baseLocateDoc(t *testing.T, args ...string) *resultDoc {
	t.Helper()
	out := mustCLI(t, append([]string{"locate", "--json", "--group-by", "group"}, args...)...)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json: %v\n%.300s", err, out)
	}
	return &doc
}

// sameCurrents checks that two runs found the same current on every
// traverse, to within tol of a sigma.
func sameCurrents(t *testing.T, what string, got, want *resultDoc, tol float64) {
	t.Helper()
	if len(got.Groups) != len(want.Groups) {
		t.Fatalf("%s: %d groups, want %d", what, len(got.Groups), len(want.Groups))
	}
	for i, g := range got.Groups {
		w := want.Groups[i]
		if len(g.Sources) != 1 || len(w.Sources) != 1 {
			t.Fatalf("%s %s: %d and %d sources", what, g.Key, len(g.Sources), len(w.Sources))
		}
		if d := math.Abs(g.Sources[0].Current - w.Sources[0].Current); d > tol*w.Sources[0].CurrentSigma {
			t.Errorf("%s %s: current %.5f A, want %.5f ± %.5f A", what, g.Key, g.Sources[0].Current, w.Sources[0].Current, w.Sources[0].CurrentSigma)
		}
	}
}

// A base log with no readings while the survey was walked is refused
// (exit 1), naming the gap and the survey readings in it; --base-hold
// allows it, with a warning. Before, the straight line across 16 minutes
// was used with a warning only.
func TestLocateBaseGapRefused(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	t0, t1 := s.Time[0], s.Time[s.Len()-1]
	hole := filepath.Join(dir, "base-hole.csv")
	writeBaseCSV(t, hole, base, 1, func(i int) bool { return base.Time[i] < t0-1 || base.Time[i] > t1+1 })
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", hole, survey)
	if code != 1 || !strings.Contains(stderr, "base record "+hole+" has a gap longer than 60 s (the default, however fast the base samples, here every 1 s)") ||
		!strings.Contains(stderr, fmt.Sprintf("%d of %d readings", s.Len(), s.Len())) || !strings.Contains(stderr, "--base-hold") {
		t.Errorf("exit %d, stderr:\n%s\nwant exit 1 and the gap named", code, stderr)
	}
	doc := baseLocateDoc(t, "--base", hole, "--base-hold", "1000", survey)
	found := false
	for _, w := range doc.Warnings {
		found = found || strings.Contains(w, "fall in gaps of base record "+hole)
	}
	if !found {
		t.Errorf("warnings %q: want the gap allowed by --base-hold warned about", doc.Warnings)
	}
}

// A 3-s, 5000 nT spike in the base log is taken out, with a warning naming
// its times, and the survey's currents are those of the clean base log.
// Before, it went into every survey reading of those seconds and ruined a
// traverse (chi-square per degree of freedom 3.6e5), with or without
// --despike.
func TestLocateBaseSpike(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, base := kestrelWithBase(t, dir)
	clean := baseLocateDoc(t, "--base", basePath, survey)
	for i := 300; i < 303; i++ {
		base.Bz[i] += 5000
	}
	spiky := filepath.Join(dir, "base-spike.csv")
	writeBaseCSV(t, spiky, base, 1, nil)
	when := fmt.Sprintf("%s to %s (3 readings)", fmtUTC(base.Time[300]), fmtUTC(base.Time[302]))
	for _, extra := range [][]string{nil, {"--despike"}} {
		doc := baseLocateDoc(t, append(append([]string{"--base", spiky}, extra...), survey)...)
		n := 0
		for _, w := range doc.Warnings {
			if strings.Contains(w, spiky+": 3 readings of the base log depart") && strings.Contains(w, when) {
				n++
			}
		}
		if n != 1 {
			t.Errorf("%v: warnings %q: want one naming the base spike at %s", extra, doc.Warnings, when)
		}
		if extra == nil {
			sameCurrents(t, "spiked base", doc, clean, 0.1)
		}
	}
}

// fmtUTC formats whole Unix seconds as the base correction's messages do.
func fmtUTC(t float64) string {
	return time.Unix(int64(math.Round(t)), 0).UTC().Format("2006-01-02T15:04:05Z")
}

// A base log in microtesla under plain bx, by, bz names is refused, naming
// --base-unit; with --base-unit it gives the currents of the base log in
// nT. The Earth's field at the surface is about 22000-67000 nT (IGRF, the
// band checkFieldUnits uses): 50 "nT" that hardly change are a full-field
// record in uT. A base log of departures only (the same base less its
// median, in nT) is far outside the band too, but is no full-field record:
// it draws the warning only, and gives the same currents.
func TestLocateBaseUnits(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, base := kestrelWithBase(t, dir)
	want := baseLocateDoc(t, "--base", basePath, survey)
	uT := filepath.Join(dir, "base-uT.csv")
	writeBaseCSV(t, uT, base, 1e-3, nil)
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", uT, survey)
	if code != 1 || !strings.Contains(stderr, "probably in uT") || !strings.Contains(stderr, "--base-unit bx=uT,by=uT,bz=uT") {
		t.Errorf("exit %d, stderr:\n%s\nwant the uT base refused, naming --base-unit", code, stderr)
	}
	got := baseLocateDoc(t, "--base", uT, "--base-unit", "bx=uT,by=uT,bz=uT", survey)
	sameCurrents(t, "--base-unit uT", got, want, 1e-3)

	med := func(v []float64) float64 {
		sort.Float64s(v)
		return v[len(v)/2]
	}
	dep := &ingest.Samples{Time: base.Time}
	for k, c := range [][]float64{base.Bx, base.By, base.Bz} {
		m := med(append([]float64(nil), c...))
		d := make([]float64, len(c))
		for i, v := range c {
			d[i] = v - m
		}
		switch k {
		case 0:
			dep.Bx = d
		case 1:
			dep.By = d
		default:
			dep.Bz = d
		}
	}
	depPath := filepath.Join(dir, "base-departures.csv")
	writeBaseCSV(t, depPath, dep, 1, nil)
	got = baseLocateDoc(t, "--base", depPath, survey)
	sameCurrents(t, "departures base", got, want, 1e-3)
	warned := false
	for _, w := range got.Warnings {
		warned = warned || strings.HasPrefix(w, depPath+": median |B|")
	}
	if !warned {
		t.Errorf("warnings %q: want the base log's magnitude warned about", got.Warnings)
	}
	// --base-unit needs --base, and takes no voltage.
	if code, _, stderr := cli(t, "locate", "--group-by", "group", "--base-unit", "bx=uT", survey); code != 2 || !strings.Contains(stderr, "--base-unit needs --base") {
		t.Errorf("--base-unit without --base: exit %d, %s", code, stderr)
	}
	if code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", basePath, "--base-unit", "bx=mV", survey); code != 2 || !strings.Contains(stderr, "is a voltage") {
		t.Errorf("--base-unit bx=mV: exit %d, %s", code, stderr)
	}
}

// The survey log given as its own base log is refused (exit 2), also when
// named another way or through a link. Before, every departure was the
// survey's own anomaly, and every fit reported "no anomaly".
func TestLocateBaseIsSurvey(t *testing.T) {
	dir := t.TempDir()
	survey, _, _ := kestrelWithBase(t, dir)
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(survey, link); err != nil {
		t.Fatal(err)
	}
	for _, b := range []string{survey, dir + "/./survey.csv", link} {
		code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", b, survey)
		if code != 2 || !strings.Contains(stderr, "is the survey log") {
			t.Errorf("--base %s: exit %d, stderr:\n%s\nwant exit 2", b, code, stderr)
		}
	}
}
