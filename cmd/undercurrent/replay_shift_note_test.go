package main

import (
	"bytes"
	"context"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// replay --now prints the shift it applied at the start, and its
// interrupt advice gives that shift with --resume ("--shift N --resume in
// place of --now"), which the second run takes. Before, nothing printed
// the shift, and the advice said "--resume", which --now refuses (rv24d
// t5: the shift had to be worked out from the history).
func TestReplayNowPrintsShiftAndResumeAdvice(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	log, srv, stored := replayStreamSetup(t)
	ctx, cancel := context.WithCancelCause(context.Background())
	defer cancel(nil)
	done := make(chan string, 1)
	go func() {
		var out, errOut bytes.Buffer
		run(ctx, []string{"replay", log, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "1", "--now"}, &out, &errOut)
		done <- errOut.String()
	}()
	pollUntil(t, 30*time.Second, "the first batches to be stored", func() bool { return stored() >= 2 })
	cancel(&signalCause{sig: syscall.SIGINT})
	got := <-done
	m := regexp.MustCompile(`(?m)^replay: --now: times shifted by ([0-9]+) s`).FindStringSubmatch(got)
	if m == nil {
		t.Fatalf("stderr %q: want the shift applied at the start", got)
	}
	advice := "run the same replay again with --shift " + m[1] + " --resume in place of --now"
	if !strings.Contains(got, "undercurrent replay: interrupted: ") || !strings.Contains(got, advice) {
		t.Fatalf("stderr %q: want the interrupt line advising %q", got, advice)
	}
	// The advice works: the rest is sent with the shift given.
	var out, errOut2 bytes.Buffer
	if code := run(context.Background(), []string{"replay", log, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "0", "--shift", m[1], "--resume"}, &out, &errOut2); code != 0 {
		t.Fatalf("replay --shift %s --resume: exit %d, %s", m[1], code, errOut2.String())
	}
	if !strings.Contains(out.String(), "skipped ") {
		t.Errorf("replay --shift --resume printed %q, want the batches skipped", out.String())
	}
}

// A replay against a broker whose store is full (JetStream "insufficient
// resources", err_code 10023) says the store is full, what was stored and
// how to send the rest with --resume. Before, the whole output was the
// bare broker error. The store is a 1 MiB file store filled with
// messages on a subject no replay reads.
func TestReplayStoreFullSaysSo(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	dir := t.TempDir()
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: dir + "/store", MQTTPort: -1, MaxStore: 1 << 20})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	log := simulatedLog(t, dir, "line.csv")
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := broker.Setup(ctx, js, broker.StreamSettings{LeaseTTL: time.Second}); err != nil {
		t.Fatal(err)
	}
	filler := make([]byte, 32<<10)
	for i := 0; ; i++ {
		if i > 100 {
			t.Fatal("the 1 MiB store took 100 messages of 32 KiB")
		}
		if _, err := js.Publish(ctx, "uc.est.filler", filler); err != nil {
			if !strings.Contains(err.Error(), "insufficient resources") {
				t.Fatal(err)
			}
			break
		}
	}
	var out, errOut bytes.Buffer
	code := run(context.Background(), []string{"replay", log, "--asset", "fenwick-lane", "--broker", srv.ClientURL(), "--speed", "0"}, &out, &errOut)
	got := errOut.String()
	if code == 0 || !strings.Contains(got, "the broker's store is full") || !strings.Contains(got, "batch") ||
		!regexp.MustCompile(`(no batch was stored|[0-9]+ of [0-9]+ batches were stored)`).MatchString(got) ||
		!strings.Contains(got, "run the same replay again with --resume") {
		t.Fatalf("exit %d, stderr %q; want the store full, what was stored and --resume", code, got)
	}
}
