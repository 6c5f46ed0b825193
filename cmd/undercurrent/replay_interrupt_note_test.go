package main

import (
	"bytes"
	"context"
	"regexp"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// TestReplayInterruptSaysWhatWasStored: a replay stopped by Ctrl-C prints,
// on its "interrupted" line, how many batches the broker acknowledged as
// stored and up to which time, and that replay --resume sends the rest,
// as it does when the broker stops answering; the count is the stream's
// (one more may be stored whose acknowledgement the interrupt cut off).
// Before, it printed only "interrupted".
func TestReplayInterruptSaysWhatWasStored(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	log, srv, stored := replayStreamSetup(t)
	ctx, cancel := context.WithCancelCause(context.Background())
	defer cancel(nil)
	type result struct {
		code   int
		errOut string
	}
	done := make(chan result, 1)
	go func() {
		var out, errOut bytes.Buffer
		// Real time: 0.1 s batches, one after another.
		code := run(ctx, []string{"replay", log, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "1"}, &out, &errOut)
		done <- result{code, errOut.String()}
	}()
	pollUntil(t, 30*time.Second, "the first batches to be stored", func() bool { return stored() >= 2 })
	cancel(&signalCause{sig: syscall.SIGINT})
	r := <-done
	m := regexp.MustCompile(`^undercurrent replay: interrupted: ([0-9]+) of ([0-9]+) batches were stored, up to time [0-9.]+ \([0-9T:.-]+Z\); to send the rest, run the same replay again with --resume`).FindStringSubmatch(r.errOut)
	if r.code != 130 || m == nil {
		t.Fatalf("exit %d, stderr %q; want 130 and what was stored, with --resume", r.code, r.errOut)
	}
	n, _ := strconv.ParseUint(m[1], 10, 64)
	total, _ := strconv.ParseUint(m[2], 10, 64)
	if got := stored(); n < 2 || n >= total || got < n || got > n+1 {
		t.Errorf("said %d of %d batches stored; the stream holds %d", n, total, got)
	}
	if strings.Count(r.errOut, "\n") != 1 {
		t.Errorf("stderr %q, want the one line", r.errOut)
	}
}

// replayStreamSetup starts a broker with the data stream set up in
// memory and a simulated log to replay into it; stored counts the
// messages the stream holds.
func replayStreamSetup(t *testing.T) (log string, srv *broker.Server, stored func() uint64) {
	t.Helper()
	dir, srv, _ := startSimBroker(t)
	log = simulatedLog(t, dir, "line.csv")
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, _ := jetstream.New(nc)
	setup, cancelSetup := context.WithTimeout(context.Background(), 30*time.Second)
	t.Cleanup(cancelSetup)
	if _, err := broker.Setup(setup, js, broker.StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	stored = func() uint64 {
		ds, err := js.Stream(setup, broker.StreamData)
		if err != nil {
			return 0
		}
		info, err := ds.Info(setup)
		if err != nil {
			return 0
		}
		return info.State.Msgs
	}
	return log, srv, stored
}
