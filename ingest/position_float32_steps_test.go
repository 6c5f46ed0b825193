package ingest

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestFloat32PositionStepsWarned checks that position columns stored as
// 32-bit floats are warned of where their values make the floats step by
// more than a centimetre, naming the column and the step: IEEE 754 binary32
// has a 24-bit significand, so a northing near 5.8e6 m (between 2^22 and
// 2^23) steps by 0.5 m and an easting near 5.1e5 m by 1/32 m (the steps are
// computed here with math.Nextafter32), and a latitude near 52.45 degrees
// by 3.8e-6 degrees, about 0.42 m at 111.3 km a degree (from memory). The
// same columns near a local origin (steps under 1e-6 m), or stored as
// 64-bit floats, are not warned of. The positions are invented.
func TestFloat32PositionStepsWarned(t *testing.T) {
	step32 := func(v float64) float64 {
		f := float32(v)
		return float64(math.Nextafter32(f, float32(math.Inf(1))) - f)
	}
	write := func(name string, typ arrow.DataType, cols []string, vals [][]float64) string {
		fields := []arrow.Field{{Name: "time", Type: arrow.PrimitiveTypes.Float64}}
		for _, c := range cols {
			fields = append(fields, arrow.Field{Name: c, Type: typ})
		}
		for _, c := range []string{"bx", "by", "bz"} {
			fields = append(fields, arrow.Field{Name: c, Type: arrow.PrimitiveTypes.Float64})
		}
		sc := arrow.NewSchema(fields, nil)
		return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
			b.Field(0).(*array.Float64Builder).AppendValues([]float64{100, 101, 102, 103}, nil)
			for k := range cols {
				switch fb := b.Field(1 + k).(type) {
				case *array.Float32Builder:
					for _, v := range vals[k] {
						fb.Append(float32(v))
					}
				case *array.Float64Builder:
					fb.AppendValues(vals[k], nil)
				}
			}
			n := len(cols) + 1
			b.Field(n).(*array.Float64Builder).AppendValues([]float64{120.5, 121, 121.5, 122}, nil)
			b.Field(n+1).(*array.Float64Builder).AppendValues([]float64{18000, 18001, 18002, 18003}, nil)
			b.Field(n+2).(*array.Float64Builder).AppendValues([]float64{-46000, -46001, -46002, -46003}, nil)
		})
	}
	// Harrow Fen's traverse in projected coordinates.
	utm := [][]float64{
		{512345.678, 512346.178, 512346.678, 512347.178},
		{5812345.678, 5812345.678, 5812345.678, 5812345.678},
		{1.8, 1.8, 1.8, 1.8},
	}
	local := [][]float64{{0, 0.5, 1, 1.5}, {2, 2, 2, 2}, {0.3, 0.3, 0.3, 0.3}}
	geo := [][]float64{
		{52.4512, 52.451205, 52.45121, 52.451215},
		{0.1738, 0.1738, 0.1738, 0.1738},
		{1.8, 1.8, 1.8, 1.8},
	}
	stepText := func(ws []string, col string) string {
		for _, w := range ws {
			if strings.Contains(w, "column \""+col+"\" is stored as 32-bit floats") {
				return w
			}
		}
		return ""
	}
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		s, err := ReadSamples(write("harrow-fen-utm32"+ext, arrow.PrimitiveTypes.Float32, []string{"x", "y", "z"}, utm), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			col string
			v   float64
		}{{"x", 512347.178}, {"y", 5812345.678}} {
			w := stepText(s.Warnings, c.col)
			want := fmt.Sprintf("%.2g", step32(c.v))
			if w == "" || !strings.Contains(w, "step by "+want+" m") || !strings.Contains(w, "harrow-fen-utm32"+ext) {
				t.Errorf("%s: column %s in float32 at %g (steps of %g m): warning %q", ext, c.col, c.v, step32(c.v), w)
			}
		}
		if w := stepText(s.Warnings, "z"); w != "" {
			t.Errorf("%s: a float32 height of 1.8 m (steps of %g m) warned: %s", ext, step32(1.8), w)
		}
		s, err = ReadSamples(write("harrow-fen-local32"+ext, arrow.PrimitiveTypes.Float32, []string{"x", "y", "z"}, local), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range s.Warnings {
			if strings.Contains(w, "32-bit") {
				t.Errorf("%s: float32 positions near the origin warned: %s", ext, w)
			}
		}
		s, err = ReadSamples(write("harrow-fen-utm64"+ext, arrow.PrimitiveTypes.Float64, []string{"x", "y", "z"}, utm), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range s.Warnings {
			if strings.Contains(w, "bit floats") {
				t.Errorf("%s: float64 positions warned: %s", ext, w)
			}
		}
		s, err = ReadSamples(write("harrow-fen-ll32"+ext, arrow.PrimitiveTypes.Float32, []string{"lat", "lon", "height"}, geo), WithAllocator(checked(t)))
		if err != nil {
			t.Fatal(err)
		}
		lat := stepText(s.Warnings, "lat")
		if m := step32(52.451215) * 111320; lat == "" || !strings.Contains(lat, "about 0.42 m") {
			t.Errorf("%s: float32 latitude (steps of %.2g m): warning %q", ext, m, lat)
		}
		// A longitude of 0.17 degrees steps by 1.5e-8 degrees, 2 mm.
		if w := stepText(s.Warnings, "lon"); w != "" {
			t.Errorf("%s: float32 longitude near 0.17 degrees warned: %s", ext, w)
		}
	}
}
