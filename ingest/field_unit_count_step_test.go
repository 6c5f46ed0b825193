package ingest

import (
	"math"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestFieldUnitCountStep: a log written in counts of a fixed step (0.1 nT,
// 100 pT, 1/8 nT per count) is read when the step is stated before a field
// unit, in the column's name ("Bx [0.1 nT]") or given as its unit ("--unit
// bx=100pT"): one count is the step (SI prefixes, 1 pT = 1e-3 nT, 1 T =
// 1e9 nT, BIPM SI Brochure). The counts are invented.
func TestFieldUnitCountStep(t *testing.T) {
	near := func(got, want float64) bool { return math.Abs(got-want) <= 1e-12*math.Abs(want) }
	check := func(what string, s *Samples, step [3]float64) {
		t.Helper()
		counts := [][3]float64{{1205, 188591, -462140}, {1206, 188592, -462144}}
		for i, c := range counts {
			got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
			for k := range got {
				if !near(got[k], c[k]*step[k]) {
					t.Errorf("%s: row %d axis %d read %v nT, want %v counts of %v nT", what, i, k, got[k], c[k], step[k])
				}
			}
		}
	}
	text := "time,Bx [0.1 nT],By (0.1nT),Bz_0.1nT\n0,1205,188591,-462140\n1,1206,188592,-462144\n"
	s, err := ReadSamples(writeFile(t, "kestrel-moor-counts.csv", text), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	check("names", s, [3]float64{0.1, 0.1, 0.1})
	// A count of a step whose inverse is whole is divided by it, so that
	// it reads as the decimal written in nT reads (correctly rounded).
	if s.By[0] != 18859.1 || s.Bx[1] != 120.6 {
		t.Errorf("by %v bx %v, want 18859.1 and 120.6 exactly as parsed", s.By[0], s.Bx[1])
	}

	text = "time,bx,by,bz\n0,1205,188591,-462140\n1,1206,188592,-462144\n"
	p := writeFile(t, "kestrel-moor-counts.csv", text)
	for _, u := range []struct {
		units []string
		step  [3]float64
	}{
		{[]string{"bx=0.1nT", "by=100pT", "bz=1e-10T"}, [3]float64{0.1, 100 * 1e-3, 1e-10 * 1e9}},
		{[]string{"bx=0.125 nT", "by=0.125nT", "bz=0.125 * nT"}, [3]float64{0.125, 0.125, 0.125}},
		{[]string{"bx=10 pT", "by=10pT", "bz=.01nanotesla"}, [3]float64{0.01, 0.01, 0.01}},
	} {
		s, err := ReadSamples(p, WithAllocator(checked(t)), WithUnits(u.units...))
		if err != nil {
			t.Fatalf("units %v: %v", u.units, err)
		}
		check("units given", s, u.step)
	}
	for _, bad := range []string{"bx=-0.1nT", "bx=0nT", "bx=0.1", "bx=0.1 furlong", "bx=1_0nT", "bx=nT/10"} {
		_, err := ReadSamples(p, WithUnits(bad))
		wantErr(t, err, "unknown field unit")
	}

	// Arrow int64 counts, with the step given.
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Int64},
		{Name: "by", Type: arrow.PrimitiveTypes.Int64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Int64},
	}, nil)
	q := writeArrowBatches(t, "kestrel-moor-counts.parquet", sc, func(b *array.RecordBuilder) {
		b.Field(0).(*array.Float64Builder).AppendValues([]float64{0, 1}, nil)
		b.Field(1).(*array.Int64Builder).AppendValues([]int64{1205, 1206}, nil)
		b.Field(2).(*array.Int64Builder).AppendValues([]int64{188591, 188592}, nil)
		b.Field(3).(*array.Int64Builder).AppendValues([]int64{-462140, -462144}, nil)
	})
	s, err = ReadSamples(q, WithAllocator(checked(t)), WithUnits("bx=0.1nT", "by=0.1nT", "bz=0.1nT"))
	if err != nil {
		t.Fatal(err)
	}
	check("parquet", s, [3]float64{0.1, 0.1, 0.1})
}
