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
		step, w := CoarseStamps(c.t, nil)
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

// Four fixed sensors logged at 1 Hz, their rows interleaved (s1, s2, s3,
// s4 at each whole second, as the simulator writes them), were warned of
// as "written to the second": four rows share each time, but each is a
// different sensor's, and each sensor's times are exact (found in
// review). Repeats are now counted within a group: no warning; the same
// sensors' times cut to the minute are still found. Fails before the
// change.
func TestCoarseStampsPerGroup(t *testing.T) {
	var tt []float64
	var g []string
	for s := 0; s < 240; s++ {
		for k := 1; k <= 4; k++ {
			tt = append(tt, 1770040800+float64(s))
			g = append(g, fmt.Sprintf("s%d", k))
		}
	}
	if step, w := CoarseStamps(tt, g); step != 0 {
		t.Errorf("four sensors at 1 Hz, exact whole seconds: step %v (%q), want none", step, w)
	}
	cut := make([]float64, len(tt))
	for i, v := range tt {
		cut[i] = 60 * math.Floor(v/60)
	}
	if step, _ := CoarseStamps(cut, g); step != 60 {
		t.Errorf("four sensors at 1 Hz cut to the minute: step %v, want 60", step)
	}
	// inspect reads the group column.
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,sensor\n")
	for i := range tt {
		fmt.Fprintf(&b, "%.0f,%d,0,0,1,2,3,%s\n", tt[i], i%4, g[i])
	}
	in, err := Inspect(writeFile(t, "fixed.csv", b.String()))
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range in.Warnings {
		if strings.Contains(w, "written to the second") {
			t.Errorf("inspect of four sensors at 1 Hz: %q", w)
		}
	}
}
