package main

import (
	"encoding/csv"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// writeLatLonCopies writes the latitude/longitude CSV log at src (time,
// lat, lon, height, bx, by, bz, group) again, every value as the float64
// it reads as, as an Arrow IPC file, an Arrow IPC stream and Parquet, in
// batches of 1000 rows, as another program would write such a log (undercurrent
// convert writes local x, y, z). It returns the three paths.
func writeLatLonCopies(t *testing.T, src string) []string {
	t.Helper()
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "lat", Type: arrow.PrimitiveTypes.Float64},
		{Name: "lon", Type: arrow.PrimitiveTypes.Float64},
		{Name: "height", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "group", Type: arrow.BinaryTypes.String},
	}, nil)
	lines := strings.Split(strings.TrimSpace(readText(t, src)), "\n")
	if lines[0] != "time,lat,lon,height,bx,by,bz,group" {
		t.Fatalf("%s: header %q", src, lines[0])
	}
	var recs []arrow.RecordBatch
	defer func() {
		for _, r := range recs {
			r.Release()
		}
	}()
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	for i, line := range lines[1:] {
		c := strings.Split(line, ",")
		for k := 0; k < 7; k++ {
			v, err := strconv.ParseFloat(c[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			b.Field(k).(*array.Float64Builder).Append(v)
		}
		b.Field(7).(*array.StringBuilder).Append(c[7])
		if (i+1)%1000 == 0 || i == len(lines)-2 {
			recs = append(recs, b.NewRecordBatch())
		}
	}
	var paths []string
	base := strings.TrimSuffix(src, filepath.Ext(src))
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		p := base + ext
		f, err := os.Create(p)
		if err != nil {
			t.Fatal(err)
		}
		var w interface {
			Write(arrow.RecordBatch) error
			Close() error
		}
		switch ext {
		case ".arrow":
			w, err = ipc.NewFileWriter(f, ipc.WithSchema(sc))
		case ".arrows":
			w = ipc.NewWriter(f, ipc.WithSchema(sc))
		default:
			w, err = pqarrow.NewFileWriter(sc, io.Writer(f), nil, pqarrow.DefaultWriterProps())
		}
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range recs {
			if err := w.Write(r); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		f.Close()
		paths = append(paths, p)
	}
	return paths
}

// TestLatLonLogEveryFormat: a latitude/longitude log read as an Arrow IPC
// file or stream or as Parquet kept no origin and a zero local frame:
// convert wrote every reading at x = y = 0 with z its height and no
// undercurrent.origin, locate fitted nothing sensible, and an --origin
// far from the log went unchecked (the check looks for the log's origin
// in its metadata). The Kestrel Moor walk-through survey written in
// latitude and longitude (latLonLogs: the WGS84 radii of curvature,
// NIMA TR8350.2) and copied into each format reads the same in all four,
// by the default origin (its first reading) and by --origin mean: convert
// writes the same CSV, and locate on the Parquet copy writes the same
// results.csv as on the CSV. An --origin 111 km from the first reading
// is refused for each copy, exit 2, as for the CSV.
func TestLatLonLogEveryFormat(t *testing.T) {
	dir := t.TempDir()
	a, _, _ := latLonLogs(t, dir)
	copies := writeLatLonCopies(t, a)
	lat, lon, h := firstRow(t, a)
	for _, origin := range []string{"", "mean"} {
		var flags []string
		if origin != "" {
			flags = []string{"--origin", origin}
		}
		want := ""
		for _, in := range append([]string{a}, copies...) {
			out := filepath.Join(dir, "conv-"+origin+filepath.Ext(in)+".csv")
			mustCLI(t, append(append([]string{"convert"}, flags...), in, out)...)
			got := readText(t, out)
			if want == "" {
				want = got
				o := csvOrigin(t, got)
				if origin == "" && (o[0] != lat || o[1] != lon || o[2] != h) {
					t.Fatalf("%s: origin %v, want the first reading (%v, %v, %v)", in, o, lat, lon, h)
				}
				continue
			}
			if got != want {
				t.Errorf("convert %s %s: the CSV differs from the CSV log's:\n%.300s\nwant\n%.300s", strings.Join(flags, " "), in, got, want)
			}
		}
		var results string
		for _, in := range []string{a, copies[2]} {
			out := filepath.Join(dir, "loc-"+origin+filepath.Ext(in))
			mustCLI(t, append(append([]string{"locate", "--group-by", "group"}, flags...), "-o", out, in)...)
			got := withoutLogColumn(t, readText(t, filepath.Join(out, "results.csv")))
			if results == "" {
				results = got
			} else if got != results {
				t.Errorf("locate %s %s: results.csv differs from the CSV log's:\n%.600s\nwant\n%.600s", strings.Join(flags, " "), in, got, results)
			}
		}
	}
	for _, in := range copies {
		code, _, errOut := cli(t, "inspect", "--origin", "55.3125,-2.0883", in)
		if code != 2 || !strings.Contains(errOut, "from the log's first reading") {
			t.Errorf("inspect --origin 111 km away %s: exit %d, want 2 and the distance:\n%s", in, code, errOut)
		}
	}
}

// csvOrigin returns the latitude, longitude and height of a CSV log's
// "# undercurrent.origin:" line.
func csvOrigin(t *testing.T, text string) [3]float64 {
	t.Helper()
	const key = "# undercurrent.origin: "
	i := strings.Index(text, key)
	if i < 0 {
		t.Fatalf("no origin line in\n%.300s", text)
	}
	f := strings.Fields(strings.SplitN(text[i+len(key):], "\n", 2)[0])
	var v [3]float64
	for k := range v {
		x, err := strconv.ParseFloat(f[k], 64)
		if err != nil || math.IsNaN(x) {
			t.Fatalf("origin %q: %v", f, err)
		}
		v[k] = x
	}
	return v
}

// withoutLogColumn drops results.csv's log column (each group's input
// path), which differs between copies of one log by design.
func withoutLogColumn(t *testing.T, text string) string {
	t.Helper()
	rows, err := csv.NewReader(strings.NewReader(text)).ReadAll()
	if err != nil {
		t.Fatalf("results.csv: %v", err)
	}
	col := -1
	for i, h := range rows[0] {
		if h == "log" {
			col = i
		}
	}
	if col < 0 {
		t.Fatalf("results.csv has no log column: %v", rows[0])
	}
	var b strings.Builder
	w := csv.NewWriter(&b)
	for _, r := range rows {
		if err := w.Write(append(append([]string(nil), r[:col]...), r[col+1:]...)); err != nil {
			t.Fatal(err)
		}
	}
	w.Flush()
	return b.String()
}
