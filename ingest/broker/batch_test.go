package broker

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

func TestDecode(t *testing.T) {
	const subj = "uc.data.fenwick-lane.s1"
	cases := []struct {
		name    string
		ctype   string
		payload string
		wantErr string // "" means success
		wantN   int
	}{
		{"explicit times", "", `{"time":[1,2,3],"bx":[1,2,3],"by":[0,0,0],"bz":[5,5,5]}`, "", 3},
		{"t0 and rate", ContentJSON, `{"t0":10,"rate":4,"bx":[1,2],"by":[0,0],"bz":[5,5]}`, "", 2},
		{"names match subject", "", `{"asset":"fenwick-lane","sensor":"s1","time":[1],"bx":[1],"by":[0],"bz":[5]}`, "", 1},
		{"wrong sensor", "", `{"sensor":"s2","time":[1],"bx":[1],"by":[0],"bz":[5]}`, `names sensor "s2"`, 0},
		{"syntax error names line and column", "", "{\"time\":[1,2],\n\"bx\":[1,2x]}", "line 2 column 10", 0},
		{"text in a number column", "", `{"time":[1],"bx":["1oo.0"],"by":[0],"bz":[5]}`, `field "bx"`, 0},
		{"unknown field", "", `{"time":[1],"bx":[1],"by":[0],"bz":[5],"bq":[1]}`, `unknown field "bq"`, 0},
		{"length mismatch", "", `{"time":[1,2],"bx":[1],"by":[0,0],"bz":[5,5]}`, "column bx has 1 values", 0},
		{"times must increase", "", `{"time":[1,3,2],"bx":[1,1,1],"by":[0,0,0],"bz":[5,5,5]}`, "row 3: column time", 0},
		{"empty", "", `{"time":[],"bx":[],"by":[],"bz":[]}`, "no samples", 0},
		{"no times", "", `{"bx":[1],"by":[0],"bz":[5]}`, `missing "time"`, 0},
		{"bad rate", "", `{"t0":0,"rate":0,"bx":[1],"by":[0],"bz":[5]}`, "not a positive sample rate", 0},
		// A batch with t0 and no rate was refused as "rate: 0 is not a
		// positive sample rate", pointing at a value nobody sent.
		{"t0 without rate", "", `{"t0":1796290000,"bx":[1,2],"by":[0,0],"bz":[5,5]}`, `"t0" needs "rate"`, 0},
		{"unknown encoding", "", "\x00\x01garbage", "unknown payload encoding", 0},
		{"corrupt arrow", "", "\xff\xff\xff\xff\x10\x00\x00\x00garbagegarbage", "arrow", 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := Decode(subj, tc.ctype, []byte(tc.payload))
			if tc.wantErr != "" {
				if err == nil {
					t.Fatalf("no error, want one containing %q", tc.wantErr)
				}
				if !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("error %q, want ErrMalformed containing %q", err, tc.wantErr)
				}
				if !strings.Contains(err.Error(), subj) {
					t.Errorf("error %q does not name the subject", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if b.Len() != tc.wantN || b.Asset != "fenwick-lane" || b.Sensor != "s1" {
				t.Fatalf("got %d samples for %s/%s", b.Len(), b.Asset, b.Sensor)
			}
		})
	}
}

func TestDecodeRateTimes(t *testing.T) {
	b, err := Decode("uc.data.a.s", "", []byte(`{"t0":100,"rate":1000,"bx":[1,2,3],"by":[0,0,0],"bz":[0,0,0]}`))
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{100, 100.001, 100.002} {
		if math.Abs(b.Time[i]-want) > 1e-9 {
			t.Errorf("time[%d] = %v, want %v", i, b.Time[i], want)
		}
	}
}

func TestValidateNaN(t *testing.T) {
	b := &Batch{Time: []float64{0, 1}, Bx: []float64{0, math.NaN()}, By: []float64{0, 0}, Bz: []float64{0, 0}}
	err := b.Validate("log.arrows batch 3")
	if err == nil || !strings.Contains(err.Error(), "log.arrows batch 3: row 2: column bx: NaN") {
		t.Fatalf("error %v", err)
	}
}

func testBatch(n int) *Batch {
	b := &Batch{Asset: "kestrel-moor", Sensor: "m2"}
	for i := 0; i < n; i++ {
		b.Time = append(b.Time, 1764650000+float64(i)/1000)
		b.Bx = append(b.Bx, 17+float64(i))
		b.By = append(b.By, -4.5)
		b.Bz = append(b.Bz, 48000+0.25*float64(i))
	}
	return b
}

func TestArrowRoundTrip(t *testing.T) {
	for _, withTemp := range []bool{false, true} {
		t.Run(fmt.Sprint("temp=", withTemp), func(t *testing.T) {
			in := testBatch(50)
			if withTemp {
				in.Temp = make([]float64, 50)
				for i := range in.Temp {
					in.Temp[i] = 11.5 + float64(i)/100
				}
			}
			data, err := EncodeArrow(in)
			if err != nil {
				t.Fatal(err)
			}
			out, err := Decode(DataSubject(in.Asset, in.Sensor), "", data)
			if err != nil {
				t.Fatal(err)
			}
			for i := range in.Time {
				if out.Time[i] != in.Time[i] || out.Bx[i] != in.Bx[i] || out.By[i] != in.By[i] || out.Bz[i] != in.Bz[i] {
					t.Fatalf("row %d differs", i)
				}
			}
			if (out.Temp != nil) != withTemp {
				t.Fatalf("temp column presence %v", out.Temp != nil)
			}
		})
	}
}

func TestRecordBatchReleases(t *testing.T) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	rec := testBatch(10).RecordBatch(mem)
	if rec.NumRows() != 10 || rec.NumCols() != 4 {
		t.Fatalf("rows %d cols %d", rec.NumRows(), rec.NumCols())
	}
	rec.Release()
}

func TestJSONRoundTrip(t *testing.T) {
	in := testBatch(7)
	data, err := EncodeJSON(in)
	if err != nil {
		t.Fatal(err)
	}
	out, err := Decode(DataSubject(in.Asset, in.Sensor), ContentJSON, data)
	if err != nil {
		t.Fatal(err)
	}
	if out.Len() != 7 || out.Bz[6] != in.Bz[6] {
		t.Fatalf("round trip lost data: %+v", out)
	}
}

func TestSubjects(t *testing.T) {
	if got := DataSubject("fenwick-lane", "s1"); got != "uc.data.fenwick-lane.s1" {
		t.Errorf("DataSubject = %q", got)
	}
	a, s, err := ParseDataSubject("uc.data.fenwick-lane.s1")
	if err != nil || a != "fenwick-lane" || s != "s1" {
		t.Errorf("ParseDataSubject = %q %q %v", a, s, err)
	}
	for _, bad := range []string{"uc.data.a", "uc.est.a.b", "uc.data.a.b.c", "uc.data.a.*"} {
		if _, _, err := ParseDataSubject(bad); err == nil {
			t.Errorf("ParseDataSubject(%q) accepted", bad)
		}
	}
	for _, bad := range []string{"", "a.b", "a b", "a/b", ">", strings.Repeat("x", 65)} {
		if ValidToken(bad) == nil {
			t.Errorf("ValidToken(%q) accepted", bad)
		}
	}
}

func ExampleDecode() {
	b, err := Decode("uc.data.fenwick-lane.s1", "", []byte(`{"t0": 1764650000, "rate": 1000, "bx": [12.5, 12.7], "by": [-3.1, -3.0], "bz": [48210.4, 48210.9]}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(b.Asset, b.Sensor, b.Len(), b.Time[1]-b.Time[0] > 0.0009)
	// Output: fenwick-lane s1 2 true
}

func BenchmarkDecodeJSON1000(b *testing.B) {
	data, _ := EncodeJSON(testBatch(1000))
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := Decode("uc.data.a.s", ContentJSON, data); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkDecodeArrow1000(b *testing.B) {
	data, _ := EncodeArrow(testBatch(1000))
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := Decode("uc.data.a.s", ContentArrow, data); err != nil {
			b.Fatal(err)
		}
	}
}
