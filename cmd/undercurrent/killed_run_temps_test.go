package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
)

// TestLogStagedUnderOneName: while a log output is being written (convert,
// simulate -o), the only file beside it is its one temporary file,
// .NAME.tmpDIGITS.EXT, the name removeStaleTemps sweeps once stale. Before,
// ingest's atomic writer staged the log a second time inside the first
// temporary file's name (..NAME.tmpDIGITS.EXT.tmpDIGITS), and a run killed
// outright (kill -9) left that file, most of the log's size, for good.
func TestLogStagedUnderOneName(t *testing.T) {
	dir := t.TempDir()
	in := simulatedLog(t, dir, "line.csv")
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		t.Run(ext, func(t *testing.T) {
			out := filepath.Join(dir, "out"+ext)
			r, err := ingest.Open(in)
			if err != nil {
				t.Fatal(err)
			}
			defer r.Release()
			var during []string
			spy := &listingReader{Reader: r, list: func() { during = hiddenNames(t, dir) }}
			if err := writeLog(out, spy, false); err != nil {
				t.Fatal(err)
			}
			want := regexp.MustCompile(`^\.` + regexp.QuoteMeta("out"+ext) + `\.tmp[0-9]+` + regexp.QuoteMeta(ext) + `$`)
			if len(during) != 1 || !want.MatchString(during[0]) {
				t.Errorf("hidden files while writing %s: %q; want just one, named like %s", filepath.Base(out), during, want)
			}
			// What a kill at that moment leaves is what the next run
			// sweeps once stale.
			for _, n := range during {
				if prefix := "." + filepath.Base(out); !strings.HasPrefix(n, prefix) || !tempSuffix.MatchString(n[len(prefix):]) {
					t.Errorf("%s: not a name the sweep of stale temporary files looks for", n)
				}
			}
			if got := hiddenNames(t, dir); len(got) != 0 {
				t.Errorf("left %q after the write", got)
			}
		})
	}
}

// listingReader calls list once, after the writer has taken the first
// batch (the output's temporary file exists and is being written).
type listingReader struct {
	ingest.Reader
	list   func()
	called bool
}

func (r *listingReader) Next() bool {
	ok := r.Reader.Next()
	if ok && !r.called {
		r.called = true
	} else if r.called && r.list != nil {
		r.list()
		r.list = nil
	}
	return ok
}

// hiddenNames lists the names in dir that start with a dot.
func hiddenNames(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	for _, n := range entries(t, dir) {
		if strings.HasPrefix(n, ".") {
			out = append(out, n)
		}
	}
	return out
}

// TestKilledRunTempsRemoved: the files that a simulate or convert run
// killed outright (kill -9) left beside its outputs, named as this
// version stages them (.NAME.tmpDIGITS.EXT) or as earlier versions did
// (..NAME.tmpDIGITS.EXT.tmpDIGITS, the log's partial copy), are removed by
// the next run writing those outputs once untouched for an hour, as the
// README says; a recent one (a run may be writing it), another output's
// and a name of another pattern are kept.
func TestKilledRunTempsRemoved(t *testing.T) {
	dir := t.TempDir()
	old := time.Now().Add(-2 * time.Hour)
	mk := func(name string, stale bool) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("time,x,y,z,bx,by,bz\n1,0,0,0,1,2,3\n"), 0o600); err != nil {
			t.Fatal(err)
		}
		if stale {
			if err := os.Chtimes(p, old, old); err != nil {
				t.Fatal(err)
			}
		}
		return p
	}
	gone := []string{
		// simulate -o sim.csv --truth truth.csv, killed while writing.
		mk(".sim.csv.tmp3262434714.csv", true),
		mk("..sim.csv.tmp3262434714.csv.tmp1372093655", true),
		mk(".truth.csv.tmp453074835", true),
		mk("..truth.csv.tmp453074835.tmp90210", true),
		// convert IN cv.parquet, killed three times.
		mk(".cv.parquet.tmp882405329.parquet", true),
		mk("..cv.parquet.tmp882405329.parquet.tmp3949708119", true),
		mk("..cv.parquet.tmp2025576861.parquet.tmp479160265", true),
	}
	kept := []string{
		mk("..sim.csv.tmp11.csv.tmp12", false),      // recent: a run may be writing it
		mk(".cv.parquet.tmp13.parquet", false),      // recent
		mk("..other.csv.tmp14.csv.tmp15", true),     // another output's
		mk("..sim.csv.tmp16.csv.tmp17.bak", true),   // not our pattern
		mk("..sim.csv.notes", true),                 // not our pattern
		mk("...sim.csv.tmp18.csv.tmp19", true),      // not our pattern
		mk("..cv.parquet.tmpx.parquet.tmp20", true), // not our pattern
	}
	_, scen := scenario(t, "single-line.toml")
	mustCLI(t, "simulate", scen, "-o", filepath.Join(dir, "sim.csv"), "--truth", filepath.Join(dir, "truth.csv"))
	mustCLI(t, "convert", filepath.Join(dir, "sim.csv"), filepath.Join(dir, "cv.parquet"))
	for _, p := range gone {
		if _, err := os.Lstat(p); !os.IsNotExist(err) {
			t.Errorf("%s: left by a killed run and stale, not removed", filepath.Base(p))
		}
	}
	for _, p := range kept {
		if _, err := os.Lstat(p); err != nil {
			t.Errorf("%s: removed, want kept", filepath.Base(p))
		}
	}
}
