package ingest

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// Times cut to the minute (a spreadsheet's "dd.mm.yyyy hh:mm") on a 5 Hz
// walk gave no warning: inspect showed "median step 60 s" and repeated
// times, and a base correction paired readings up to a minute off without
// a word. CoarseStamps finds them, and whole seconds on a log faster than
// 2 Hz; exact times, and whole seconds at 1 Hz, are left alone.
func TestCoarseStamps(t *testing.T) {
	series := func(n int, rate, cut float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			x := 1770040800 + 17 + float64(i)/rate
			if cut > 0 {
				x = cut * math.Floor(x/cut)
			}
			v[i] = x
		}
		return v
	}
	for _, c := range []struct {
		name string
		t    []float64
		step float64
	}{
		{"5 Hz to the minute", series(600, 5, 60), 60},
		{"5 Hz to the second", series(600, 5, 1), 1},
		{"1 Hz to the second", series(600, 1, 1), 0},
		{"5 Hz exact", series(600, 5, 0), 0},
		{"all one time", series(20, 5, 3600), 0},
		{"too few", series(9, 5, 60), 0},
	} {
		step, w := CoarseStamps(c.t)
		if step != c.step || (step > 0) != (w != "") {
			t.Errorf("%s: step %v (%q), want %v", c.name, step, w, c.step)
		}
	}
	// inspect warns of it.
	var b strings.Builder
	b.WriteString("time;x;y;z;bx;by;bz\n")
	for i := 0; i < 600; i++ {
		fmt.Fprintf(&b, "02.02.2026 15:%02d;%d;0;0;1;2;3\n", i/300, i)
	}
	in, err := Inspect(writeFile(t, "log.csv", b.String()), WithDateOrder(DateOrderDMY))
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range in.Warnings {
		found = found || strings.Contains(w, "written to the minute (60 s steps)")
	}
	if !found {
		t.Errorf("inspect warnings %q: none says the times were written to the minute", in.Warnings)
	}
}
