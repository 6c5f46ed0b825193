package live

import (
	"context"
	"log/slog"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// Data that the broker removes (data_max_bytes, data_retention: the
// oldest messages give way) while no worker reads the asset was lost
// without a word: the next worker resumed at its checkpoint's sequence,
// the consumer silently started at the first message still stored, and
// the history simply started later. Now the worker sees that the
// stream's first sequence is past its checkpoint and that the asset's
// data resumes windows after its last published one: it logs a WARN,
// counts the sequences in uc_data_discarded_messages_total, raises a
// data-lost alarm in the first missing window and marks the first
// estimate after the gap. The removal is made as the bound makes it, by
// purging the stream's oldest messages.
func TestDataRemovedBeforeReadIsReported(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, shortResumeSite)
	stopA := startWorker(t, h, site, "wa", nil)
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "windows 0 and 1", func() bool { return len(h.estimates()) >= 2 })
	stopA()
	ds, err := h.js.Stream(context.Background(), broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	h.publish(1, 1) // windows 2 and 3: removed before any worker reads them
	info, err := ds.Info(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	keep := info.State.LastSeq + 1
	h.publish(2, 1) // windows 4 and 5: kept
	if err := ds.Purge(context.Background(), jetstream.WithPurgeSequence(keep)); err != nil {
		t.Fatal(err)
	}
	logs := &syncBuffer{}
	svc, stopB := h.runConfig(t, Config{Site: site, Worker: "wb", NewEstimator: newMean, Logger: slog.New(slog.NewTextHandler(logs, nil))}, "wb")
	waitFor(t, 30*time.Second, "windows 4 and 5", func() bool { return len(h.estimates()) >= 4 })
	if err := stopB(); err != nil {
		t.Fatal(err)
	}
	// Windows 2 and 3: 10 batches of 3 sensors.
	if n := counterValue(t, svc, "uc_data_discarded_messages_total"); n != 30 {
		t.Errorf("uc_data_discarded_messages_total %v, want the 30 messages removed", n)
	}

	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	got := map[int64]Estimate{}
	for _, e := range h.estimates() {
		got[e.Window-k0] = e
	}
	if len(got) != 4 {
		t.Errorf("estimates of windows %v, want 0, 1, 4 and 5", keys(got))
	}
	if e := got[4]; e.DataLost == "" {
		t.Error("the first estimate after the gap (window 4) does not say that data was lost before it")
	} else {
		t.Logf("window 4 data_lost: %s", e.DataLost)
	}
	if e := got[5]; e.DataLost != "" {
		t.Errorf("window 5 is marked too: %s", e.DataLost)
	}
	lost := h.allAlarms(broker.AlarmSubject("fenwick-lane", AlarmDataLost), func(Alarm) bool { return true })
	if len(lost) != 1 || lost[0].Window != k0+2 {
		t.Errorf("data-lost alarms %+v, want one in window 2 (the first missing)", lost)
	}
	if !strings.Contains(logs.String(), "level=WARN msg=\"data removed by the broker before it was processed") {
		t.Errorf("no WARN logged; log:\n%s", logs.String())
	}
}

func keys[V any](m map[int64]V) []int64 {
	var out []int64
	for k := range m {
		out = append(out, k)
	}
	return out
}

// counterValue sums the counter name over its labels in svc's metrics.
func counterValue(t *testing.T, svc *Service, name string) float64 {
	t.Helper()
	fams, err := svc.met.reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	var n float64
	for _, f := range fams {
		if f.GetName() == name {
			for _, m := range f.GetMetric() {
				n += m.GetCounter().GetValue()
			}
		}
	}
	return n
}

// Sequences removed before the worker read them that were all another
// asset's (the asset's own data goes on from its last published window)
// are no loss for the asset: no alarm, no count, no mark.
func TestOtherAssetsDataRemovedIsNoLoss(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	site := testSite(t, shortResumeSite)
	stopA := startWorker(t, h, site, "wa", nil)
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "windows 0 and 1", func() bool { return len(h.estimates()) >= 2 })
	stopA()
	h.publishAsset("kestrel-moor", 0, 1) // another asset's data, removed below
	ds, err := h.js.Stream(context.Background(), broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	info, err := ds.Info(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	if err := ds.Purge(context.Background(), jetstream.WithPurgeSequence(info.State.LastSeq+1)); err != nil {
		t.Fatal(err)
	}
	h.publish(1, 1) // windows 2 and 3
	svc, stopB := h.runConfig(t, Config{Site: site, Worker: "wb", NewEstimator: newMean}, "wb")
	waitFor(t, 30*time.Second, "windows 2 and 3", func() bool { return len(h.estimates()) >= 4 })
	if err := stopB(); err != nil {
		t.Fatal(err)
	}
	checkExactlyOnce(t, h.estimates(), 4)
	for _, e := range h.estimates() {
		if e.DataLost != "" {
			t.Errorf("window %d marked: %s", e.Window, e.DataLost)
		}
	}
	if lost := h.allAlarms(broker.AlarmSubject("fenwick-lane", AlarmDataLost), func(Alarm) bool { return true }); len(lost) != 0 {
		t.Errorf("data-lost alarms %+v, want none", lost)
	}
	if n := counterValue(t, svc, "uc_data_discarded_messages_total"); n != 0 {
		t.Errorf("uc_data_discarded_messages_total %v, want 0", n)
	}
}
