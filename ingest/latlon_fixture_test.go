package ingest

import (
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// llRow is a reading of a latitude/longitude/height test log: time, the
// position (NaN for a missing value) and a fixed field.
type llRow struct{ t, lat, lon, h float64 }

// latLonLogs writes rows as name.csv (a missing value as an empty cell)
// and as name.arrow, name.arrows and name.parquet in two batches, the
// first holding rows[:split], and returns the paths by extension.
func latLonLogs(t *testing.T, name string, rows []llRow, split int) map[string]string {
	t.Helper()
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "lat", Type: arrow.PrimitiveTypes.Float64},
		{Name: "lon", Type: arrow.PrimitiveTypes.Float64},
		{Name: "height", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fill := func(rows []llRow) func(*array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			for _, r := range rows {
				for k, v := range []float64{r.t, r.lat, r.lon, r.h, 17000, 1000, 48000} {
					b.Field(k).(*array.Float64Builder).Append(v)
				}
			}
		}
	}
	var sb strings.Builder
	sb.WriteString("time,lat,lon,height,bx,by,bz\n")
	for _, r := range rows {
		for k, v := range []float64{r.t, r.lat, r.lon, r.h} {
			if v == v {
				sb.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
			}
			if k < 3 {
				sb.WriteByte(',')
			}
		}
		sb.WriteString(",17000,1000,48000\n")
	}
	files := map[string]string{"csv": writeFile(t, name+".csv", sb.String())}
	for _, ext := range []string{"arrow", "arrows", "parquet"} {
		files[ext] = writeArrowBatches(t, name+"."+ext, sc, fill(rows[:split]), fill(rows[split:]))
	}
	return files
}
