package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestLocateRefusesRepeatedReadings: a least-squares estimate's standard
// deviation falls as 1/sqrt(n) with the number of independent readings
// (Bevington and Robinson, Data Reduction and Error Analysis, 3rd ed.,
// eq. 4.14), so the Kestrel Moor survey given twice, as the same file, a
// copy or its Parquet conversion, reported every sigma smaller by sqrt 2
// with nothing said. Each is refused, naming both files; the survey cut
// into two logs of different traverses is still read.
func TestLocateRefusesRepeatedReadings(t *testing.T) {
	dir := t.TempDir()
	s := kestrelMoor(t)
	log := filepath.Join(dir, "survey.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	copyPath := filepath.Join(dir, "copy.csv")
	b, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(copyPath, b, 0o644); err != nil {
		t.Fatal(err)
	}
	pq := filepath.Join(dir, "survey.parquet")
	mustCLI(t, "convert", log, pq)

	for _, c := range []struct {
		name string
		logs []string
		code int
		want string
	}{
		{"the same file twice", []string{log, log}, 2, "the survey log " + log + " is given twice"},
		{"the same file by two names", []string{log, filepath.Join(dir, ".", "..", filepath.Base(dir), "survey.csv")}, 2, "is given twice"},
		{"a copy", []string{log, copyPath}, 2, "the survey logs " + log + " and " + copyPath + " have the same content (SHA-256"},
		{"its Parquet conversion", []string{log, pq}, 1, pq + " holds the readings of the survey log " + log},
	} {
		args := append([]string{"locate", "--group-by", "group"}, c.logs...)
		code, out, errOut := cli(t, args...)
		if code != c.code || !strings.Contains(errOut, c.want) || !strings.Contains(errOut, "square root of 2") {
			t.Errorf("%s: exit %d, stdout %.200q, stderr %q; want exit %d and %q", c.name, code, out, errOut, c.code, c.want)
		}
	}

	// Two logs of different traverses hold different readings.
	a, z := *s, *s
	var first, second []int
	for i, g := range s.Group {
		if g < "T11" {
			first = append(first, i)
		} else {
			second = append(second, i)
		}
	}
	pick := func(dst *ingest.Samples, rows []int, path string) {
		take := func(v []float64) []float64 {
			out := make([]float64, len(rows))
			for k, i := range rows {
				out[k] = v[i]
			}
			return out
		}
		dst.Time, dst.X, dst.Y, dst.Z = take(s.Time), take(s.X), take(s.Y), take(s.Z)
		dst.Bx, dst.By, dst.Bz = take(s.Bx), take(s.By), take(s.Bz)
		dst.Group = make([]string, len(rows))
		for k, i := range rows {
			dst.Group[k] = s.Group[i]
		}
		if err := ingest.WriteSamples(path, dst); err != nil {
			t.Fatal(err)
		}
	}
	pa, pz := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	pick(&a, first, pa)
	pick(&z, second, pz)
	out := mustCLI(t, "locate", "--group-by", "group", pa, pz)
	if !strings.HasPrefix(out, "fitted 21 group(s), 4221 readings") {
		t.Errorf("two logs of different traverses: %.200q", out)
	}
}

// TestLocateRefusesAbsentPositions: the README's column table gives x, y,
// z as the sensor's position. A log whose x is under a name the reader
// does not know had x read as 0 for every reading: the Kestrel Moor
// survey (400 m long) then gave a route of 35 m with false current steps
// and every fit "sound". A position column in a unit the reader does not
// know is refused with the file, line and column; one it does not
// recognise at all leaves x absent, and locate refuses the log; Easting
// and Northing in metres are read as x and y, giving the same fits.
func TestLocateRefusesAbsentPositions(t *testing.T) {
	dir := t.TempDir()
	s := kestrelMoor(t)
	log := filepath.Join(dir, "survey.csv")
	if err := ingest.WriteSamples(log, s); err != nil {
		t.Fatal(err)
	}
	text, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	header := regexp.MustCompile(`(?m)^time,x,y,`)
	rename := func(name, to string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, header.ReplaceAll(text, []byte(to)), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	line := strings.Count(string(text[:header.FindIndex(text)[0]]), "\n") + 1

	inch := rename("inch.csv", "time,x [in],y,")
	code, _, errOut := cli(t, "locate", "--group-by", "group", inch)
	want := inch + ":" + strconv.Itoa(line) + `: column 2 ("x [in]"): looks like x (a position) in a unit this reader does not know, "in"`
	if code != 1 || !strings.Contains(errOut, want) {
		t.Errorf("x [in]: exit %d, stderr %q; want exit 1 and %q", code, errOut, want)
	}

	unknown := rename("chain.csv", "time,chain,y,")
	code, _, errOut = cli(t, "locate", "--group-by", "group", unknown)
	if code != 1 || !strings.Contains(errOut, unknown+" has no column for x: every reading would be read at x = 0") ||
		!strings.Contains(errOut, "columns not read: chain") {
		t.Errorf("x under an unknown name: exit %d, stderr %q; want a refusal naming x and the column chain", code, errOut)
	}
	// Its conversion writes x as 0 and says so in its metadata: the
	// converted log is refused as well.
	pq := filepath.Join(dir, "chain.parquet")
	mustCLI(t, "convert", unknown, pq)
	code, _, errOut = cli(t, "locate", "--group-by", "group", pq)
	if code != 1 || !strings.Contains(errOut, pq+" has no column for x") {
		t.Errorf("converted log without x: exit %d, stderr %q; want a refusal", code, errOut)
	}

	en := rename("en.csv", "time,Easting (m),Northing (m),")
	got := mustCLI(t, "locate", "--group-by", "group", en)
	ref := mustCLI(t, "locate", "--group-by", "group", log)
	cut := func(s string) string { return s[strings.Index(s, "\n"):] } // the first line holds the run time
	if cut(got) != cut(ref) {
		t.Errorf("Easting/Northing: summary\n%s\nwant as with x, y:\n%s", got, ref)
	}
}
