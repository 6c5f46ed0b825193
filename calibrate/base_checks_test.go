package calibrate

import (
	"math"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// boulderDay reads Boulder's 1-minute variation data of 1 November 2014
// (INTERMAGNET / USGS, IAGA-2002; see ../shared/data/iaga2002/SOURCE.md).
func boulderDay(t *testing.T) *ingest.Samples {
	t.Helper()
	s, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != 1440 {
		t.Fatalf("%d rows, want 1440 minutes", s.Len())
	}
	return s
}

// without returns the columns of s with rows [a, b) left out.
func without(s *ingest.Samples, a, b int) (bt []float64, bb [3][]float64) {
	cut := func(v []float64) []float64 { return append(append([]float64(nil), v[:a]...), v[b:]...) }
	return cut(s.Time), [3][]float64{cut(s.Bx), cut(s.By), cut(s.Bz)}
}

// A hole of half an hour in a real base record (Boulder, 1 November 2014,
// 1-minute data): a straight line across it misses the field the
// observatory recorded by several nanotesla (measured here from the rows
// taken out), so survey readings in the hole are refused, with the gap's
// times and the readings in it named. Before, they were corrected along
// the straight line with only a warning.
func TestBaseGapRefusedBoulder(t *testing.T) {
	s := boulderDay(t)
	const a, b = 600, 630 // 10:00 to 10:29 taken out: readings at 09:59 and 10:30 remain
	// How far the straight line across the hole is from the record.
	worst := 0.0
	for i := a; i < b; i++ {
		f := (s.Time[i] - s.Time[a-1]) / (s.Time[b] - s.Time[a-1])
		for _, c := range [][]float64{s.Bx, s.By, s.Bz} {
			worst = math.Max(worst, math.Abs(c[a-1]+f*(c[b]-c[a-1])-c[i]))
		}
	}
	if worst < 2 {
		t.Fatalf("the straight line across the hole is within %.2f nT of the record: choose a livelier hour", worst)
	}
	t.Logf("straight line across 10:00-10:29 misses the recorded field by up to %.2f nT", worst)

	// Rover readings every 30 s from 09:50:30 to 10:39:30: 99 of them.
	var rt []float64
	for x := s.Time[590] + 30; x < s.Time[640]; x += 30 {
		rt = append(rt, x)
	}
	rover := func() [3][]float64 {
		return [3][]float64{make([]float64, len(rt)), make([]float64, len(rt)), make([]float64, len(rt))}
	}
	bt, bb := without(s, a, b)
	rb := rover()
	_, err := BaseCorrectColumns("kestrel-moor.csv", rt, rb, "bou20141101vmin.min", bt, bb, nil)
	// 09:59:30 to 10:29:30 lie in the gap (09:59 to 10:30): 61 readings;
	// those at exactly 10:30 and after do not.
	for _, want := range []string{"base record bou20141101vmin.min has a gap longer than 300 s (five base sample intervals of 60 s)",
		"61 of 99 readings, from 2014-11-01T09:59:30Z to 2014-11-01T10:29:30Z",
		"from 2014-11-01T09:59:00Z to 2014-11-01T10:30:00Z (1860 s; 61 rover readings)", "--base-hold"} {
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("err = %v\nwant it to say %q", err, want)
		}
	}
	for k := range 3 {
		for i, v := range rb[k] {
			if v != 0 {
				t.Fatalf("a refused correction changed row %d", i)
			}
		}
	}
	// Allowed with a limit of 1900 s (locate --base-hold 1900): the
	// readings in the gap are interpolated, with a warning.
	rb = rover()
	rep, err := BaseCorrectColumns("kestrel-moor.csv", rt, rb, "bou20141101vmin.min", bt, bb, &BaseSettings{MaxGap: 1900})
	if err != nil {
		t.Fatal(err)
	}
	if rep.InGap != 61 || len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "61 rover rows fall in gaps of base record bou20141101vmin.min longer than 300 s") {
		t.Errorf("in gap %d, warnings %q; want 61 and one gap warning", rep.InGap, rep.Warnings)
	}
	// 4 minutes of one-minute data taken out (a 300 s gap) pass by
	// default; a limit below the default tightens it (locate --base-hold
	// 10, as its help says), though never below 1.5 sample intervals (90 s
	// here): the gap is then refused.
	bt, bb = without(s, a, a+4)
	rb = rover()
	rep, err = BaseCorrectColumns("kestrel-moor.csv", rt, rb, "bou20141101vmin.min", bt, bb, nil)
	if err != nil || rep.InGap != 0 || len(rep.Warnings) != 0 {
		t.Errorf("a 300 s gap in 60 s data: err %v, in gap %d, warnings %q; want none", err, rep.InGap, rep.Warnings)
	}
	if _, err := BaseCorrectColumns("kestrel-moor.csv", rt, rover(), "bou20141101vmin.min", bt, bb, &BaseSettings{MaxGap: 10}); err == nil || !strings.Contains(err.Error(), "longer than 90 s (1.5 base sample intervals, the least limit") {
		t.Errorf("a 300 s gap in 60 s data with MaxGap 10: err = %v, want it refused at 90 s", err)
	}
	// Five minutes out (a 360 s gap) is refused.
	bt, bb = without(s, a, a+5)
	if _, err := BaseCorrectColumns("kestrel-moor.csv", rt, rover(), "bou20141101vmin.min", bt, bb, nil); err == nil || !strings.Contains(err.Error(), "(360 s; 11 rover readings)") {
		t.Errorf("a 360 s gap: err = %v, want it refused", err)
	}
}

// A base record of two readings 1160 s apart covers a 15-minute survey end
// to end, but five of its own "intervals" are 97 minutes: the default limit
// stops at MaxGapCeiling, 300 s, whatever the base's sampling.
func TestBaseGapCeiling(t *testing.T) {
	bt := []float64{0, 1160}
	bb := [3][]float64{{1500, 1540}, {20800, 20760}, {-47500, -47520}}
	rt := []float64{120, 600, 1040}
	rb := [3][]float64{{0, 0, 0}, {0, 0, 0}, {0, 0, 0}}
	_, err := BaseCorrectColumns("fenwick-lane.csv", rt, rb, "harrow-fen-base.csv", bt, bb, nil)
	if err == nil || !strings.Contains(err.Error(), "longer than 300 s (the default ceiling, whatever the base's own sampling interval, here 1160 s)") ||
		!strings.Contains(err.Error(), "3 of 3 readings") {
		t.Errorf("err = %v, want the 1160 s gap refused at the 300 s ceiling", err)
	}
	// A negative MaxGap interpolates across any gap (and MaxHold any hold).
	if _, err := BaseCorrectColumns("fenwick-lane.csv", rt, rb, "harrow-fen-base.csv", bt, bb, &BaseSettings{MaxGap: -1}); err != nil {
		t.Errorf("MaxGap -1: %v", err)
	}
	if want := -(1500 + 40*120.0/1160 - 1520); math.Abs(rb[0][0]-want) > 1e-9 {
		t.Errorf("interpolated correction %g, want %g", rb[0][0], want)
	}
}

// A gap in one component only (missing values, as IAGA-2002 99999 reads)
// is named with that component; a rover reading at the very time of the
// base reading that ends a gap has a measured base value and is not in it.
func TestBaseGapOneComponent(t *testing.T) {
	var bt []float64
	var bb [3][]float64
	for i := range 200 {
		bt = append(bt, float64(i))
		bb[0] = append(bb[0], 1500)
		bb[1] = append(bb[1], 20800)
		z := -47500.0
		if i >= 40 && i < 110 {
			z = math.NaN()
		}
		bb[2] = append(bb[2], z)
	}
	zero := func(n int) [3][]float64 {
		return [3][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
	}
	_, err := BaseCorrectColumns("r.csv", []float64{10, 45.5, 50, 130}, zero(4), "b.csv", bt, bb, nil)
	if err == nil || !strings.Contains(err.Error(), "from 39 s to 110 s (71 s, in bz; 2 rover readings)") {
		t.Errorf("err = %v, want the bz gap named", err)
	}
	if _, err := BaseCorrectColumns("r.csv", []float64{10, 39, 110, 120}, zero(4), "b.csv", bt, bb, nil); err != nil {
		t.Errorf("readings at the gap's ends: %v", err)
	}
}

// Real observatory records (Boulder, 1-second and 1-minute variation data)
// hold no spikes at the thresholds locate uses (10 robust standard
// deviations, 5 with --despike): the filter takes nothing out of a clean
// record. A 3-s, 5000 nT spike put on the 1-second record's Z is taken out
// exactly, and the base correction at those seconds is then the record's
// own departure to within the field's change over the spike (interpolated
// across it from the seconds either side).
func TestDespikeBaseBoulder(t *testing.T) {
	for _, name := range []string{"BOU20200101vsec.sec", "bou20141101vmin.min", "bou20141102vmin.min"} {
		s, err := ingest.ReadSamples(ingesttest.IAGAFile(t, name))
		if err != nil {
			t.Fatal(err)
		}
		for _, k := range []float64{10, 5} {
			bb := [3][]float64{append([]float64(nil), s.Bx...), append([]float64(nil), s.By...), append([]float64(nil), s.Bz...)}
			sp, err := DespikeBaseColumns(s.Time, bb, &DespikeSettings{Threshold: k})
			if err != nil {
				t.Fatal(err)
			}
			if sp != nil {
				t.Errorf("%s at %g robust sigmas: took out %d readings (%s) of a clean record", name, k, len(sp.Rows), sp.Runs)
			}
		}
	}
	s, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	clean := append([]float64(nil), s.Bz...)
	for i := 300; i < 303; i++ {
		s.Bz[i] += 5000
	}
	sp, err := DespikeBaseColumns(s.Time, [3][]float64{s.Bx, s.By, s.Bz}, &DespikeSettings{Threshold: 10})
	if err != nil {
		t.Fatal(err)
	}
	if sp == nil || len(sp.Rows) != 3 || sp.Rows[0] != 300 || sp.Rows[2] != 302 || sp.Runs != "2020-01-01T00:05:00Z to 2020-01-01T00:05:02Z (3 readings)" {
		t.Fatalf("spikes %+v, want rows 300-302 at 00:05:00-00:05:02", sp)
	}
	for i := 299; i < 304; i++ {
		if math.IsNaN(s.Bz[i]) != (i >= 300 && i < 303) || math.IsNaN(s.Bx[i]) != math.IsNaN(s.Bz[i]) {
			t.Errorf("row %d: (%g, %g, %g): want the spiked rows blanked and no other", i, s.Bx[i], s.By[i], s.Bz[i])
		}
	}
	rt := []float64{s.Time[300], s.Time[301], s.Time[302]}
	rb := [3][]float64{make([]float64, 3), make([]float64, 3), make([]float64, 3)}
	ref := [3]float64{0, 0, 0}
	if _, err := BaseCorrectColumns("kestrel-moor.csv", rt, rb, "BOU20200101vsec.sec", s.Time, [3][]float64{s.Bx, s.By, s.Bz}, &BaseSettings{Reference: &ref}); err != nil {
		t.Fatal(err)
	}
	change := math.Abs(clean[303] - clean[299])
	for j := range 3 {
		if got, want := -rb[2][j], clean[300+j]; math.Abs(got-want) > change+0.1 {
			t.Errorf("second %d: departure %.2f nT, the record's %.2f nT (field change over the spike %.2f nT)", 300+j, got, want, change)
		}
	}
}
