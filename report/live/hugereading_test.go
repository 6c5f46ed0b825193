package live

import (
	"context"
	"fmt"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// publishSensors sends seconds of the harness's 100 Hz data (sample)
// for the sensors listed, from time t0+from, in 0.1 s JSON batches.
func (h *harness) publishSensors(sensors []int, from, seconds float64) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	for b := 0; b < int(seconds/0.1+0.5); b++ {
		start := from + 0.1*float64(b)
		for _, s := range sensors {
			bt := &broker.Batch{Asset: "fenwick-lane", Sensor: fmt.Sprintf("s%d", s)}
			for i := 0; i < 10; i++ {
				tt := start + float64(i)/100
				k := int(tt/0.5 + 1e-7)
				bx, by, bz := sample(s, k, int(tt*100+0.5))
				bt.Time = append(bt.Time, t0+tt)
				bt.Bx, bt.By, bt.Bz = append(bt.Bx, bx), append(bt.By, by), append(bt.Bz, bz)
			}
			if _, err := broker.PublishBatch(ctx, h.js, bt, broker.ContentJSON); err != nil {
				h.t.Fatal(err)
			}
		}
	}
}

// Reviewer's case through the service, with the inverse estimator (its
// fit overflows on such readings): one batch of sensor s0 with a reading
// of 1e200 nT used to stop the asset for good (encode estimate: +Inf,
// retried from the checkpoint forever). It is refused to uc.dlq.malformed
// naming the bound, and the windows after it are published: every
// window has one estimate.
func TestHugeReadingRefusedAssetGoesOn(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	_, stop := h.runConfig(t, Config{Site: testSite(t, testSiteText), Worker: "w1", NewEstimator: NewInverseEstimator}, "w1")
	h.publish(0, 1)
	// s0's first batch of window 2 holds one huge reading.
	bad := `{"t0":%v,"rate":100,"bx":[0,0.01,1e200,0.03,0.04,0.05,0.06,0.07,0.08,0.09],"by":[5,5,5,5,5,5,5,5,5,5],"bz":[1020,1020,1020,1020,1020,1020,1020,1020,1020,1020]}`
	if _, err := h.js.Publish(context.Background(), "uc.data.fenwick-lane.s0", []byte(fmt.Sprintf(bad, t0+1))); err != nil {
		t.Fatal(err)
	}
	h.publishSensors([]int{1, 2}, 1, 0.1)
	h.publishSensors([]int{0, 1, 2}, 1.1, 0.9)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	if err := stop(); err != nil {
		t.Fatalf("Run: %v", err)
	}
	seen := map[int64]int{}
	for _, e := range h.estimates() {
		seen[e.Window]++
		if e.Quality == "failed" || len(e.Conductors) != 1 {
			t.Errorf("window %d: quality %q with %d conductors, want a solved window", e.Window, e.Quality, len(e.Conductors))
		}
	}
	first := int64(t0 / 0.5)
	for k := first; k < first+4; k++ {
		if seen[k] != 1 {
			t.Errorf("window %d has %d estimates, want 1", k, seen[k])
		}
	}
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
	if e := m.Header.Get(broker.HeaderError); !strings.Contains(e, "row 3: field magnitude") || !strings.Contains(e, "above 0.1 T") {
		t.Errorf("dead letter error %q, want the row and the 0.1 T bound", e)
	}
}
