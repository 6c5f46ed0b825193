package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
)

// kestrelMoorLine writes the Kestrel Moor survey (21 traverses) as a CSV
// file whose traverse names are in a column "Line", a name locate does not
// read as the group column, and returns its path.
func kestrelMoorLine(t *testing.T, dir string) string {
	t.Helper()
	log := filepath.Join(dir, "survey.csv")
	if err := ingest.WriteSamples(log, kestrelMoor(t)); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	// The header is the first line that is not a "#" metadata line.
	start := 0
	for strings.HasPrefix(text[start:], "#") {
		start += strings.IndexByte(text[start:], '\n') + 1
	}
	end := start + strings.IndexByte(text[start:], '\n')
	cols := strings.Split(text[start:end], ",")
	found := false
	for i, c := range cols {
		if c == ingest.ColGroup {
			cols[i], found = "Line", true
		}
	}
	if !found {
		t.Fatalf("no %q column in the header %q", ingest.ColGroup, text[start:end])
	}
	text = text[:start] + strings.Join(cols, ",") + text[end:]
	if err := os.WriteFile(log, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return log
}

// TestSpanWarningNamesGroupColumn: a survey whose traverses are named in
// a column "Line", located without --group-by, draws the warning that the
// readings run along the fitted line; the warning names the column to
// give (--group-by Line), where it used to say only "give the column that
// tells them apart with --group-by" (found in review). With --group-by
// Line the warning is gone.
func TestSpanWarningNamesGroupColumn(t *testing.T) {
	log := kestrelMoorLine(t, t.TempDir())
	doc := decodeDoc(t, mustCLI(t, "locate", "--json", log))
	if len(doc.Warnings) == 0 || !strings.Contains(doc.Warnings[0], "along the fitted line") {
		t.Fatalf("JSON warnings %q: want the span warning first", doc.Warnings)
	}
	if !strings.Contains(doc.Warnings[0], `the column "Line" of `+log) || !strings.Contains(doc.Warnings[0], "try --group-by Line") {
		t.Errorf("span warning %q does not name the column Line", doc.Warnings[0])
	}
	doc = decodeDoc(t, mustCLI(t, "locate", "--json", "--group-by", "Line", log))
	if containsAll(doc.Warnings, "along the fitted line") {
		t.Errorf("warnings %q with --group-by Line given", doc.Warnings)
	}
}

// TestGroupByUnknownColumnListsColumns: --group-by with a name the log
// has no column of is refused with the log's columns listed and the one
// not read for anything else named, where it used to send the user to
// inspect (found in review).
func TestGroupByUnknownColumnListsColumns(t *testing.T) {
	log := kestrelMoorLine(t, t.TempDir())
	code, _, errOut := cli(t, "locate", "--group-by", "group", log)
	if code == 0 {
		t.Fatal("locate --group-by group on a log without that column succeeded")
	}
	for _, want := range []string{`has no column "group" to group by`, "columns found: ", "Line", "not read for anything else: Line"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("error lacks %q:\n%s", want, errOut)
		}
	}
}

// TestLooksLikeGroups: traverse names in blocks are groups; a value per
// reading, a flickering fix quality, one value alone or a column with
// empty cells are not.
func TestLooksLikeGroups(t *testing.T) {
	blocks := func(names []string, n int) []string {
		var g []string
		for _, v := range names {
			for range n {
				g = append(g, v)
			}
		}
		return g
	}
	var unique, flicker []string
	for i := range 100 {
		unique = append(unique, strings.Repeat("x", i+1))
		flicker = append(flicker, []string{"1", "2", "4"}[i%3])
	}
	for _, c := range []struct {
		name string
		g    []string
		want bool
	}{
		{"traverses in blocks", blocks([]string{"T01", "T02", "T03"}, 40), true},
		{"a traverse walked twice", append(blocks([]string{"T01", "T02"}, 40), blocks([]string{"T01"}, 40)...), true},
		{"a value per reading", unique, false},
		{"a flickering fix quality", flicker, false},
		{"one value", blocks([]string{"T01"}, 100), false},
		{"empty cells", append(blocks([]string{"T01", "T02"}, 40), ""), false},
	} {
		if got := looksLikeGroups(c.g); got != c.want {
			t.Errorf("%s: looksLikeGroups = %v, want %v", c.name, got, c.want)
		}
	}
}

// TestLocateHelpFirstExampleRuns: locate's first help example, the common
// case of a logger's own column names, latitude and longitude, a field in
// microtesla and a traverse column, runs as written on such a log (the
// Kestrel Moor survey written so) and fits every traverse.
func TestLocateHelpFirstExampleRuns(t *testing.T) {
	var b strings.Builder
	c := commands["locate"]
	c.printHelp(&b, c.flagSet(io.Discard))
	lines := exampleLines(b.String())
	if len(lines) == 0 || !strings.Contains(lines[0], "your-log.csv") {
		t.Fatalf("locate's first example %q: want one on your-log.csv", lines)
	}
	s := kestrelMoor(t)
	dir := t.TempDir()
	origin := ingest.Geodetic{Lat: 54.3125, Lon: -2.0883}
	var text strings.Builder
	text.WriteString("Time,GPS_Lat,GPS_Lon,MagX,MagY,MagZ,Line\n")
	for i := range s.Len() {
		p := origin.FromLocal([3]float64{s.X[i], s.Y[i], s.Z[i]})
		ts := time.UnixMilli(int64(math.Round(s.Time[i] * 1000))).In(time.FixedZone("", 3600))
		fmt.Fprintf(&text, "%s,%.9f,%.9f,%.6f,%.6f,%.6f,%s\n", ts.Format("2006-01-02T15:04:05.000-07:00"),
			p.Lat, p.Lon, s.Bx[i]/1000, s.By[i]/1000, s.Bz[i]/1000, s.Group[i])
	}
	log := filepath.Join(dir, "your-log.csv")
	if err := os.WriteFile(log, []byte(text.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	p := parseExample(t, lines[0])
	args := []string{"locate"}
	for _, a := range p.args {
		switch a {
		case "your-log.csv":
			a = log
		case "results":
			a = filepath.Join(dir, "results")
		}
		args = append(args, a)
	}
	out := mustCLI(t, args...)
	if !strings.Contains(out, "fitted 21 group(s)") || !strings.Contains(out, "21 sound") {
		t.Errorf("locate's first example on the survey written as your-log.csv:\n%s", out)
	}
}
