package calibrate

import (
	"math"
	"testing"
)

// Every gap of the base record that rover rows fall in is listed, however
// short: six seconds taken out of Boulder's 1-second record of 1 January
// 2020 (INTERMAGNET / USGS, IAGA-2002; ../shared/data/iaga2002/SOURCE.md)
// are within the default limit and bridged, and BaseReport.Gaps names the
// gap, the rover rows in it and the straight line's error estimated from
// the record nearby. That estimate is checked against the record itself:
// the line across the six seconds taken out departs from what the
// observatory recorded in them by no more than the largest departure found
// over the spans measured. Before, such a gap was bridged without a word.
func TestBaseGapsListed(t *testing.T) {
	s := boulderSecond(t)
	const a = 300 // 00:05:00
	var rt []float64
	for x := s.Time[a-30] + 0.5; x < s.Time[a+120]; x += 0.5 {
		rt = append(rt, x)
	}
	bt, bb := without(s, a, a+6)
	rep, err := BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", bt, bb, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Gaps) != 1 {
		t.Fatalf("gaps %+v, want one", rep.Gaps)
	}
	g := rep.Gaps[0]
	var want []int
	for i, x := range rt {
		if x > s.Time[a-1] && x < s.Time[a+6] {
			want = append(want, i)
		}
	}
	if g.From != s.Time[a-1] || g.To != s.Time[a+6] || len(g.Rows) != len(want) || g.Rows[0] != want[0] || g.Missing != nil {
		t.Errorf("gap from %v to %v, rows %d (first %d), missing %v; want %v to %v, %d rows (first %d), all three", g.From, g.To, len(g.Rows), g.Rows[0], g.Missing, s.Time[a-1], s.Time[a+6], len(want), want[0])
	}
	if g.Spans < 100 || !(g.LineRMS > 0) || !(g.LineMax >= g.LineRMS) {
		t.Fatalf("line error %g nT RMS, %g nT at most, over %d spans: want an estimate", g.LineRMS, g.LineMax, g.Spans)
	}
	// What the line across the gap really missed, from the rows taken out.
	worst := 0.0
	for i := a; i < a+6; i++ {
		f := (s.Time[i] - s.Time[a-1]) / (s.Time[a+6] - s.Time[a-1])
		d2 := 0.0
		for _, c := range [][]float64{s.Bx, s.By, s.Bz} {
			d := c[a-1] + f*(c[a+6]-c[a-1]) - c[i]
			d2 += d * d
		}
		worst = math.Max(worst, math.Sqrt(d2))
	}
	if worst > g.LineMax {
		t.Errorf("the line across the gap missed the record by %.3g nT, above the %.3g nT largest departure estimated", worst, g.LineMax)
	}
	t.Logf("7-s gap: line error estimated %.3g nT RMS, %.3g nT at most (%d spans); in the gap itself %.3g nT at most", g.LineRMS, g.LineMax, g.Spans, worst)

	// The whole record: no gap.
	rep, err = BaseCorrectColumns("harrow-fen.csv", rt, zeroRover(len(rt)), "BOU20200101vsec.sec", s.Time, [3][]float64{s.Bx, s.By, s.Bz}, nil)
	if err != nil || len(rep.Gaps) != 0 {
		t.Errorf("the whole record: err %v, gaps %+v; want none", err, rep.Gaps)
	}
}

// lineError against a record whose answer is known: a sine of amplitude A
// and period P sampled every second departs from its chord over a span L
// by A(1 - cos(πL/P)) at most (a chord centred on a crest), and a straight
// record not at all.
func TestLineErrorSine(t *testing.T) {
	const A, P, L = 10.0, 600.0, 60.0
	var tt []float64
	var v [3][]float64
	for i := range 4 * 3600 {
		x := float64(i)
		tt = append(tt, x)
		v[0] = append(v[0], A*math.Sin(2*math.Pi*x/P))
		v[1] = append(v[1], 3+0.01*x) // a straight line: no departure
		v[2] = append(v[2], -47000)
	}
	rms, worst, spans := lineError(tt, v, []int{0, 1, 2}, 7200, 7200+L, 1)
	want := A * (1 - math.Cos(math.Pi*L/P))
	if spans == 0 || math.Abs(worst-want) > 0.02*want {
		t.Errorf("largest departure %.4g nT over %d spans, want %.4g nT", worst, spans, want)
	}
	if !(rms > 0 && rms < worst) {
		t.Errorf("RMS departure %.4g nT, want between 0 and %.4g", rms, worst)
	}
	// Too short a record for any span: no estimate.
	if _, _, n := lineError(tt[:30], [3][]float64{v[0][:30], v[1][:30], v[2][:30]}, []int{0, 1, 2}, 5, 5+L, 1); n != 0 {
		t.Errorf("%d spans in 30 s for a 60-s gap", n)
	}
}

// A gap in one component is measured on that component: Z alone set
// missing at 16:01-16:04 UTC in Boulder's one-minute record of 1 November
// 2014 (INTERMAGNET / USGS, IAGA-2002; ../shared/data/iaga2002/SOURCE.md)
// is quoted with Z's departure from a straight line over 5-minute spans
// nearby, which is much smaller than the vector's there (the horizontal
// field moved far more than Z that afternoon: by hand from the file, about
// 0.18 nT RMS for Z against 1.09 for the vector), and it still bounds what
// the line across the gap really missed in Z (from the values set
// missing). The gap's four absent readings are counted. Before, the
// Z-only gap was quoted with the vector's figures, the same as a gap of
// all three components.
func TestBaseGapOneComponentLineError(t *testing.T) {
	s := boulderDay(t)
	const a, b = 961, 965 // 16:01 to 16:04 set missing: readings at 16:00 and 16:05 remain
	var rt []float64
	for x := s.Time[a-1] + 0.5; x < s.Time[b]; x += 1 {
		rt = append(rt, x)
	}
	gapOf := func(comps ...int) BaseGap {
		t.Helper()
		bb := [3][]float64{append([]float64(nil), s.Bx...), append([]float64(nil), s.By...), append([]float64(nil), s.Bz...)}
		for _, k := range comps {
			for i := a; i < b; i++ {
				bb[k][i] = math.NaN()
			}
		}
		rep, err := BaseCorrectColumns("marram-bank.csv", rt, zeroRover(len(rt)), "bou20141101vmin.min", s.Time, bb, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(rep.Gaps) != 1 || rep.Gaps[0].Spans == 0 {
			t.Fatalf("gaps %+v, want one with an estimate", rep.Gaps)
		}
		return rep.Gaps[0]
	}
	z, all := gapOf(2), gapOf(0, 1, 2)
	if len(z.Missing) != 1 || z.Missing[0] != "bz" || all.Missing != nil {
		t.Fatalf("missing %v and %v, want [bz] and all three", z.Missing, all.Missing)
	}
	if z.Absent != b-a || all.Absent != b-a {
		t.Errorf("absent readings %d and %d, want %d", z.Absent, all.Absent, b-a)
	}
	if !(z.LineRMS < all.LineRMS/2) || !(z.LineMax < all.LineMax) {
		t.Errorf("Z-only gap: line error %.3g nT RMS, %.3g nT at most; all three: %.3g, %.3g: want Z's own, well under the vector's", z.LineRMS, z.LineMax, all.LineRMS, all.LineMax)
	}
	worst := 0.0
	for i := a; i < b; i++ {
		f := (s.Time[i] - s.Time[a-1]) / (s.Time[b] - s.Time[a-1])
		worst = math.Max(worst, math.Abs(s.Bz[a-1]+f*(s.Bz[b]-s.Bz[a-1])-s.Bz[i]))
	}
	if worst > z.LineMax {
		t.Errorf("the line across the gap missed Z by %.3g nT, above the %.3g nT largest departure estimated", worst, z.LineMax)
	}
	t.Logf("Z-only gap: %.3g nT RMS, %.3g at most; all three: %.3g, %.3g; the line really missed Z by %.3g", z.LineRMS, z.LineMax, all.LineRMS, all.LineMax, worst)
}
