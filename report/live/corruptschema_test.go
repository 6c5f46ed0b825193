package live

import (
	"context"
	"os"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// Reviewer's case (rv25e finding 1), through the service: one gateway
// payload, an Arrow IPC stream of 1232 bytes whose schema declares 2^29
// children for one field, published as a sensor's data with no content
// type (as MQTT gives). arrow-go's schema decoder sized a slice from the
// count and the service died with "fatal error: runtime: out of memory"
// (no recover catches it); the broker kept the message, so every restart
// died on it again. It is now refused to uc.dlq.malformed with the count
// named, the windows around it are estimated, and a restarted service
// reads on past it.
func TestCorruptArrowSchemaDeadLettered(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	bad, err := os.ReadFile("../../ingest/testdata/corrupt/oom-stream.arrows")
	if err != nil {
		t.Fatal(err)
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	r1 := h.start(site, "w1")
	h.publish(0, 1)
	if _, err := h.js.Publish(context.Background(), "uc.data.fenwick-lane.s0", bad); err != nil {
		t.Fatal(err)
	}
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })

	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	st, err := h.js.Stream(ctx, broker.StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	m, err := st.GetLastMsgForSubject(ctx, broker.DeadLetterSubject(broker.ReasonMalformed))
	if err != nil {
		t.Fatalf("no malformed dead letter: %v", err)
	}
	if e := m.Header.Get(broker.HeaderError); !strings.Contains(e, "corrupt Arrow metadata: a field's child list declares 536870912 entries") {
		t.Errorf("dead letter error %q, want the child count named", e)
	}
	r1.stop(t)

	// A restart on the same store reads on: the message is not read again
	// (or, if it were, refused again), and new windows are estimated.
	r2 := h.start(site, "w2")
	h.publish(2, 1)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	r2.stop(t)
	checkExactlyOnce(t, h.estimates(), 6)
}
