package ingest

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// awkward holds float64 values whose decimal forms are long or special.
var awkward = []float64{0, math.Copysign(0, -1), 1.0 / 3, -2.0 / 3, 0.1, 1e-300, 5e-324,
	math.MaxFloat64, 123456789.123456789, -4.35e4, 1e22, 1e23, 9007199254740993, 0.30000000000000004}

// plausible holds the awkward values a position or a field may take
// (the readers refuse a position beyond 1e8 m and a field beyond 1e17 nT:
// checkPlausible); the temperature column carries every awkward value.
var plausible = func() []float64 {
	var v []float64
	for _, x := range awkward {
		if math.Abs(x) <= 1e7 {
			v = append(v, x)
		}
	}
	return v
}()

func testSamples() *Samples {
	n := len(awkward)
	np := len(plausible)
	s := &Samples{Source: "fixture", Meta: map[string]string{"site": "Harrow Fen substation", "note": "a, b: c"}}
	origin := Geodetic{52.61, 0.123456789, 4.5}
	s.Origin = &origin
	for i := 0; i < n; i++ {
		s.Time = append(s.Time, 1.7e9+float64(i)*0.1+1.0/3)
		s.X = append(s.X, plausible[i%np])
		s.Y = append(s.Y, plausible[(i+3)%np])
		s.Z = append(s.Z, -plausible[(i+5)%np])
		s.Bx = append(s.Bx, plausible[(i+1)%np])
		s.By = append(s.By, plausible[(i+2)%np])
		s.Bz = append(s.Bz, -plausible[(i+7)%np])
		s.Temp = append(s.Temp, awkward[(i+4)%n])
		s.Group = append(s.Group, []string{"A", "B, \"north\"", "", " pad"}[i%4])
	}
	return s
}

func sameFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
			return false
		}
	}
	return true
}

// TestRoundTrip writes every format and reads it back: every value must
// come back bit for bit, with the origin and header fields.
func TestRoundTrip(t *testing.T) {
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		t.Run(ext, func(t *testing.T) {
			in := testSamples()
			p := filepath.Join(t.TempDir(), "log"+ext)
			if err := WriteSamples(p, in); err != nil {
				t.Fatal(err)
			}
			mem := checked(t)
			out, err := ReadSamples(p, WithAllocator(mem))
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range []struct {
				name string
				a, b []float64
			}{{"time", in.Time, out.Time}, {"x", in.X, out.X}, {"y", in.Y, out.Y}, {"z", in.Z, out.Z},
				{"bx", in.Bx, out.Bx}, {"by", in.By, out.By}, {"bz", in.Bz, out.Bz}, {"temp", in.Temp, out.Temp}} {
				if !sameFloats(c.a, c.b) {
					t.Errorf("column %s: got %v, want %v", c.name, c.b, c.a)
				}
			}
			if strings.Join(in.Group, "|") != strings.Join(out.Group, "|") {
				t.Errorf("group: %q, want %q", out.Group, in.Group)
			}
			if out.Origin == nil || *out.Origin != *in.Origin {
				t.Errorf("origin %v, want %v", out.Origin, in.Origin)
			}
			if out.Meta["site"] != in.Meta["site"] || out.Meta["note"] != in.Meta["note"] {
				t.Errorf("meta %v", out.Meta)
			}
			if out.Roll != nil || out.F != nil {
				t.Error("absent columns came back")
			}
		})
	}
}

func TestRoundTripSensorFrameAndMissing(t *testing.T) {
	s := &Samples{Time: []float64{0, 1}, Bx: []float64{1, math.NaN()}, By: []float64{2, 3}, Bz: []float64{4, 5},
		Roll: []float64{1, 2}, Pitch: []float64{3, 4}, Yaw: []float64{5, 6}, Frame: FrameSensor}
	for _, ext := range []string{".csv", ".arrow", ".parquet"} {
		p := filepath.Join(t.TempDir(), "s"+ext)
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		_, err := ReadSamples(p)
		wantErr(t, err, "missing values are not allowed")
		out, err := ReadSamples(p, WithAllowMissing(true))
		if err != nil {
			t.Fatal(err)
		}
		if out.Frame != FrameSensor || !sameFloats(out.Bx, s.Bx) || !sameFloats(out.Yaw, s.Yaw) {
			t.Errorf("%s: frame %v bx %v yaw %v", ext, out.Frame, out.Bx, out.Yaw)
		}
	}
}

func TestTruncatedFiles(t *testing.T) {
	var b strings.Builder
	s := &Samples{}
	for i := 0; i < 200000; i++ {
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, float64(i)/3)
		s.By = append(s.By, 1)
		s.Bz = append(s.Bz, 2)
	}
	_ = b
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		t.Run(ext, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), "log"+ext)
			if err := WriteSamples(p, s); err != nil {
				t.Fatal(err)
			}
			data, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			for _, frac := range []float64{0.99, 0.6, 0.1} {
				q := filepath.Join(t.TempDir(), "cut"+ext)
				if err := os.WriteFile(q, data[:int(frac*float64(len(data)))], 0o644); err != nil {
					t.Fatal(err)
				}
				mem := checked(t)
				_, err := ReadSamples(q, WithAllocator(mem))
				if err == nil {
					t.Fatalf("cut at %.0f%%: no error", 100*frac)
				}
				// Each format's message says the file was cut short.
				if !strings.HasPrefix(err.Error(), "ingest: "+q) || !strings.Contains(err.Error(), "cut short") {
					t.Errorf("cut at %.0f%%: %v", 100*frac, err)
				}
			}
		})
	}
}

// TestArrowForeignSchema reads an Arrow file written by another program:
// other names, integer and timestamp types, microtesla, nulls.
func TestArrowForeignSchema(t *testing.T) {
	mem := checked(t)
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "ts", Type: &arrow.TimestampType{Unit: arrow.Millisecond}},
		{Name: "Bx_uT", Type: arrow.PrimitiveTypes.Float32},
		{Name: "By_uT", Type: arrow.PrimitiveTypes.Int32},
		{Name: "Bz_uT", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "line", Type: arrow.PrimitiveTypes.Int64},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	b.Field(0).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{1500, 2500}, nil)
	b.Field(1).(*array.Float32Builder).AppendValues([]float32{0.5, 0.25}, nil)
	b.Field(2).(*array.Int32Builder).AppendValues([]int32{20, 21}, nil)
	b.Field(3).(*array.Float64Builder).AppendValues([]float64{-45, 0}, []bool{true, false})
	b.Field(4).(*array.Int64Builder).AppendValues([]int64{7, 8}, nil)
	rec := b.NewRecordBatch()
	defer rec.Release()
	p := filepath.Join(t.TempDir(), "foreign.bin") // the name says nothing
	if err := WriteFileAtomic(p, func(w io.Writer) error {
		fw, err := ipc.NewFileWriter(w, ipc.WithSchema(sc))
		if err != nil {
			return err
		}
		if err := fw.Write(rec); err != nil {
			return err
		}
		return fw.Close()
	}); err != nil {
		t.Fatal(err)
	}
	_, err := ReadSamples(p, WithColumns("time=ts", "group=line"), WithAllocator(mem))
	wantErr(t, err, "foreign.bin: batch 0 row 1: column Bz_uT: null value")
	s, err := ReadSamples(p, WithColumns("time=ts", "group=line"), WithAllowMissing(true), WithAllocator(mem))
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(s.Time, []float64{1.5, 2.5}) || !sameFloats(s.Bx, []float64{500, 250}) ||
		!sameFloats(s.By, []float64{20000, 21000}) || s.Bz[0] != -45000 || !math.IsNaN(s.Bz[1]) ||
		strings.Join(s.Group, ",") != "7,8" {
		t.Errorf("got time %v bx %v by %v bz %v group %v", s.Time, s.Bx, s.By, s.Bz, s.Group)
	}
}

func TestArrowChecks(t *testing.T) {
	s := &Samples{Time: []float64{0, 1, 0.5}, Bx: []float64{1, 2, 3}, By: []float64{1, 2, 3}, Bz: []float64{1, 2, 3}}
	for _, ext := range []string{".arrow", ".arrows", ".parquet"} {
		p := filepath.Join(t.TempDir(), "log"+ext)
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		mem := checked(t)
		_, err := ReadSamples(p, WithAllocator(mem))
		wantErr(t, err, "log"+ext+": batch 0 row 2: column time: time goes backwards: 0.5 after 1")
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.csv")
	if err := os.WriteFile(p, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := WriteFileAtomic(p, func(w io.Writer) error {
		io.WriteString(w, strings.Repeat("partial ", 1<<18))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("err = %v, want boom", err)
	}
	if got, _ := os.ReadFile(p); string(got) != "old" {
		t.Errorf("existing file changed to %d bytes", len(got))
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("directory holds %d entries, want only out.csv", len(ents))
	}
	// A reader that fails part-way leaves no output either.
	in := writeFile(t, "in.csv", "time,bx,by,bz\n0,1,2,3\n1,1,2,x\n")
	r, err := Open(in)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	q := filepath.Join(dir, "new.parquet")
	wantErr(t, WriteReader(q, r), `in.csv:3: column bz: "x" is not a number`)
	if _, err := os.Stat(q); !os.IsNotExist(err) {
		t.Errorf("output left behind: %v", err)
	}
	if err := WriteFileAtomic(p, func(w io.Writer) error { _, err := io.WriteString(w, "new"); return err }); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(p); string(got) != "new" {
		t.Errorf("content %q, want new", got)
	}
}

func TestDetectFormatIgnoresName(t *testing.T) {
	s := &Samples{Time: []float64{0}, Bx: []float64{1}, By: []float64{2}, Bz: []float64{3}}
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		p := filepath.Join(t.TempDir(), "log"+ext)
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		q := filepath.Join(t.TempDir(), "renamed.dat")
		if err := os.Rename(p, q); err != nil {
			t.Fatal(err)
		}
		out, err := ReadSamples(q)
		if err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		if out.Bz[0] != 3 {
			t.Errorf("%s: bz %v", ext, out.Bz)
		}
	}
}

// TestArrowDictionaryGroup: data servers often write text ids
// dictionary-encoded.
func TestArrowDictionaryGroup(t *testing.T) {
	mem := checked(t)
	dt := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
		{Name: "sensor", Type: dt},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	for i := 0; i < 4; i++ {
		b.Field(i).(*array.Float64Builder).AppendValues([]float64{0, 1, 2}, nil)
	}
	db := b.Field(4).(*array.BinaryDictionaryBuilder)
	for _, s := range []string{"HF-1", "HF-2", "HF-1"} {
		if err := db.AppendString(s); err != nil {
			t.Fatal(err)
		}
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	p := filepath.Join(t.TempDir(), "dict.arrows")
	if err := WriteFileAtomic(p, func(w io.Writer) error {
		sw := ipc.NewWriter(w, ipc.WithSchema(sc))
		if err := sw.Write(rec); err != nil {
			return err
		}
		return sw.Close()
	}); err != nil {
		t.Fatal(err)
	}
	s, err := ReadSamples(p, WithAllocator(mem))
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(s.Group, ",") != "HF-1,HF-2,HF-1" {
		t.Errorf("group %q", s.Group)
	}
}
