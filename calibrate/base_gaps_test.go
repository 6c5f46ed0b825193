package calibrate

import (
	"errors"
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// boulderSecond reads Boulder's 1-second variation data of 1 January 2020
// (INTERMAGNET / USGS, IAGA-2002; see ../shared/data/iaga2002/SOURCE.md).
func boulderSecond(t *testing.T) *ingest.Samples {
	t.Helper()
	s, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// zeroRover returns n rover readings of zero field.
func zeroRover(n int) [3][]float64 {
	return [3][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
}

// The default gap limit is a time, not a count of base samples: 6 s
// missing from Boulder's 1-second record are interpolated (the straight
// line across them is within a fraction of a nanotesla of what the
// observatory recorded, measured here from the rows taken out), while 90 s
// missing are refused at the 60 s floor. Before, the 6-s gap was refused
// (five intervals of 1 s) though a 300-s gap in minute data passed.
func TestBaseGapLimitIsATime(t *testing.T) {
	s := boulderSecond(t)
	const a = 300 // 00:05:00
	rt := []float64{}
	for x := s.Time[a-30] + 0.5; x < s.Time[a+120]; x += 0.5 {
		rt = append(rt, x)
	}
	// 6 s taken out: the gap is 7 s between the readings either side.
	worst := 0.0
	for i := a; i < a+6; i++ {
		f := (s.Time[i] - s.Time[a-1]) / (s.Time[a+6] - s.Time[a-1])
		for _, c := range [][]float64{s.Bx, s.By, s.Bz} {
			worst = math.Max(worst, math.Abs(c[a-1]+f*(c[a+6]-c[a-1])-c[i]))
		}
	}
	if worst > 0.5 {
		t.Fatalf("the straight line across 6 s misses the record by %.2f nT: choose a quieter minute", worst)
	}
	bt, bb := without(s, a, a+6)
	rep, err := BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", bt, bb, nil)
	if err != nil {
		t.Fatalf("a 7-s gap in 1-s data: %v", err)
	}
	if rep.InGap != 0 || len(rep.Warnings) != 0 {
		t.Errorf("a 7-s gap: in gap %d, warnings %q; want none", rep.InGap, rep.Warnings)
	}
	// 90 s taken out (a 91-s gap) is refused at the 60 s floor.
	bt, bb = without(s, a, a+90)
	_, err = BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", bt, bb, nil)
	if err == nil || !strings.Contains(err.Error(), "longer than 60 s (the default, however fast the base samples, here every 1 s)") ||
		!strings.Contains(err.Error(), "from 2020-01-01T00:04:59Z to 2020-01-01T00:06:30Z (91 s;") {
		t.Errorf("a 91-s gap in 1-s data: err = %v, want it refused at 60 s", err)
	}
	// A limit given below the default tightens it (locate --base-hold 5):
	// the 7-s gap is then refused.
	bt, bb = without(s, a, a+6)
	_, err = BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", bt, bb, &BaseSettings{MaxGap: 5})
	if err == nil || !strings.Contains(err.Error(), "longer than 5 s (the limit given)") {
		t.Errorf("a 7-s gap with MaxGap 5: err = %v, want it refused", err)
	}
	// The least limit is 1.5 sample intervals: a record with no reading
	// missing always passes (locate --base-hold 0).
	if _, err := BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", s.Time, [3][]float64{s.Bx, s.By, s.Bz}, &BaseSettings{MaxGap: 1e-9}); err != nil {
		t.Errorf("a whole record with the least limit: %v", err)
	}
}

// A base sampled at 10 Hz: a 1.1-s gap passes, a 70-s gap is refused, and
// its times are shown to the millisecond (before, "from 08:40:04Z to
// 08:40:06Z (1.1 s)", the fraction of a second dropped).
func TestBaseGapSubSecond(t *testing.T) {
	const t0 = 1776760800.0 // 2026-04-21T08:40:00Z
	mk := func(a, b int) (bt []float64, bb [3][]float64) {
		for i := range 3000 {
			if i >= a && i < b {
				continue
			}
			bt = append(bt, t0+float64(i)/10)
			bb[0] = append(bb[0], 1500)
			bb[1] = append(bb[1], 20800)
			bb[2] = append(bb[2], -47500)
		}
		return
	}
	rt := []float64{t0 + 40.45, t0 + 41.05, t0 + 200}
	bt, bb := mk(401, 411)
	if _, err := BaseCorrectColumns("fenwick-lane.csv", rt, zeroRover(3), "base10.csv", bt, bb, nil); err != nil {
		t.Errorf("a 1.1-s gap in 10-Hz data: %v", err)
	}
	bt, bb = mk(401, 1101)
	_, err := BaseCorrectColumns("fenwick-lane.csv", rt, zeroRover(3), "base10.csv", bt, bb, nil)
	if err == nil || !strings.Contains(err.Error(), "from 2026-04-21T08:40:40.000Z to 2026-04-21T08:41:50.100Z (70.1 s; 2 rover readings)") ||
		!strings.Contains(err.Error(), "2 of 3 readings, from 2026-04-21T08:40:40.450Z to 2026-04-21T08:40:41.050Z") {
		t.Errorf("a 70-s gap in 10-Hz data: err = %v, want it refused with times to the millisecond", err)
	}
}

// Readings left out as spikes (DespikeBaseColumns) are readings, not a gap:
// with them named in LeftOut the correction interpolates across them
// without a gap error, while the same rows missing from the record are a
// gap. Boulder's 1-second record with 90 s of it "despiked".
func TestBaseLeftOutIsNoGap(t *testing.T) {
	s := boulderSecond(t)
	const a, b = 300, 390
	bt := append([]float64(nil), s.Time...)
	bb := [3][]float64{append([]float64(nil), s.Bx...), append([]float64(nil), s.By...), append([]float64(nil), s.Bz...)}
	var left []int
	for i := a; i < b; i++ {
		bb[0][i], bb[1][i], bb[2][i] = math.NaN(), math.NaN(), math.NaN()
		left = append(left, i)
	}
	rt := []float64{s.Time[a] + 10.5, s.Time[a] + 50}
	if _, err := BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(2), "BOU20200101vsec.sec", bt, bb, nil); err == nil {
		t.Errorf("90 s missing, not named as left out: no error, want a gap")
	}
	rb := zeroRover(2)
	ref := [3]float64{0, 0, 0}
	if _, err := BaseCorrectColumns("harrow-fen.csv", rt, rb, "BOU20200101vsec.sec", bt, bb, &BaseSettings{LeftOut: left, Reference: &ref}); err != nil {
		t.Fatalf("90 s left out as spikes: %v", err)
	}
	// Interpolated from the readings either side of the rows left out.
	f := (rt[0] - s.Time[a-1]) / (s.Time[b] - s.Time[a-1])
	if want := -(s.Bx[a-1] + f*(s.Bx[b]-s.Bx[a-1])); math.Abs(rb[0][0]-want) > 1e-9 {
		t.Errorf("correction %g, want %g", rb[0][0], want)
	}
}

// A row repeated exactly (same time, same values) is left out with a
// warning, and the correction is that of the record without it; a time
// repeated with other values is a *BaseRepeatError naming the row
// (counting from 1). Before, both were "row 299: time ... does not follow".
func TestBaseRepeatedRows(t *testing.T) {
	s := boulderSecond(t)
	n := 600
	bt, bb := append([]float64(nil), s.Time[:n]...), [3][]float64{append([]float64(nil), s.Bx[:n]...), append([]float64(nil), s.By[:n]...), append([]float64(nil), s.Bz[:n]...)}
	dup := func(v []float64, i int, d float64) []float64 {
		out := append(append([]float64(nil), v[:i+1]...), v[i]+d)
		return append(out, v[i+1:]...)
	}
	const at = 299
	bt2 := dup(bt, at, 0)
	bb2 := [3][]float64{dup(bb[0], at, 0), dup(bb[1], at, 0), dup(bb[2], at, 0)}
	rt := []float64{s.Time[200] + 0.5, s.Time[299] + 0.25, s.Time[400]}
	clean, dirty := zeroRover(3), zeroRover(3)
	if _, err := BaseCorrectColumns("r.csv", rt, clean, "b.csv", bt, bb, nil); err != nil {
		t.Fatal(err)
	}
	rep, err := BaseCorrectColumns("r.csv", rt, dirty, "b.csv", bt2, bb2, nil)
	if err != nil {
		t.Fatalf("an exact repeat: %v", err)
	}
	if len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "repeats 1 row exactly") || !strings.Contains(rep.Warnings[0], "2020-01-01T00:04:59Z") {
		t.Errorf("warnings %q, want the repeat named", rep.Warnings)
	}
	for k := range 3 {
		for i := range rt {
			if clean[k][i] != dirty[k][i] {
				t.Errorf("component %d row %d: %g with the repeat, %g without", k, i, dirty[k][i], clean[k][i])
			}
		}
	}
	bb2[2][at+1] += 0.1
	_, err = BaseCorrectColumns("r.csv", rt, zeroRover(3), "b.csv", bt2, bb2, nil)
	var re *BaseRepeatError
	if !errors.As(err, &re) || re.Row != at+1 || !strings.Contains(err.Error(), "b.csv: data row 301 (counting from 1): time 2020-01-01T00:04:59Z repeats") {
		t.Errorf("a repeat with other values: err = %v, want a BaseRepeatError at row %d", err, at+1)
	}
}

func TestFmtTimeSub(t *testing.T) {
	// 2026-04-21T08:40:05.1Z is 1776760805.1 s after the Unix epoch
	// (IEEE Std 1003.1, seconds since the epoch).
	for _, c := range []struct {
		t    float64
		sub  bool
		want string
	}{{1776760805.1, true, "2026-04-21T08:40:05.100Z"}, {1776760805.1, false, "2026-04-21T08:40:05Z"}, {1776760805.9996, true, "2026-04-21T08:40:06.000Z"}, {12.5, true, "12.5 s"}} {
		if got := fmtTimeSub(c.t, c.sub); got != c.want {
			t.Errorf("fmtTimeSub(%v, %v) = %q, want %q", c.t, c.sub, got, c.want)
		}
	}
}
