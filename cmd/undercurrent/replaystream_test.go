package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
	"github.com/spf13/pflag"

	"undercurrent/ingest"
	"undercurrent/ingest/broker"
)

// writeSensorLog writes an invented log of three sensors at 100 Hz for
// seconds: in time order (rows interleaved), or each sensor's rows after
// the other's (blocks).
func writeSensorLog(t *testing.T, path string, seconds int, blocks bool) {
	t.Helper()
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,group\n")
	row := func(k int, g string) {
		fmt.Fprintf(&sb, "%.2f,%d,-6543.2,45000.1,%s\n", 1796104800+float64(k)/100, 12000+k%97, g)
	}
	sensors := []string{"s1", "s2", "s3"}
	if blocks {
		for _, g := range sensors {
			for k := range seconds * 100 {
				row(k, g)
			}
		}
	} else {
		for k := range seconds * 100 {
			for _, g := range sensors {
				row(k, g)
			}
		}
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// replay reads a log the way it sends it: checked whole in a first read,
// then cut into batches in a second read, held only until no later row
// could come before them. It sends the batches the whole log read into
// memory and split gives (broker.SplitSamples), in the same order, and
// for a log in time order holds at once a few batches a sensor however
// long the log: 0.1 s batches of three sensors, for 20 s and 200 s.
// Before, the whole log's batches were held until sent (600 and 6000).
func TestReplayStreamsInBoundedBatches(t *testing.T) {
	dir := t.TempDir()
	ctx := context.Background()
	for _, tc := range []struct {
		seconds int
		blocks  bool
	}{{20, false}, {200, false}, {20, true}} {
		path := filepath.Join(dir, fmt.Sprintf("log-%d-%v.csv", tc.seconds, tc.blocks))
		writeSensorLog(t, path, tc.seconds, tc.blocks)
		s, err := ingest.ReadSamples(path, ingest.WithTimeOrder(ingest.TimeOrderedPerGroup))
		if err != nil {
			t.Fatal(err)
		}
		want, err := broker.SplitSamples(s, "fenwick-lane", "", 0.1)
		if err != nil {
			t.Fatal(err)
		}
		o := &replayOptions{asset: "fenwick-lane", batch: 100 * time.Millisecond}
		src, first, last, stop, err := replayLog(ctx, o, nil, path, io.Discard, io.Discard)
		if err != nil {
			t.Fatal(err)
		}
		if src.Total != len(want) || first != want[0].Time[0] || last != s.Time[s.Len()-1] {
			t.Errorf("%s: %d batches from %v to %v, want %d from %v to %v", path, src.Total, first, last, len(want), want[0].Time[0], s.Time[s.Len()-1])
		}
		// The Batcher of a second source over the log, to count what it
		// holds.
		sc, err := o.scanReplay(ctx, path, []ingest.Option{ingest.WithTimeOrder(ingest.TimeOrderedPerGroup)}, nil, 0)
		if err != nil {
			t.Fatal(err)
		}
		src2, z, stop2, err := o.replaySource(ctx, path, []ingest.Option{ingest.WithTimeOrder(ingest.TimeOrderedPerGroup)}, sc)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; ; i++ {
			b, err := src.Next()
			if err != nil {
				t.Fatal(err)
			}
			b2, err := src2.Next()
			if err != nil {
				t.Fatal(err)
			}
			if b == nil || b2 == nil {
				if b != nil || b2 != nil || i != len(want) {
					t.Fatalf("%s: %d batches, want %d", path, i, len(want))
				}
				break
			}
			if i >= len(want) || b.Sensor != want[i].Sensor || fmt.Sprint(b.Time, b.Bx) != fmt.Sprint(want[i].Time, want[i].Bx) || fmt.Sprint(b2.Time) != fmt.Sprint(b.Time) {
				t.Fatalf("%s: batch %d differs from the whole log's split", path, i)
			}
		}
		stop()
		stop2()
		if !tc.blocks && z.MaxHeld() > 2*3+1 {
			t.Errorf("%s (time order, %d s): held %d batches at once, want at most 7 for any length", path, tc.seconds, z.MaxHeld())
		}
	}
}

// replay --resume with nothing left to send says so, instead of sensors []
// and times +Inf to -Inf.
func TestReplayResumeNothingLeft(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	dir, srv, _ := startSimBroker(t)
	log := filepath.Join(dir, "log.csv")
	writeSensorLog(t, log, 2, false)
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	setup, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := broker.Setup(setup, js, broker.StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	args := []string{"replay", log, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "0"}
	for i, want := range []string{"replayed 600 samples in ", "nothing left to send for asset fenwick-lane"} {
		var out, errOut bytes.Buffer
		if i == 1 {
			args = append(args, "--resume")
		}
		if code := run(setup, args, &out, &errOut); code != 0 || !strings.Contains(out.String(), want) || strings.Contains(out.String(), "Inf") {
			t.Fatalf("run %d: exit %d, stdout %q, stderr %q; want %q", i+1, code, out.String(), errOut.String(), want)
		}
	}
}

// logRun is a run of one sensor's rows in an invented log: n rows from
// the log's start plus offset s, every step s.
type logRun struct {
	sensor       string
	n            int
	offset, step float64
}

// writeRunsLog writes the runs one after the other.
func writeRunsLog(t *testing.T, path string, runs []logRun) {
	t.Helper()
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,group\n")
	for _, r := range runs {
		for k := range r.n {
			fmt.Fprintf(&sb, "%.5f,%d,-6543.2,45000.1,%s\n", 1796104800+r.offset+float64(k)*r.step, 12000+k%97, r.sensor)
		}
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// replayHeld replays the log at path as replay sends it (0.1 s batches),
// checks that it gives the batches the whole log read into memory and
// split gives (broker.SplitSamples), in the same order, and returns the
// most batches its Batcher held at once.
func replayHeld(t *testing.T, path string) int {
	t.Helper()
	ctx := context.Background()
	opts := []ingest.Option{ingest.WithTimeOrder(ingest.TimeOrderedPerGroup)}
	s, err := ingest.ReadSamples(path, opts...)
	if err != nil {
		t.Fatal(err)
	}
	want, err := broker.SplitSamples(s, "fenwick-lane", "", 0.1)
	if err != nil {
		t.Fatal(err)
	}
	o := &replayOptions{asset: "fenwick-lane", batch: 100 * time.Millisecond}
	sc, err := o.scanReplay(ctx, path, opts, nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	if sc.total != len(want) || sc.first != want[0].Time[0] {
		t.Errorf("%s: scan counts %d batches from %v, want %d from %v", path, sc.total, sc.first, len(want), want[0].Time[0])
	}
	src, z, stop, err := o.replaySource(ctx, path, opts, sc)
	if err != nil {
		t.Fatal(err)
	}
	defer stop()
	for i := 0; ; i++ {
		b, err := src.Next()
		if err != nil {
			t.Fatal(err)
		}
		if b == nil {
			if i != len(want) {
				t.Fatalf("%s: %d batches, want %d", path, i, len(want))
			}
			break
		}
		if i >= len(want) || b.Sensor != want[i].Sensor || fmt.Sprint(b.Time, b.Bx) != fmt.Sprint(want[i].Time, want[i].Bx) {
			t.Fatalf("%s: batch %d (sensor %s from %v) differs from the whole log's split", path, i, b.Sensor, b.Time[0])
		}
	}
	return z.MaxHeld()
}

// A log whose sensors' rows follow one another (each sensor's rows after
// the other's, as a logger's export per sensor) is read once per sensor
// and merged by time, holding a few batches a sensor as for a log in time
// order, and sends the same batches in the same order: three sensors'
// 100 Hz rows for 240 s, and a slower sensor logged first whose batches
// end at the same times as the next one's (ties go in the log's order).
// Before, the batches of the whole log were held (about 7200).
func TestReplaySensorMajorLogInBoundedBatches(t *testing.T) {
	dir := t.TempDir()
	for name, runs := range map[string][]logRun{
		"blocks": {{"s1", 24000, 0, 0.01}, {"s2", 24000, 0, 0.01}, {"s3", 24000, 0, 0.01}},
		// Steps of 1/32 and 1/16 s, exact in binary: the batches of s1
		// (from 0) and s2 (from 1/32) end together at 3/32 s.
		"slow-first": {{"s2", 15000, 0.03125, 0.0625}, {"s1", 30000, 0, 0.03125}, {"s3", 30000, 0, 0.03125}},
	} {
		path := filepath.Join(dir, name+".csv")
		writeRunsLog(t, path, runs)
		if held := replayHeld(t, path); held > 2*3+1 {
			t.Errorf("%s: held %d batches at once, want at most 7 for any length", name, held)
		}
	}
}

// A sensor whose rows come in several runs (a log exported an hour of
// each sensor at a time) is read from its first run to its last and
// merged all the same, when the rows held in the lag would be more than
// replayMergeRows (here lowered to 1000).
func TestReplayChunkedLogMerged(t *testing.T) {
	defer func(n int) { replayMergeRows = n }(replayMergeRows)
	replayMergeRows = 1000
	var runs []logRun
	for c := range 4 {
		for _, g := range []string{"s1", "s2", "s3"} {
			runs = append(runs, logRun{g, 3000, float64(c) * 30, 0.01})
		}
	}
	path := filepath.Join(t.TempDir(), "chunks.csv")
	writeRunsLog(t, path, runs)
	if held := replayHeld(t, path); held > 2*3+1 {
		t.Errorf("held %d batches at once, want at most 7", held)
	}
}

// A log read with --time-order any is put in time order on disk, in runs
// of replaySortRows rows (here 1000) in a folder of the system's temporary
// folder, and merged by time: it sends what the whole log put in time
// order in memory and split sends (sortByTime, broker.SplitSamples), in
// the same order, and the folder is gone once the replay stops. Before,
// the whole log was held in memory and no run was written.
func TestReplayAnyOrderSortedOnDisk(t *testing.T) {
	defer func(n int) { replaySortRows = n }(replaySortRows)
	replaySortRows = 1000
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	dir := t.TempDir()
	// Three sensors at 100 Hz for 30 s, in a shuffled order.
	var lines []string
	for k := range 3000 {
		for _, g := range []string{"s1", "s2", "s3"} {
			lines = append(lines, fmt.Sprintf("%.2f,%d,-6543.2,45000.1,%s\n", 1796104800+float64(k)/100, 12000+k%97, g))
		}
	}
	rng := rand.New(rand.NewPCG(7, 8))
	rng.Shuffle(len(lines), func(i, j int) { lines[i], lines[j] = lines[j], lines[i] })
	path := filepath.Join(dir, "shuffled.csv")
	if err := os.WriteFile(path, []byte("time,bx,by,bz,group\n"+strings.Join(lines, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := ingest.ReadSamples(path, ingest.WithTimeOrder(ingest.TimeAnyOrder))
	if err != nil {
		t.Fatal(err)
	}
	back, _ := sortByTime(s)
	want, err := broker.SplitSamples(s, "fenwick-lane", "", 0.1)
	if err != nil {
		t.Fatal(err)
	}
	o := &replayOptions{asset: "fenwick-lane", batch: 100 * time.Millisecond}
	fs := pflag.NewFlagSet("replay", pflag.ContinueOnError)
	o.read.add(fs)
	if err := fs.Parse([]string{"--time-order", "any"}); err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	src, first, last, stop, err := replayLog(context.Background(), o, fs, path, &out, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if src.Total != len(want) || first != want[0].Time[0] || last != s.Time[s.Len()-1] {
		t.Errorf("%d batches from %v to %v, want %d from %v to %v", src.Total, first, last, len(want), want[0].Time[0], s.Time[s.Len()-1])
	}
	if w := fmt.Sprintf("warning: %s: time goes backwards at %d rows (--time-order any)", path, back); !strings.Contains(out.String(), w) {
		t.Errorf("warnings %q, want %q", out.String(), w)
	}
	runs, _ := filepath.Glob(filepath.Join(tmp, "undercurrent-replay-*", "run-*"))
	if len(runs) != 9 {
		t.Errorf("%d sorted runs on disk while sending, want 9 of 1000 rows", len(runs))
	}
	for i := 0; ; i++ {
		b, err := src.Next()
		if err != nil {
			t.Fatal(err)
		}
		if b == nil {
			if i != len(want) {
				t.Fatalf("%d batches, want %d", i, len(want))
			}
			break
		}
		if i >= len(want) || b.Sensor != want[i].Sensor || fmt.Sprint(b.Time, b.Bx) != fmt.Sprint(want[i].Time, want[i].Bx) {
			t.Fatalf("batch %d differs from the whole log's sorted split", i)
		}
	}
	stop()
	if left, _ := os.ReadDir(tmp); len(left) != 0 {
		t.Errorf("%d entries left in the temporary folder after the replay stopped", len(left))
	}
}
