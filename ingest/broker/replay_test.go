package broker

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest"
)

func groupedLog(n int) *ingest.Samples {
	s := &ingest.Samples{Source: "harrow-fen-fixed.csv"}
	for i := 0; i < n; i++ {
		for _, g := range []string{"s1", "s2"} {
			s.Time = append(s.Time, 1764650000+float64(i)/100)
			s.Bx = append(s.Bx, float64(i))
			s.By = append(s.By, 1)
			s.Bz = append(s.Bz, 48000)
			s.Group = append(s.Group, g)
		}
	}
	return s
}

func TestSplitSamples(t *testing.T) {
	s := groupedLog(100) // 1 s at 100 Hz, two sensors
	bs, err := SplitSamples(s, "fenwick-lane", "", 0.25)
	if err != nil {
		t.Fatal(err)
	}
	if len(bs) != 8 {
		t.Fatalf("%d batches, want 8 (4 per sensor)", len(bs))
	}
	var total int
	for i, b := range bs {
		total += b.Len()
		if b.Len() != 25 {
			t.Errorf("batch %d has %d samples, want 25", i, b.Len())
		}
		if i > 0 && b.Time[b.Len()-1] < bs[i-1].Time[bs[i-1].Len()-1] {
			t.Errorf("batch %d out of time order", i)
		}
		if err := b.Validate("batch"); err != nil {
			t.Error(err)
		}
	}
	if total != 200 {
		t.Errorf("%d samples in batches, want 200", total)
	}
	one, err := SplitSamples(s, "fenwick-lane", "s2", 10)
	if err != nil || len(one) != 1 || one[0].Sensor != "s2" || one[0].Len() != 100 {
		t.Fatalf("selecting s2: %v %+v", err, one)
	}
	// A missing value skips its row.
	s.Bz[3] = math.NaN()
	if bs, _ := SplitSamples(s, "fenwick-lane", "s2", 10); bs[0].Len() != 99 {
		t.Errorf("row with NaN not skipped: %d samples", bs[0].Len())
	}
}

func TestSplitSamplesErrors(t *testing.T) {
	s := groupedLog(5)
	s.Time[6] = s.Time[4] // sensor s1, row 7 repeats row 5's time
	// Sensor s1 (rows 1, 3, 5, 7) reads at 1776760809.7, .8, 1776760810
	// and then 1776760809.9 s, a tenth of a second back: the last two
	// differ in the tenth significant digit, which %v's shortest 'e' form
	// printed as 1.7767608099e+09 and 1.77676081e+09.
	back := groupedLog(4)
	copy(back.Time, []float64{1776760809.7, 1776760809.7, 1776760809.8, 1776760809.8, 1776760810, 1776760810, 1776760809.9, 1776760810.1})
	cases := []struct {
		name          string
		s             *ingest.Samples
		asset, sensor string
		want          string
	}{
		{"repeated time names both rows", s, "fenwick-lane", "", `harrow-fen-fixed.csv: row 7 of the log: column time: sensor "s1" reads twice at 1764650000.02 (2025-12-02T04:33:20.02Z) (row 5 of the log has the same time)`},
		{"backwards time in full", back, "fenwick-lane", "", `harrow-fen-fixed.csv: row 7 of the log: column time: time goes backwards for sensor "s1": 1776760809.9 (2026-04-21T08:40:09.9Z) after 1776760810 (2026-04-21T08:40:10Z) (row 5 of the log); if the rows may come in any order, allow it (on the command line --time-order any)`},
		{"no group and no sensor", &ingest.Samples{Source: "x.csv", Time: []float64{1}, Bx: []float64{1}, By: []float64{1}, Bz: []float64{1}}, "a", "", "x.csv: the log has no group column, so name the sensor"},
		{"bad asset", groupedLog(2), "a b", "", `name "a b"`},
		{"bad group", func() *ingest.Samples { g := groupedLog(2); g.Group[0] = "s.1"; return g }(), "a", "", `harrow-fen-fixed.csv: row 1 of the log: column group: name "s.1"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := SplitSamples(tc.s, tc.asset, tc.sensor, 1)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
			if tc.name != "bad asset" && strings.HasPrefix(err.Error(), "broker:") {
				t.Errorf("error about the log starts with the package name: %v", err)
			}
		})
	}
	// With sorted times the backwards row takes its place; a repeated time
	// stays an error.
	bs, err := SplitSamples(back, "fenwick-lane", "s1", 10, WithSortedTimes(true))
	if err != nil {
		t.Fatal(err)
	}
	if len(bs) != 1 {
		t.Fatalf("%d batches, want 1", len(bs))
	}
	got := bs[0].Time
	for i := 1; i < len(got); i++ {
		if !(got[i] > got[i-1]) {
			t.Fatalf("sorted times %v do not increase", got)
		}
	}
	if len(got) != 4 || bs[0].Bx[2] != 3 {
		t.Errorf("sorted: times %v, bx %v: want row 7 (bx 3) third", got, bs[0].Bx)
	}
	if _, err := SplitSamples(s, "fenwick-lane", "", 1, WithSortedTimes(true)); err == nil || !strings.Contains(err.Error(), "reads twice") {
		t.Errorf("sorted, repeated time: %v", err)
	}
}

func TestReplay(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	ctx, js, bs := replaySetup(t)
	var calls int
	st, err := Replay(ctx, js, bs, &ReplaySettings{Speed: 100, Encoding: ContentArrow, Shift: 10, Progress: func(d, n int) { calls++ }})
	if err != nil {
		t.Fatal(err)
	}
	if st.Batches != 10 || st.Samples != 100 || st.Duplicates != 0 || len(st.Sensors) != 2 || calls != 10 {
		t.Fatalf("stats %+v, progress calls %d", st, calls)
	}
	if st.From != 1764650010 {
		t.Errorf("first time sent %v, want the shifted 1764650010", st.From)
	}
	// Replaying again stores nothing twice.
	st2, err := Replay(ctx, js, bs, &ReplaySettings{Shift: 10})
	if err != nil {
		t.Fatal(err)
	}
	if st2.Duplicates != 10 {
		t.Errorf("second replay: %d duplicates, want 10", st2.Duplicates)
	}
	info, _ := js.Stream(ctx, StreamData)
	si, _ := info.Info(ctx)
	if si.State.Msgs != 10 {
		t.Errorf("stream holds %d messages, want 10", si.State.Msgs)
	}
}

// TestReplayHoldsBack: batches shifted to run ahead of the clock by more
// than MaxAhead wait until they are within it (the pipeline would refuse
// them); those within it go at once. The counts, not the waiting times,
// are checked.
func TestReplayHoldsBack(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	ctx, js, bs := replaySetup(t)
	now := float64(time.Now().UnixNano()) / 1e9
	// Shifted to start 0.2 s ahead of now, every batch is at least 0.2 s
	// ahead of the clock when it is due.
	shift := now + 0.2 - bs[0].Time[0]
	st, err := Replay(ctx, js, bs, &ReplaySettings{Shift: shift, MaxAhead: 50 * time.Millisecond})
	if err != nil {
		t.Fatal(err)
	}
	if st.Batches != 10 || st.HeldBack == 0 {
		t.Errorf("stats %+v: want all 10 batches sent, some held back", st)
	}
	// Far inside the limit nothing waits.
	st, err = Replay(ctx, js, bs, &ReplaySettings{Shift: shift - 3600, MaxAhead: time.Minute})
	if err != nil {
		t.Fatal(err)
	}
	if st.HeldBack != 0 {
		t.Errorf("an hour in the past: %d batches held back", st.HeldBack)
	}
}

// replaySetup starts a broker with the pipeline's streams (in memory) and
// splits groupedLog(50) into 0.1 s batches to replay into it.
func replaySetup(t *testing.T) (context.Context, jetstream.JetStream, []*Batch) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	t.Cleanup(cancel)
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	bs, err := SplitSamples(groupedLog(50), "fenwick-lane", "", 0.1)
	if err != nil {
		t.Fatal(err)
	}
	return ctx, js, bs
}

// A replay whose broker stops answering says so when it gives up: how
// many batches were stored, up to which time, and that the same replay can
// be run again. It had ended, after 33 s without a word, with only
// "publish uc.data...: context deadline exceeded". It also says, once, that
// it is trying again. The batches are invented fixtures (testBatch); what
// is checked is the project's own messages.
func TestReplayBrokerGoneSaysWhatWasStored(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	attempt, retryFor := publishAttempt, publishRetryFor
	publishAttempt, publishRetryFor = 300*time.Millisecond, time.Second
	t.Cleanup(func() { publishAttempt, publishRetryFor = attempt, retryFor })
	s, ctx, js, batches := replayOfThree(t)
	var notes []string
	_, err := Replay(ctx, js, batches, &ReplaySettings{
		Progress: func(done, total int) {
			if done == 1 {
				s.Shutdown()
			}
		},
		Notify: func(msg string) { notes = append(notes, msg) },
	})
	if err == nil {
		t.Fatal("the replay succeeded with its broker shut down")
	}
	// The advice holds also after the broker's duplicate window (two
	// minutes): it names --resume and says what happens without it.
	for _, want := range []string{"stopped answering", "1 of 3 batches were stored, up to time 1764650000.009", "run the same replay again with --resume", "only within the broker's two-minute duplicate window"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not say %q", err, want)
		}
	}
	if len(notes) != 1 || !strings.Contains(notes[0], "batch 2 of 3") {
		t.Errorf("notes %q, want one saying batch 2 of 3 is tried again", notes)
	}
}

// A replay cut short and run again with Resume sends only each sensor's
// batches after the last sample the broker holds for it, so that the
// rest goes without repeats also once the broker's two-minute duplicate
// window has passed (the broker would then store the repeats again). The
// batches are the fixture log's (groupedLog); the truth is which of them
// the first run sent.
func TestReplayResumeSendsOnlyTheRest(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	ctx, js, bs := replaySetup(t)
	// The first run stops after four batches (of whichever sensors).
	if _, err := Replay(ctx, js, bs[:4], &ReplaySettings{Shift: 10}); err != nil {
		t.Fatal(err)
	}
	held := map[string]float64{}
	for _, b := range bs[:4] {
		held[b.Sensor] = b.Time[b.Len()-1]
	}
	want := 0
	for _, b := range bs {
		if h, ok := held[b.Sensor]; !ok || b.Time[b.Len()-1] > h {
			want++
		}
	}
	st, err := Replay(ctx, js, bs, &ReplaySettings{Shift: 10, Resume: true})
	if err != nil {
		t.Fatal(err)
	}
	if st.Batches != want || st.Resumed != len(bs)-want || st.Duplicates != 0 {
		t.Errorf("resumed replay: %d sent, %d skipped, %d duplicates; want %d sent, %d skipped, none duplicate", st.Batches, st.Resumed, st.Duplicates, want, len(bs)-want)
	}
	info, _ := js.Stream(ctx, StreamData)
	si, _ := info.Info(ctx)
	if si.State.Msgs != uint64(len(bs)) {
		t.Errorf("stream holds %d messages, want %d (each batch once)", si.State.Msgs, len(bs))
	}
	// Run again with everything stored: nothing is sent.
	if st, err := Replay(ctx, js, bs, &ReplaySettings{Shift: 10, Resume: true}); err != nil || st.Batches != 0 || st.Resumed != len(bs) {
		t.Errorf("third run with everything stored: %+v, %v; want nothing sent", st, err)
	}
}

// A replay interrupted (its context cancelled, as Ctrl-C does) says, like
// one whose broker stopped answering, how many batches were stored and
// up to which time, and stays recognisable as the interruption it is
// (errors.Is context.Canceled). Before, it returned only "context
// canceled", and the command printed "interrupted" without a word of what
// had been stored. The batches are invented fixtures (testBatch).
func TestReplayInterruptedSaysWhatWasStored(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	_, ctx, js, batches := replayOfThree(t)
	run, stop := context.WithCancel(ctx)
	defer stop()
	st, err := Replay(run, js, batches, &ReplaySettings{Progress: func(done, total int) {
		if done == 1 {
			stop()
		}
	}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want the context's", err)
	}
	if want := "1 of 3 batches were stored, up to time 1764650000.009"; !strings.Contains(err.Error(), want) {
		t.Errorf("error %q does not say %q", err, want)
	}
	if st == nil || st.Batches != 1 {
		t.Errorf("stats %+v, want 1 batch stored", st)
	}
}

// replayOfThree starts a broker with the streams set up in memory and
// gives it, a context that ends with the test (30 s at most), its JetStream
// and three invented batches of 10 samples, a second apart (testBatch).
func replayOfThree(t *testing.T) (*Server, context.Context, jetstream.JetStream, []*Batch) {
	t.Helper()
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	t.Cleanup(cancel)
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	var batches []*Batch
	for i := range 3 {
		b := testBatch(10)
		for j := range b.Time {
			b.Time[j] += float64(i)
		}
		batches = append(batches, b)
	}
	return s, ctx, js, batches
}
