package ingest

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// The autumn clock change in the United States' Mountain zone, 2014: at
// 02:00 MDT (UTC-06:00) on 2 November the clocks went back to 01:00 MST
// (UTC-07:00), i.e. at 08:00 UTC (from memory of the time-zone rules: the
// first Sunday of November since 2007). A logger writing local civil time
// without its offset, one reading every 5 s, writes 01:59:55 and then
// 01:00:00 five seconds later.
var mtnChange = time.Date(2014, 11, 2, 8, 0, 0, 0, time.UTC)

// fallBackLog returns a CSV of n readings every 5 s, the first 25 s before
// the change, their times written in layout in the zone the clock showed
// (MDT before the change, MST after).
func fallBackLog(n int, layout string) (string, []string) {
	mdt, mst := time.FixedZone("MDT", -6*3600), time.FixedZone("MST", -7*3600)
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	var texts []string
	for i := 0; i < n; i++ {
		t := mtnChange.Add(time.Duration(5*i-25) * time.Second)
		loc := mdt
		if !t.Before(mtnChange) {
			loc = mst
		}
		s := t.In(loc).Format(layout)
		texts = append(texts, s)
		fmt.Fprintf(&b, "%s,%d,20500,-47500\n", s, 3300+i)
	}
	return b.String(), texts
}

// TestTimeBackwardsShowsTextAndClockChange: a step back in time was refused
// with both times as Unix seconds ("1414890015 after 1414893590"), not as
// the file writes them, and with no word of the likely cause of a step back
// of an hour less the sampling: local times without their offset across
// the night the clocks go back. The refusal must quote both times as
// written, give the earlier one's line, and name the clock change then;
// for times that carry their offset (a real step back) and for an hour's
// step back on a summer afternoon it must not. Read in chunks of several
// sizes, so that the step back falls inside a chunk and across two.
func TestTimeBackwardsShowsTextAndClockChange(t *testing.T) {
	dir := t.TempDir()
	naive, texts := fallBackLog(12, "2006-01-02T15:04:05")
	// Line 7 is the last reading before the change (01:59:55 MDT), line 8
	// the first after it (01:00:00 MST).
	if texts[4] != "2014-11-02T01:59:55" || texts[5] != "2014-11-02T01:00:00" {
		t.Fatalf("the log's times around the change: %q %q", texts[4], texts[5])
	}
	p := filepath.Join(dir, "kestrel.csv")
	if err := os.WriteFile(p, []byte(naive), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, chunk := range []int{48, 64, 100, 200, 1 << 20} {
		_, err := ReadSamples(p, withChunkBytes(chunk))
		wantErr(t, err, `kestrel.csv:7: column time: time goes backwards: "2014-11-02T01:00:00" after "2014-11-02T01:59:55" (line 6), 59 min 55 s back`)
		wantErr(t, err, "the clocks went back an hour")
		if err != nil && strings.Contains(err.Error(), "1414") {
			t.Errorf("chunks of %d bytes: Unix seconds in the message: %v", chunk, err)
		}
	}

	// Written with their offsets the times run forward: read.
	zoned, _ := fallBackLog(12, time.RFC3339)
	pz := filepath.Join(dir, "zoned.csv")
	if err := os.WriteFile(pz, []byte(zoned), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadSamples(pz); err != nil {
		t.Errorf("the log with its offsets: %v", err)
	}
	// The naive texts with "Z" appended: UTC times that do step back an
	// hour; no clock change is suggested.
	pu := filepath.Join(dir, "utc.csv")
	if err := os.WriteFile(pu, []byte(strings.ReplaceAll(naive, ",3", "Z,3")), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := ReadSamples(pu)
	wantErr(t, err, `utc.csv:7: column time: time goes backwards: "2014-11-02T01:00:00Z" after "2014-11-02T01:59:55Z" (line 6)`)
	if err != nil && strings.Contains(err.Error(), "clocks went back") {
		t.Errorf("times with their offset taken for a clock change: %v", err)
	}
	// The same step back on a July afternoon: no clock goes back then.
	pj := filepath.Join(dir, "july.csv")
	july := strings.NewReplacer("2014-11-02T01:59", "2014-07-02T14:59", "2014-11-02T01:00", "2014-07-02T14:00").Replace(naive)
	if err := os.WriteFile(pj, []byte(july), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = ReadSamples(pj)
	wantErr(t, err, `july.csv:7: column time: time goes backwards: "2014-07-02T14:00:00" after "2014-07-02T14:59:55"`)
	if err != nil && strings.Contains(err.Error(), "clocks went back") {
		t.Errorf("a step back at 15:00 in July taken for a clock change: %v", err)
	}
}

// TestArrowTimeBackwardsShowsText: the same in an Arrow IPC file, the step
// back from one record batch to the next, with the times as text and as
// timestamps without a time zone; times in seconds are shown as written
// with the time they stand for.
func TestArrowTimeBackwardsShowsText(t *testing.T) {
	_, texts := fallBackLog(8, "2006-01-02T15:04:05")
	write := func(name string, typ arrow.DataType, fill func(b array.Builder, rows []int)) string {
		sc := arrow.NewSchema([]arrow.Field{{Name: "time", Type: typ}, {Name: "bx", Type: arrow.PrimitiveTypes.Float64},
			{Name: "by", Type: arrow.PrimitiveTypes.Float64}, {Name: "bz", Type: arrow.PrimitiveTypes.Float64}}, nil)
		p := filepath.Join(t.TempDir(), name)
		if err := WriteFileAtomic(p, func(w io.Writer) error {
			fw, err := ipc.NewFileWriter(w, ipc.WithSchema(sc))
			if err != nil {
				return err
			}
			// Two batches: rows 0-4 (to 01:59:55 MDT) and 5-7.
			for _, rows := range [][]int{{0, 1, 2, 3, 4}, {5, 6, 7}} {
				b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
				fill(b.Field(0), rows)
				for _, i := range rows {
					b.Field(1).(*array.Float64Builder).Append(3300 + float64(i))
					b.Field(2).(*array.Float64Builder).Append(20500)
					b.Field(3).(*array.Float64Builder).Append(-47500)
				}
				rec := b.NewRecordBatch()
				err := fw.Write(rec)
				rec.Release()
				b.Release()
				if err != nil {
					return err
				}
			}
			return fw.Close()
		}); err != nil {
			t.Fatal(err)
		}
		return p
	}
	// The clock's readings as local times read as UTC.
	naiveSec := func(i int) int64 {
		tm, err := time.Parse("2006-01-02T15:04:05", texts[i])
		if err != nil {
			t.Fatal(err)
		}
		return tm.Unix()
	}
	p := write("text.arrow", arrow.BinaryTypes.String, func(b array.Builder, rows []int) {
		for _, i := range rows {
			b.(*array.StringBuilder).Append(texts[i])
		}
	})
	_, err := ReadSamples(p)
	wantErr(t, err, `text.arrow: batch 1 row 0 (row 5 of the file, counting from 0): column time: time goes backwards: "2014-11-02T01:00:00" after "2014-11-02T01:59:55" (batch 0 row 4), 59 min 55 s back`)
	wantErr(t, err, "the clocks went back an hour")

	p = write("ts.arrow", &arrow.TimestampType{Unit: arrow.Millisecond}, func(b array.Builder, rows []int) {
		for _, i := range rows {
			b.(*array.TimestampBuilder).Append(arrow.Timestamp(naiveSec(i) * 1000))
		}
	})
	_, err = ReadSamples(p)
	wantErr(t, err, `time goes backwards: "2014-11-02T01:00:00" after "2014-11-02T01:59:55" (batch 0 row 4)`)
	wantErr(t, err, "the clocks went back an hour")

	p = write("sec.arrow", arrow.PrimitiveTypes.Int64, func(b array.Builder, rows []int) {
		for _, i := range rows {
			b.(*array.Int64Builder).Append(naiveSec(i))
		}
	})
	_, err = ReadSamples(p)
	// Seconds since 1970 are UTC: a step back, not a clock change.
	wantErr(t, err, fmt.Sprintf(`time goes backwards: %d (2014-11-02T01:00:00Z) after %d (2014-11-02T01:59:55Z) (batch 0 row 4)`, naiveSec(5), naiveSec(4)))
	if err != nil && strings.Contains(err.Error(), "clocks went back") {
		t.Errorf("seconds since 1970 taken for local times: %v", err)
	}
}

// TestClockChangeWarnedWhenOrderAllowsIt: read in any order (or per
// group), the same log was accepted with its repeated hour placed an hour
// early and no word but that its times give no offset; it is warned about,
// once. Times with their offset, and the same step back in July, are not.
func TestClockChangeWarnedWhenOrderAllowsIt(t *testing.T) {
	dir := t.TempDir()
	naive, _ := fallBackLog(12, "2006-01-02T15:04:05")
	zoned, _ := fallBackLog(12, time.RFC3339)
	july := strings.NewReplacer("2014-11-02T01:59", "2014-07-02T14:59", "2014-11-02T01:00", "2014-07-02T14:00").Replace(naive)
	for _, c := range []struct {
		name, text string
		want       int
	}{{"naive.csv", naive, 1}, {"zoned.csv", zoned, 0}, {"july.csv", july, 0}} {
		p := filepath.Join(dir, c.name)
		if err := os.WriteFile(p, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		for _, chunk := range []int{64, 1 << 20} {
			s, err := ReadSamples(p, WithTimeOrder(TimeAnyOrder), withChunkBytes(chunk))
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			n := 0
			for _, w := range s.Warnings {
				if strings.Contains(w, "the clocks go back an hour") {
					n++
					if !strings.Contains(w, "from 2014-11-02T01:59:55 to 2014-11-02T01:00:00, 59 min 55 s") {
						t.Errorf("%s: the warning does not give the times: %q", c.name, w)
					}
				}
			}
			if n != c.want {
				t.Errorf("%s, chunks of %d bytes: %d clock-change warnings, want %d: %q", c.name, chunk, n, c.want, s.Warnings)
			}
		}
	}
}
