package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
	"undercurrent/report/live"
)

// shortReplayLog writes a two-sensor log of 20 readings at 100 Hz from
// 2026-12-01 (invented values), for replay's flag checks.
func shortReplayLog(t *testing.T, dir string) string {
	t.Helper()
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,group\n")
	for i := range 20 {
		for _, g := range []string{"s0", "s1"} {
			fmt.Fprintf(&sb, "%.2f,%.3f,-6543.21,45000.5,%s\n", 1796104800+float64(i)/100, 12345.5+float64(i), g)
		}
	}
	p := filepath.Join(dir, "short.csv")
	if err := os.WriteFile(p, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// replay took --speed nan (replaying at full speed) and inf, --shift nan
// (waiting forever at 0 % CPU), and negative --max-ahead, --wait and
// --max-message-bytes without a word (review rv18b). They are usage
// errors (exit 2) before the log is read; 0 keeps its documented meaning
// for each (no limit; one look for the stream; as fast as acknowledged)
// and goes on, here to the absent broker (exit 1). A --shift that takes
// the log past 9999-12-31 (1e300) is refused once the log is read, as one
// before 2000 is.
func TestReplayFlagValuesRefused(t *testing.T) {
	log := shortReplayLog(t, t.TempDir())
	base := []string{"replay", log, "--asset", "fenwick-lane", "--broker", "nats://127.0.0.1:1", "--wait", "1ms"}
	for _, tc := range []struct {
		flags []string
		want  string
	}{
		{[]string{"--speed", "nan"}, "--speed NaN: want a finite rate"},
		{[]string{"--speed", "inf"}, "--speed +Inf: want a finite rate"},
		{[]string{"--speed", "-1"}, "--speed -1: want a finite rate, 0 or more"},
		{[]string{"--shift", "nan"}, "--shift NaN: want a finite number of seconds"},
		{[]string{"--shift", "-inf"}, "--shift -Inf: want a finite number of seconds"},
		{[]string{"--max-ahead", "-1h"}, "--max-ahead -1h0m0s: want 0 (no limit) or a positive duration"},
		{[]string{"--wait", "-5s"}, "--wait -5s: want 0 (look once) or a positive duration"},
		{[]string{"--max-message-bytes", "-1"}, "--max-message-bytes -1: want 0 (no limit) or a positive size"},
	} {
		code, _, errOut := cli(t, append(append([]string(nil), base...), tc.flags...)...)
		if code != 2 || !strings.Contains(errOut, tc.want) {
			t.Errorf("replay %s: exit %d, want 2 and %q:\n%s", strings.Join(tc.flags, " "), code, tc.want, errOut)
		}
	}
	for _, flags := range [][]string{{"--speed", "0"}, {"--max-ahead", "0"}, {"--wait", "0"}, {"--max-message-bytes", "0"}, {"--shift", "-3600"}} {
		code, _, errOut := cli(t, append(append([]string(nil), base...), flags...)...)
		if code != 1 || strings.Contains(errOut, "want") || !strings.Contains(errOut, "127.0.0.1:1") {
			t.Errorf("replay %s: exit %d, want 1 at the absent broker:\n%s", strings.Join(flags, " "), code, errOut)
		}
	}
	code, _, errOut := cli(t, append(append([]string(nil), base...), "--shift", "1e300")...)
	if code != 1 || !strings.Contains(errOut, "after 9999-12-31") {
		t.Errorf("replay --shift 1e300: exit %d, want 1 and a refusal:\n%s", code, errOut)
	}
}

// replay --asset with a name the site file does not list returned exit 0
// ("replayed ... for asset nosuch") while serve sent every batch to its
// dead-letter stream (review rv18b). With serve running, replay reads its
// workers' heartbeats (live.ServedAssets) and refuses, exit 1, naming the
// assets the site file lists; nothing is stored for the name. An asset
// the site file lists passes the check.
func TestReplayRefusesAssetServeDoesNotList(t *testing.T) {
	if testing.Short() {
		t.Skip("runs serve and replay")
	}
	dir, srv, site := startSimBroker(t)
	log := shortReplayLog(t, dir)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	served := make(chan int, 1)
	var serveErr syncBuffer
	go func() {
		served <- run(ctx, []string{"serve", "--config", site, "--broker", srv.ClientURL(), "--worker", "w1"}, &bytes.Buffer{}, &serveErr)
	}()
	nc, err := broker.Connect(srv.ClientURL(), "test", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	pollUntil(t, 30*time.Second, "serve's heartbeat", func() bool {
		c, stop := context.WithTimeout(context.Background(), 2*time.Second)
		defer stop()
		_, known, _ := live.ServedAssets(c, js)
		return known
	})
	code, _, errOut := cli(t, "replay", log, "--asset", "nosuch", "--speed", "0", "--broker", srv.ClientURL())
	if code != 1 || !strings.Contains(errOut, "--asset nosuch: the site file of the running serve does not list it (its assets: fenwick-lane)") {
		t.Errorf("replay --asset nosuch: exit %d, want 1 and a refusal naming the site's assets:\n%s", code, errOut)
	}
	c, stop := context.WithTimeout(context.Background(), 10*time.Second)
	defer stop()
	ds, err := js.Stream(c, broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ds.GetLastMsgForSubject(c, broker.DataFilter("nosuch")); err == nil {
		t.Error("a batch for asset nosuch was stored")
	}
	if code, _, errOut := cli(t, "replay", log, "--asset", "fenwick-lane", "--speed", "0", "--broker", srv.ClientURL()); code != 0 {
		t.Errorf("replay --asset fenwick-lane: exit %d:\n%s", code, errOut)
	}
	// replay marks what it sends, so that serve never takes its pace for
	// a live sensor's (see broker.HeaderReplay).
	if m, err := ds.GetLastMsgForSubject(c, broker.DataFilter("fenwick-lane")); err != nil || m.Header.Get(broker.HeaderReplay) != "1" {
		t.Errorf("replay's last batch stored: err %v; want it marked %s: 1", err, broker.HeaderReplay)
	}
	cancel()
	if c := <-served; c != 0 {
		t.Fatalf("serve exited %d: %s", c, serveErr.String())
	}
}
