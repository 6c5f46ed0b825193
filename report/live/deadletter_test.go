package live

import (
	"context"
	"encoding/json"
	"strings"
	"testing"
	"time"

	dto "github.com/prometheus/client_model/go"

	"undercurrent/ingest/broker"
)

// A message refused to the dead-letter stream is refused once, not again
// by every later holder of the asset: at the tail of the data, with no
// window open, the checkpoint moves past it at once; before a window
// still open at a restart, it is read again (to rebuild the window) but
// counted as skipped. Idle closes are switched off (idle = 1h), so that
// windows close only when complete and which are open is known.
func TestRefusedOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, `idle = "1h"`, 1))
	if site.Service.Idle.Duration != time.Hour {
		t.Fatalf("idle %v, want 1h", site.Service.Idle.Duration)
	}
	ctx := context.Background()
	count := func(c interface{ Write(*dto.Metric) error }) float64 {
		var m dto.Metric
		if err := c.Write(&m); err != nil {
			t.Fatal(err)
		}
		return m.GetCounter().GetValue()
	}
	refused := func(r *running) float64 {
		return count(r.svc.met.deadLetters.WithLabelValues(broker.ReasonUnknownSensor))
	}
	outcome := func(r *running, o string) float64 {
		return count(r.svc.met.messages.WithLabelValues("fenwick-lane", o))
	}
	bad := func() uint64 { // a sensor the site file does not list
		ack, err := h.js.Publish(ctx, "uc.data.fenwick-lane.s9", []byte(`{"time":[1],"bx":[1],"by":[1],"bz":[1]}`))
		if err != nil {
			t.Fatal(err)
		}
		return ack.Sequence
	}
	state, err := h.js.KeyValue(ctx, broker.BucketState)
	if err != nil {
		t.Fatal(err)
	}
	ck := func() checkpoint {
		var c checkpoint
		if e, err := state.Get(ctx, checkpointKey("fenwick-lane")); err == nil {
			json.Unmarshal(e.Value(), &c)
		}
		return c
	}

	// At the tail, nothing open: the checkpoint moves past the refused
	// message without waiting for a window or a drain.
	r1 := h.start(site, "w1")
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })
	s1 := bad()
	waitFor(t, 10*time.Second, "the checkpoint to move past the refused message", func() bool {
		c := ck()
		return c.ResumeSeq > s1 && c.LastSeq >= s1
	})
	if n := refused(r1); n != 1 {
		t.Errorf("first holder refused %v messages, want 1", n)
	}
	r1.stop(t)

	// The next holder does not read it again; data after it is accepted.
	r2 := h.start(site, "w2")
	h.publish(1, 0.2) // window 2 opens and stays open
	waitFor(t, 30*time.Second, "6 messages accepted", func() bool { return outcome(r2, "accepted") >= 6 })
	if n, sk := refused(r2), outcome(r2, "skipped"); n != 0 || sk != 0 {
		t.Errorf("after a restart at the tail: %v refused again, %v skipped, want 0 and 0", n, sk)
	}

	// Refused while window 2 is open: a restart reads it again with the
	// window's data, and skips it.
	s2 := bad()
	waitFor(t, 10*time.Second, "the second refusal", func() bool { return refused(r2) >= 1 })
	r2.stop(t)
	if c := ck(); c.ResumeSeq > s2 || c.LastSeq < s2 {
		t.Fatalf("checkpoint resumes at %d (last %d): want window 2 open across the restart, before %d", c.ResumeSeq, c.LastSeq, s2)
	}
	r3 := h.start(site, "w3")
	h.publish(1.2, 0.8)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	checkExactlyOnce(t, h.estimates(), 4)
	if n, sk := refused(r3), outcome(r3, "skipped"); n != 0 || sk != 1 {
		t.Errorf("after a restart with a window open: %v refused again, %v skipped, want 0 and 1", n, sk)
	}
	r3.stop(t)
}
