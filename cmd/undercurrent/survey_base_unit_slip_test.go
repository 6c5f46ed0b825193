package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// scaleFieldColumns writes src to dst with its bx, by and bz columns
// multiplied by k (a log written in another unit).
func scaleFieldColumns(t *testing.T, src, dst string, k float64) {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	var cols []int
	for _, l := range strings.Split(strings.TrimRight(string(b), "\n"), "\n") {
		if strings.HasPrefix(l, "#") {
			out = append(out, l)
			continue
		}
		f := strings.Split(l, ",")
		if cols == nil {
			for i, h := range f {
				if h == "bx" || h == "by" || h == "bz" {
					cols = append(cols, i)
				}
			}
			if len(cols) != 3 {
				t.Fatalf("header %q lacks bx, by, bz", l)
			}
			out = append(out, l)
			continue
		}
		for _, i := range cols {
			v, err := strconv.ParseFloat(f[i], 64)
			if err != nil {
				t.Fatal(err)
			}
			f[i] = strconv.FormatFloat(v*k, 'g', -1, 64)
		}
		out = append(out, strings.Join(f, ","))
	}
	if err := os.WriteFile(dst, []byte(strings.Join(out, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestSurveyBaseUnitSlipRefused: the single-line scenario's survey and
// base logs are both simulated in nT (simulated truth: 25 A at 1.1 m).
// A survey in uT (its field columns divided by 1000) beside the nT base,
// and the nT survey declared as uT with --unit, differ from the base by a
// factor of 1000, which no site's field does: locate refuses, naming the
// survey's likely unit. Before, both ran to "7 sound" (0.024 A, and
// 25 000 A) with warnings naming other causes (found in review). Without
// a base, the declared uT draws a warning that every current comes out
// 1000 times too large.
func TestSurveyBaseUnitSlipRefused(t *testing.T) {
	dir := t.TempDir()
	log, base := filepath.Join(dir, "line.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", log, "--base-log", base)
	ut := filepath.Join(dir, "line-uT.csv")
	scaleFieldColumns(t, log, ut, 1e-3)

	code, _, errOut := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", base, ut)
	if code != 1 || !strings.Contains(errOut, "probably in uT read as nT") || !strings.Contains(errOut, "--unit bx=uT,by=uT,bz=uT") || !strings.Contains(errOut, "1000 times too small") {
		t.Errorf("uT survey, nT base: exit %d, stderr %q; want a refusal naming uT", code, errOut)
	}
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", base, "--unit", "bx=uT,by=uT,bz=uT", log)
	if code != 1 || !strings.Contains(errOut, "probably in nT, not the unit given") || !strings.Contains(errOut, "1000 times too large") {
		t.Errorf("nT survey declared uT, nT base: exit %d, stderr %q; want a refusal naming nT", code, errOut)
	}
	// The right units still run.
	if code, _, errOut = cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", base, "--unit", "bx=uT,by=uT,bz=uT", ut); code != 0 {
		t.Errorf("uT survey declared uT: exit %d, stderr %q", code, errOut)
	}
	code, out, errOut := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--unit", "bx=uT,by=uT,bz=uT", log)
	if code != 0 || !strings.Contains(out+errOut, "every current and anomaly below comes out 1000 times too large") {
		t.Errorf("nT survey declared uT, no base: exit %d, output %q; want a warning that currents come out 1000 times too large", code, out+errOut)
	}
}
