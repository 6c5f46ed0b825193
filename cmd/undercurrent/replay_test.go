package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A --batch whose messages would exceed the site's max_message_bytes is
// refused before anything is sent (the pipeline would dead-letter every
// message as oversized and make no estimate), naming the size, the limit
// and the remedy; a batch within the limit goes on to the broker.
func TestReplayRefusesOversizedBatches(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "fast.csv")
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,group\n")
	for i := range 2000 { // 2 s at 1 kHz
		fmt.Fprintf(&sb, "%.3f,%.6f,%.6f,%.6f,s1\n", 1796104800+float64(i)/1000, 12345.678901+float64(i), -6543.21, 45000.123456)
	}
	if err := os.WriteFile(log, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "replay", log, "--asset", "fenwick-lane", "--batch", "2s", "--max-message-bytes", "20000", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	if code != 1 || !strings.Contains(errOut, "more than --max-message-bytes 20000") || !strings.Contains(errOut, "give a shorter --batch") || !strings.Contains(errOut, "2000 samples") {
		t.Errorf("exit %d, %q: want a refusal of the 2 s batch", code, errOut)
	}
	code, _, errOut = cli(t, "replay", log, "--asset", "fenwick-lane", "--batch", "100ms", "--max-message-bytes", "20000", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	if code != 1 || strings.Contains(errOut, "max-message-bytes") {
		t.Errorf("exit %d, %q: want the 100 ms batches to pass the size check (and fail at the absent broker)", code, errOut)
	}
}

// A log with a reading far beyond any field (1e200 nT, a corrupt value)
// was replayed without a word, and serve then stopped on it. replay now
// warns, naming the sensor, the time and the 0.1 T bound that serve
// refuses batches beyond (broker.MaxFieldNT), and still sends the log; a
// log of Earth's-field readings (about 50,000 nT, IGRF) gets no warning.
func TestReplayWarnsOfFieldAboveBound(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, huge bool) string {
		var sb strings.Builder
		sb.WriteString("time,bx,by,bz,group\n")
		for i := range 200 { // 2 s at 100 Hz, two sensors
			for _, g := range []string{"s1", "s2"} {
				bx := 12345.678901 + float64(i)
				if huge && g == "s2" && (i == 150 || i == 151) {
					bx = -3.1e200
				}
				fmt.Fprintf(&sb, "%.2f,%g,%.6f,%.6f,%s\n", 1796104800+float64(i)/100, bx, -6543.21, 45000.123456, g)
			}
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(sb.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	_, out, errOut := cli(t, "replay", write("huge.csv", true), "--asset", "fenwick-lane", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	for _, want := range []string{"2 readings with |B| above 0.1 T", "sensor s2 at time 1796104801.5", "|B| = 3.1e+200 nT", "uc.dlq.malformed"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s\n%s", want, out, errOut)
		}
	}
	_, out, _ = cli(t, "replay", write("clean.csv", false), "--asset", "fenwick-lane", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	if strings.Contains(out, "0.1 T") {
		t.Errorf("clean log warned: %s", out)
	}
}

// --resume sends what comes after the broker's last stored sample of each
// sensor, in the log's own times plus --shift: --now, which shifts by the
// clock of each run, would not line the rest up with the first run, so
// the two together are refused, naming the remedy.
func TestReplayResumeRefusedWithNow(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "short.csv")
	if err := os.WriteFile(log, []byte("time,bx,by,bz,group\n0,1,2,3,s1\n0.001,1,2,3,s1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "replay", log, "--asset", "fenwick-lane", "--now", "--resume", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	if code != 2 || !strings.Contains(errOut, "--resume without --now") || !strings.Contains(errOut, "--shift") {
		t.Errorf("exit %d, %q: want a usage refusal of --now with --resume", code, errOut)
	}
}
