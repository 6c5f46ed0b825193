package main

import (
	"bufio"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestLocateStuckStamps: the AC walk of the end-to-end tests (a 50 Hz
// cable, 20 A RMS at 0.8 m, its field from Biot-Savart in the simulator)
// logged at 500 Hz, with the clock stuck once in every 100 rows: the row
// after carries the stamp of the row before it, its values those of a
// reading one interval later. Demodulated at the written time such a row
// is a fifth of a cycle early; in a review's log the currents came out
// 31-94 sigma off, the phases up to 296, every group "sound". locate now
// puts each such row at its place in the steady sampling, names the count
// and the first row's line in a warning, and recovers the cable within the
// allowances of TestE2EACWalk.
func TestLocateStuckStamps(t *testing.T) {
	sc, exact := simulateWalkAt(t, "500.0")
	dir := filepath.Dir(exact)
	stuck := filepath.Join(dir, "walk-stuck.csv")
	first := stickLogStamps(t, exact, stuck, 100, 33)

	out := mustCLI(t, "locate", "--json", "--freq", "50", "--group-by", "group", "--reference-z", "0", stuck)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range doc.Warnings {
		found = found || strings.Contains(w, "walk-stuck.csv: ") && strings.Contains(w, "repeat the time stamp of the row before with new values") &&
			strings.Contains(w, "the first on line "+strconv.Itoa(first)+")")
	}
	if !found {
		t.Errorf("no warning naming the stale stamps of walk-stuck.csv, the first on line %d: %q", first, doc.Warnings)
	}
	truth := crossingsByLine(sc)
	for _, g := range doc.Groups {
		if len(g.Sources) != 1 {
			t.Errorf("%s: %d sources, want the cable alone", g.Key, len(g.Sources))
			continue
		}
		checkACCrossing(t, g.Key, g.Sources[0], truth[g.Key][0])
	}
}

// stickLogStamps copies the log src to dst giving the data row after
// every every-th (from row off) the time stamp of the row before it (the
// first field, copied as written), and returns the file line of the first
// row so changed.
func stickLogStamps(t *testing.T, src, dst string, every, off int) int {
	t.Helper()
	in, err := os.Open(src)
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	var b strings.Builder
	sc := bufio.NewScanner(in)
	line, row, first := 0, -1, 0
	var prev string
	for sc.Scan() {
		line++
		l := sc.Text()
		if strings.HasPrefix(l, "#") || row == -1 && strings.HasPrefix(l, "time") || strings.TrimSpace(l) == "" {
			if strings.HasPrefix(l, "time") {
				row = 0
			}
			b.WriteString(l + "\n")
			continue
		}
		stamp, rest, _ := strings.Cut(l, ",")
		if row > off && (row-1-off)%every == 0 {
			if first == 0 {
				first = line
			}
			stamp = prev
		}
		prev = stamp
		b.WriteString(stamp + "," + rest + "\n")
		row++
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if first == 0 {
		t.Fatalf("%s: no row changed", src)
	}
	if err := os.WriteFile(dst, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return first
}
