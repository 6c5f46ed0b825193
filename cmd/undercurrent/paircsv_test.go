package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// results.csv carries an unresolved go-and-return pair as results.json
// does: on both lines' rows the current is empty and the pair's current
// times spacing is given with its sigma. The scenario is the invented
// ac-pair-net1A.toml (10 A out, 9 A back, cores 0.3 m apart at 1.5 m);
// from 1.8 m the pair's field is that of a line dipole of moment I d
// (Biot-Savart), here (10 + 9)/2 x 0.3 = 2.85 A m.
func TestPairColumnsInResultsCSV(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "pair.arrows")
	mustCLI(t, "simulate", "--seed", "2", filepath.Join("..", "..", "testdata", "scenarios", "open", "ac-pair-net1A.toml"), "-o", log)
	out := filepath.Join(dir, "res")
	mustCLI(t, "locate", "--freq", "50", "--group-by", "group", "--reference-z", "0", "-o", out, log)
	f, err := os.Open(filepath.Join(out, "results.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	pairRows := 0
	for _, r := range rows[1:] {
		v := r[col["pair_current_times_spacing_am"]]
		if v == "" {
			continue
		}
		pairRows++
		id, err1 := strconv.ParseFloat(v, 64)
		sd, err2 := strconv.ParseFloat(r[col["pair_current_times_spacing_sigma_am"]], 64)
		if err1 != nil || err2 != nil || !(sd > 0) {
			t.Fatalf("group %s: pair columns %q ± %q", r[col["group"]], v, r[col["pair_current_times_spacing_sigma_am"]])
		}
		pairWithin3(t, r[col["group"]]+" current times spacing (csv)", id, 2.85, sd)
		if c := r[col["current_a"]]; c != "" {
			t.Errorf("group %s: a pair line's current_a is %q, want empty", r[col["group"]], c)
		}
	}
	if pairRows != 14 {
		t.Errorf("%d rows with pair columns, want 14 (two lines on each of 7 traverses)", pairRows)
	}
}
