package ingest

import (
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// A calibration log of an invented spin at Kestrel Moor: the field only,
// in µT, with no time column.
const noTimeCSV = "Bx_uT,By_uT,Bz_uT\n3.11102,0.07204,50.38237\n-3.59375,3.37879,50.255\n1.5,-2.25,49.75\n"

// TestTimeOptionalCSV: with WithTimeOptional a log without a time column
// is read, its field in nT (1 µT = 1000 nT, SI), its times NaN, and the
// samples say the time is absent; without the option the same log is
// refused with a message naming the file and the missing column.
func TestTimeOptionalCSV(t *testing.T) {
	p := writeFile(t, "spin.csv", noTimeCSV)
	_, err := ReadSamples(p)
	wantErr(t, err, "no column for time")
	if !strings.Contains(err.Error(), p) {
		t.Errorf("error %q does not name the file", err)
	}
	for _, slow := range []bool{false, true} {
		opts := []Option{WithTimeOptional(true), withChunkBytes(16)}
		if slow {
			opts = append(opts, withSlowPathOnly())
		}
		s, err := ReadSamples(p, opts...)
		if err != nil {
			t.Fatalf("slow %v: %v", slow, err)
		}
		if !s.NoTime || s.Len() != 3 {
			t.Fatalf("slow %v: NoTime %v, %d rows; want true, 3", slow, s.NoTime, s.Len())
		}
		for i, v := range s.Time {
			if !math.IsNaN(v) {
				t.Errorf("slow %v: time[%d] = %v, want NaN", slow, i, v)
			}
		}
		want := [][3]float64{{3111.02, 72.04, 50382.37}, {-3593.75, 3378.79, 50255}, {1500, -2250, 49750}}
		for i, w := range want {
			got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
			for k := range w {
				if math.Abs(got[k]-w[k]) > 1e-9*math.Abs(w[k]) {
					t.Errorf("slow %v: row %d: %v, want %v nT", slow, i, got, w)
				}
			}
		}
	}
}

// TestTimeOptionalKeepsTime: a log with a time column reads the same with
// the option (NoTime false, times kept), and its time order is still
// checked unless the caller turns that off.
func TestTimeOptionalKeepsTime(t *testing.T) {
	p := writeFile(t, "log.csv", "time,bx,by,bz\n10,1,2,3\n11,1,2,3\n")
	s, err := ReadSamples(p, WithTimeOptional(true))
	if err != nil {
		t.Fatal(err)
	}
	if s.NoTime || s.Time[0] != 10 || s.Time[1] != 11 {
		t.Errorf("NoTime %v, times %v; want false, [10 11]", s.NoTime, s.Time)
	}
	back := writeFile(t, "back.csv", "time,bx,by,bz\n10,1,2,3\n9,1,2,3\n")
	_, err = ReadSamples(back, WithTimeOptional(true))
	wantErr(t, err, "time goes backwards")
}

// TestTimeOptionalArrow: an Arrow IPC file and a Parquet file with only
// the field columns read with NaN times under the option and are refused
// without it; the samples written back out keep the mark (MetaTime).
func TestTimeOptionalArrow(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Int32},
	}, nil)
	fill := func(b *array.RecordBuilder) {
		b.Field(0).(*array.Float64Builder).AppendValues([]float64{1, 2}, nil)
		b.Field(1).(*array.Float64Builder).AppendValues([]float64{3, 4}, nil)
		b.Field(2).(*array.Int32Builder).AppendValues([]int32{5, 6}, nil)
	}
	for _, name := range []string{"zero.arrow", "zero.arrows", "zero.parquet"} {
		p := writeArrowBatches(t, name, sc, fill)
		_, err := ReadSamples(p)
		wantErr(t, err, "no column for time")
		s, err := ReadSamples(p, WithTimeOptional(true))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !s.NoTime || s.Len() != 2 || !math.IsNaN(s.Time[1]) || s.Bz[1] != 6 {
			t.Errorf("%s: NoTime %v, time %v, bz %v", name, s.NoTime, s.Time, s.Bz)
		}
		r, err := NewSamplesReader(s, 0, nil)
		if err != nil {
			t.Fatal(err)
		}
		back, err := Collect(r)
		r.Release()
		if err != nil {
			t.Fatal(err)
		}
		if !back.NoTime {
			t.Errorf("%s: samples read back lost NoTime", name)
		}
	}
}
