package ingest

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strconv"
	"sync"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// Benchmarks read a generated canonical log of eight numeric columns
// (time, x, y, z, bx, by, bz, temp). The default is 1e6 rows; set
// UNDERCURRENT_BENCH_ROWS (for example 10000000, or 40000000 for a file of
// several GB) for the large run. They report rows/s and the process's peak
// resident memory (peak-RSS-MB), which stays flat as the file grows.
// UNDERCURRENT_BENCH_KEEP=1 keeps the generated files (to time other tools
// on the same bytes).

var (
	benchOnce  sync.Once
	benchDir   string
	benchFiles = map[string]string{}
	benchErr   error
)

func TestMain(m *testing.M) {
	code := m.Run()
	if benchDir != "" {
		if os.Getenv("UNDERCURRENT_BENCH_KEEP") != "" {
			fmt.Fprintln(os.Stderr, "benchmark logs kept in", benchDir)
		} else {
			os.RemoveAll(benchDir)
		}
	}
	os.Exit(code)
}

func benchRows() int {
	if s := os.Getenv("UNDERCURRENT_BENCH_ROWS"); s != "" {
		if n, err := strconv.Atoi(s); err == nil && n > 0 {
			return n
		}
	}
	return 1_000_000
}

// writeBenchCSV writes a Fenwick Lane style walking traverse at 100 Hz.
func writeBenchCSV(w io.Writer, rows int) error {
	buf := []byte("time,x,y,z,bx,by,bz,temp\n")
	for i := 0; i < rows; i++ {
		t := float64(i) * 0.01
		x := float64(i%4000) * 0.0125
		buf = strconv.AppendFloat(buf, t, 'f', 2, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, x, 'f', 4, 64)
		buf = append(buf, ",12.5,0.3,"...)
		buf = strconv.AppendFloat(buf, 1234.5+float64(i%977)*0.37, 'f', 3, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, 19876.25-float64(i%613)*0.11, 'f', 3, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, -45210.5+float64(i%331)*0.29, 'f', 3, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, 11.5+float64(i%50)*0.01, 'f', 2, 64)
		buf = append(buf, '\n')
		if len(buf) > 1<<20 {
			if _, err := w.Write(buf); err != nil {
				return err
			}
			buf = buf[:0]
		}
	}
	_, err := w.Write(buf)
	return err
}

// benchLogs writes the CSV once per process, then the same log as Arrow
// IPC file and Parquet through the package's own converter.
func benchLogs(b *testing.B) map[string]string {
	benchOnce.Do(func() {
		benchDir, benchErr = os.MkdirTemp("", "undercurrent-bench")
		if benchErr != nil {
			return
		}
		p := filepath.Join(benchDir, "log.csv")
		if benchErr = WriteFileAtomic(p, func(w io.Writer) error { return writeBenchCSV(w, benchRows()) }); benchErr != nil {
			return
		}
		benchFiles["csv"] = p
		for _, ext := range []string{"arrow", "parquet"} {
			q := filepath.Join(benchDir, "log."+ext)
			r, err := Open(p)
			if err != nil {
				benchErr = err
				return
			}
			benchErr = WriteReader(q, r)
			r.Release()
			if benchErr != nil {
				return
			}
			benchFiles[ext] = q
		}
	})
	if benchErr != nil {
		b.Fatal(benchErr)
	}
	return benchFiles
}

// resetPeakRSS returns freed memory to the system and resets the kernel's
// high-water mark of resident memory (Linux: "5" to /proc/self/clear_refs),
// so that peakRSSMB measures what follows, not the file generation.
func resetPeakRSS() {
	runtime.GC()
	debug.FreeOSMemory()
	os.WriteFile("/proc/self/clear_refs", []byte("5"), 0)
}

// peakRSSMB is the process's high-water mark of resident memory in MB
// (ingesttest.PeakRSS: VmHWM on Linux, the peak working set on Windows).
func peakRSSMB() float64 { return float64(ingesttest.PeakRSS()) / (1 << 20) }

func benchRead(b *testing.B, format string, opts ...Option) {
	p := benchLogs(b)[format]
	st, err := os.Stat(p)
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(st.Size())
	resetPeakRSS()
	b.ResetTimer()
	var rows int64
	for i := 0; i < b.N; i++ {
		r, err := Open(p, opts...)
		if err != nil {
			b.Fatal(err)
		}
		for r.Next() {
			rows += r.RecordBatch().NumRows()
		}
		if err := r.Err(); err != nil {
			b.Fatal(err)
		}
		r.Release()
	}
	b.StopTimer()
	if want := int64(benchRows()) * int64(b.N); rows != want {
		b.Fatalf("read %d rows, want %d", rows, want)
	}
	b.ReportMetric(float64(rows)/b.Elapsed().Seconds(), "rows/s")
	b.ReportMetric(peakRSSMB(), "peak-RSS-MB")
}

func BenchmarkReadCSV(b *testing.B)          { benchRead(b, "csv") }
func BenchmarkReadCSVOneWorker(b *testing.B) { benchRead(b, "csv", WithWorkers(1)) }
func BenchmarkReadArrowIPC(b *testing.B)     { benchRead(b, "arrow") }
func BenchmarkReadParquet(b *testing.B)      { benchRead(b, "parquet") }

func BenchmarkParseNumber(b *testing.B) {
	in := [][]byte{[]byte("-45210.473"), []byte("19876.25"), []byte("0.3"), []byte("1234567.125"), []byte("1.5e-3")}
	b.ResetTimer()
	var s float64
	for i := 0; i < b.N; i++ {
		v, _ := parseNumber(in[i%len(in)])
		s += v
	}
	if s == 0 {
		b.Log(s)
	}
}

func BenchmarkWriteParquet(b *testing.B) {
	p := benchLogs(b)["arrow"]
	out := filepath.Join(b.TempDir(), "out.parquet")
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		r, err := Open(p)
		if err != nil {
			b.Fatal(err)
		}
		if err := WriteReader(out, r); err != nil {
			b.Fatal(err)
		}
		r.Release()
	}
	b.ReportMetric(float64(benchRows()*b.N)/b.Elapsed().Seconds(), "rows/s")
}
