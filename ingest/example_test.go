package ingest_test

import (
	"fmt"
	"io"
	"log"
	"os"
	"path/filepath"

	"undercurrent/ingest"
)

// A logger export from the Fenwick Lane cable route: microtesla columns
// with their own names, mapped to the canonical ones.
func ExampleReadSamples() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "fenwick-lane.csv")
	os.WriteFile(p, []byte("# Fenwick Lane, traverse 3\nt;chainage;Bx_uT;By_uT;Bz_uT\n0.0;0.00;1.5;19.9;-45.2\n0.1;0.05;1.6;19.8;-45.1\n"), 0o644)

	s, err := ingest.ReadSamples(p, ingest.WithColumns("x=chainage"))
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(s.Len(), "rows")
	fmt.Println("x:", s.X, "y:", s.Y)
	fmt.Println("bx (nT):", s.Bx)
	// Output:
	// 2 rows
	// x: [0 0.05] y: [0 0]
	// bx (nT): [1500 1600]
}

// Errors name the file, the line, the column and the text.
func ExampleOpen_error() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "log.csv")
	os.WriteFile(p, []byte("time,bx,by,bz\n0,1,2,3\n1,1,2,1oo.0\n"), 0o644)

	r, err := ingest.Open(p)
	if err != nil {
		log.Fatal(err)
	}
	defer r.Release()
	for r.Next() {
	}
	fmt.Println(filepath.Base(r.Err().Error()))
	// Output:
	// log.csv:3: column bz: "1oo.0" is not a number
}

// Streaming: batches are valid until the next call to Next.
func ExampleOpen() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "harrow-fen.csv")
	os.WriteFile(p, []byte("time,x,y,z,bx,by,bz\n0,0,0,0.3,10,20000,-45000\n1,0.5,0,0.3,12,20010,-45005\n"), 0o644)

	r, err := ingest.Open(p)
	if err != nil {
		log.Fatal(err)
	}
	defer r.Release()
	fmt.Println(r.Schema().Fields()[4].Name, r.Schema().Fields()[4].Type)
	rows := int64(0)
	for r.Next() {
		rows += r.RecordBatch().NumRows()
	}
	if err := r.Err(); err != nil {
		log.Fatal(err)
	}
	fmt.Println(rows, "rows")
	// Output:
	// bx float64
	// 2 rows
}

// Local east-north-up metres about an origin, WGS84 (NIMA TR8350.2).
func ExampleGeodetic_ToENU() {
	o := ingest.Geodetic{Lat: 40.137, Lon: -105.236, H: 1682}
	e := o.ToENU(ingest.Geodetic{Lat: 40.138, Lon: -105.236, H: 1682})
	fmt.Printf("%.6f %.6f %.6f\n", e[0], e[1], e[2])
	back := o.FromENU(e)
	fmt.Printf("%.9f\n", back.Lat)
	// Output:
	// 0.000000 111.066633 -0.000969
	// 40.138000000
}

// WriteSamples picks the format from the extension and writes atomically.
func ExampleWriteSamples() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	s := &ingest.Samples{Time: []float64{0, 1}, Bx: []float64{1.0 / 3, 2}, By: []float64{3, 4}, Bz: []float64{5, 6},
		Meta: map[string]string{"site": "Harrow Fen substation"}}
	p := filepath.Join(dir, "log.parquet")
	if err := ingest.WriteSamples(p, s); err != nil {
		log.Fatal(err)
	}
	back, err := ingest.ReadSamples(p)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(back.Bx[0] == 1.0/3, back.Meta["site"])
	// Output:
	// true Harrow Fen substation
}

// WriteFileAtomic leaves nothing behind when the writer fails.
func ExampleWriteFileAtomic() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "report.txt")
	err := ingest.WriteFileAtomic(p, func(w io.Writer) error {
		fmt.Fprintln(w, "half a report")
		return fmt.Errorf("out of ideas")
	})
	_, statErr := os.Stat(p)
	fmt.Println(err, os.IsNotExist(statErr))
	// Output:
	// out of ideas true
}

// Inspect summarises a log in one pass. (The sensor is turned on the spot
// and its field, written in mT, keeps its size: a total field, not a
// zero-field log.)
func ExampleInspect() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "kestrel-moor.csv")
	os.WriteFile(p, []byte("time,bx,by,bz\n0,0.002,0.019,-0.046\n1,0.019,-0.002,-0.046\n2,-0.002,-0.019,-0.046\n9,-0.019,0.002,-0.046\n"), 0o644)
	in, err := ingest.Inspect(p)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(in.Rows, in.Time.Interval, in.Time.Gaps)
	fmt.Println(in.Warnings[0])
	// Output:
	// 4 1 1
	// field: median |B| is 0.04981 nT, outside the Earth's field band of 15000-80000 nT; if these are total-field readings the columns are probably in mT (try units bx=mT,by=mT,bz=mT)
}

// WriteReader streams one format into another without holding the log in
// memory; a round trip keeps every value.
func ExampleWriteReader() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	in := filepath.Join(dir, "kestrel-moor.csv")
	os.WriteFile(in, []byte("time,x,y,z,bx,by,bz\n0,0,0,0.3,0.1,19876.25,-45210.473\n"), 0o644)

	r, err := ingest.Open(in)
	if err != nil {
		log.Fatal(err)
	}
	defer r.Release()
	out := filepath.Join(dir, "kestrel-moor.arrows")
	if err := ingest.WriteReader(out, r); err != nil {
		log.Fatal(err)
	}
	s, err := ingest.ReadSamples(out)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(s.Bz[0] == -45210.473, s.Bx[0] == 0.1)
	// Output:
	// true true
}

// Collect gathers the rest of a stream into plain columns.
func ExampleCollect() {
	s := &ingest.Samples{Time: []float64{0, 1, 2}, Bx: []float64{1, 2, 3}, By: []float64{0, 0, 0}, Bz: []float64{-1, -1, -1},
		Group: []string{"T01", "T01", "T02"}}
	r, err := ingest.NewSamplesReader(s, 2, nil) // batches of two rows
	if err != nil {
		log.Fatal(err)
	}
	defer r.Release()
	back, err := ingest.Collect(r)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(back.Len(), back.Bx, back.Group)
	// Output:
	// 3 [1 2 3] [T01 T01 T02]
}

// DetectFormat looks at content, not at the name.
func ExampleDetectFormat() {
	fmt.Println(ingest.DetectFormat([]byte("PAR1...")))
	fmt.Println(ingest.DetectFormat([]byte(" Format                 IAGA-2002                                    |\n")))
	fmt.Println(ingest.DetectFormat([]byte("time,bx,by,bz\n")))
	// Output:
	// parquet
	// iaga2002
	// csv
}
