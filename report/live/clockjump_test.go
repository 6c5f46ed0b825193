package live

import (
	"context"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	dto "github.com/prometheus/client_model/go"

	"undercurrent/ingest/broker"
)

// publishFrom sends seconds of the harness's 100 Hz data (sample) for
// sensors s0..s2 from time base+from, in 0.1 s JSON batches, sensors
// interleaved: publishSensors with a base time of the test's choosing.
func (h *harness) publishFrom(base, from, seconds float64) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	for b := 0; b < int(seconds/0.1+0.5); b++ {
		start := from + 0.1*float64(b)
		for s := 0; s < 3; s++ {
			bt := &broker.Batch{Asset: "fenwick-lane", Sensor: fmt.Sprintf("s%d", s)}
			for i := 0; i < 10; i++ {
				tt := start + float64(i)/100
				k := int(tt/0.5 + 1e-7)
				bx, by, bz := sample(s, k, int(tt*100+0.5))
				bt.Time = append(bt.Time, base+tt)
				bt.Bx, bt.By, bt.Bz = append(bt.Bx, bx), append(bt.By, by), append(bt.Bz, bz)
			}
			if _, err := broker.PublishBatch(ctx, h.js, bt, broker.ContentJSON); err != nil {
				h.t.Fatal(err)
			}
		}
	}
}

// liveBase is a whole second a few seconds before the wall clock, so
// that the harness's data looks live to the broker's clock.
func liveBase() float64 { return math.Floor(float64(time.Now().Unix())) - 5 }

func jumpCount(t *testing.T, c interface{ Write(*dto.Metric) error }) float64 {
	t.Helper()
	var m dto.Metric
	if err := c.Write(&m); err != nil {
		t.Fatal(err)
	}
	return m.GetCounter().GetValue()
}

// Reviewer's case (rv17c finding 5) through the service: after a second
// of live data, one batch per sensor dated 50 min ahead (inside the
// default max_ahead of 1 h: a gateway whose clock stepped forward and
// back, or a forged batch), then the live data goes on. Before, the
// future batches became every sensor's last sample: each live batch after
// them was dead-lettered as out-of-order, the asset published the future
// window instead, and no alarm said so. Now the future batches are held
// (they jump far past each sensor's last sample and are far ahead of the
// broker's clock), refused as malformed once the sensor's data goes on
// from before them (after a pause longer than idle, during which a
// window closes and a checkpoint is written), with a clock-jump alarm
// per sensor; every live window is published and none in the future.
func TestClockJumpBatchGivenUpAssetGoesOn(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, shortResumeSite), "w1")
	base := liveBase()
	h.publishFrom(base, 0, 1.2) // windows 0 and 1, and window 2 open
	// One batch per sensor 3000 s ahead, as the reviewer sent.
	h.publishFrom(base, 3000, 0.1)
	// The live data pauses for longer than idle (400 ms): window 2 closes
	// on idle (partial) and a checkpoint is written while the jumped
	// batches are held; a lone jumped batch is not taken as the sensor's
	// clock for the pause.
	time.Sleep(1500 * time.Millisecond)
	h.publishFrom(base, 1.5, 1) // windows 3 and 4
	k0 := int64(math.Floor(base/0.5 + 1e-7))
	// Every one of the 66 live batches filed or refused as out of order.
	waitFor(t, 30*time.Second, "the live batches examined", func() bool {
		return jumpCount(t, r.svc.met.messages.WithLabelValues("fenwick-lane", "accepted"))+
			jumpCount(t, r.svc.met.deadLetters.WithLabelValues(broker.ReasonOutOfOrder)) >= 66
	})
	// Then the last window closes on idle (400 ms).
	waitFor(t, 30*time.Second, "the last window closed", func() bool { return maxWindow(h.estimates()) >= k0+4 })
	time.Sleep(time.Second)
	r.stop(t)
	seen := map[int64]int{}
	for _, e := range h.estimates() {
		k := e.Window - k0
		seen[k]++
		if k > 4 {
			t.Errorf("estimate published for window %d, %v s after the live data", k, float64(k)*0.5)
			continue
		}
		// sample gives a mean vertical reading of 1001 + 10 k over s0..s2;
		// window 2 has 0.2 s of its 0.5 s.
		samples := 150
		if k == 2 {
			samples = 60
		}
		if want := 1001 + 10*float64(k); len(e.Conductors) != 1 || math.Abs(e.Conductors[0].Current-want) > 1e-6 || e.Samples != samples {
			t.Errorf("window %d: %d samples, estimate %+v, want %d samples and current %v", k, e.Samples, e.Conductors, samples, want)
		}
	}
	for k := int64(0); k <= 4; k++ {
		if seen[k] != 1 {
			t.Errorf("window %d published %d times, want once", k, seen[k])
		}
	}
	if n := jumpCount(t, r.svc.met.deadLetters.WithLabelValues(broker.ReasonOutOfOrder)); n != 0 {
		t.Errorf("%v live batches refused as out-of-order, want 0", n)
	}
	if n := jumpCount(t, r.svc.met.deadLetters.WithLabelValues(broker.ReasonMalformed)); n != 3 {
		t.Errorf("%v batches refused as malformed, want the 3 future ones", n)
	}
	jumps := h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == "clock-jump" })
	got := map[string]bool{}
	for _, al := range jumps {
		got[al.Subject] = true
		// 3000 s ahead of the data's base, which is about 5 s before the
		// broker's clock: between 2990 and 3000 s ahead of it.
		if !(al.Value > 2990 && al.Value <= 3000) || !strings.Contains(al.Message, "refused") {
			t.Errorf("clock-jump alarm for %s: value %v s, message %q; want about 2995 s ahead and saying the batches were refused", al.Subject, al.Value, al.Message)
		}
	}
	if len(jumps) != 3 || !got["s0"] || !got["s1"] || !got["s2"] {
		t.Errorf("clock-jump alarms %v (%d), want one for each of s0, s1, s2", got, len(jumps))
	}
	for _, al := range h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == AlarmStep }) {
		t.Errorf("step alarm raised: %s", al.Message)
	}
}

// A gateway whose clock stepped forward and stays there: every sensor's
// data jumps 50 min ahead of the broker's clock and goes on in line with
// that. It is held for stale (idle) of wall time, then filed as dated,
// so that the asset is watched rather than blind, with a clock-jump
// alarm per sensor that says the data is processed as dated. Before, it
// was filed at once, with no alarm.
func TestClockJumpKeptIsProcessedWithAlarm(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, shortResumeSite), "w1")
	base := liveBase()
	h.publishFrom(base, 0, 1)
	h.publishFrom(base, 3000, 1)
	kj := int64(math.Floor((base+3000)/0.5 + 1e-7))
	waitFor(t, 30*time.Second, "the jumped windows published", func() bool {
		n := 0
		for _, e := range h.estimates() {
			if e.Window >= kj {
				n++
			}
		}
		return n >= 2
	})
	r.stop(t)
	if n := jumpCount(t, r.svc.met.deadLetters.WithLabelValues(broker.ReasonMalformed)); n != 0 {
		t.Errorf("%v batches refused as malformed, want 0: the jumped clock was kept", n)
	}
	jumps := h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == "clock-jump" })
	got := map[string]bool{}
	for _, al := range jumps {
		got[al.Subject] = true
		if !(al.Value > 2990 && al.Value <= 3000) || !strings.Contains(al.Message, "processed as dated") {
			t.Errorf("clock-jump alarm for %s: value %v s, message %q; want about 2995 s ahead and saying the data is processed as dated", al.Subject, al.Value, al.Message)
		}
	}
	if len(jumps) != 3 || !got["s0"] || !got["s1"] || !got["s2"] {
		t.Errorf("clock-jump alarms %v (%d), want one for each of s0, s1, s2", got, len(jumps))
	}
}

func maxWindow(es []Estimate) int64 {
	m := int64(math.MinInt64)
	for _, e := range es {
		m = max(m, e.Window)
	}
	return m
}

// What the clock-jump hold must leave alone, and what it must catch, at
// the assembler (window 1 s, grace 2 s, so a jump is more than 3 s):
// data resuming after a gap, up to the broker's clock, is filed; a log
// replayed faster than real time runs ahead of the clock but in line
// with its own last sample, and is filed; a sensor's first batch has
// nothing to jump from and is filed; a batch 3000 s past both the last
// sample and the clock is held, and given up when the next batch goes on
// from before it.
func TestClockJumpHoldOnlyJumps(t *testing.T) {
	const t0 = 1796104800.0
	clock := time.Unix(int64(t0)+100, 0)
	a := newAssembler(time.Second, 2*time.Second, 1)
	a.clock = clock
	now := clock
	add := func(seq uint64, from float64) addResult {
		r, _ := a.addMsg(0, seq, mkBatch(from, 100, 10, 1), now, "uc.data.a.s0", nil)
		return r
	}
	if r := add(1, t0+100-10); r != added {
		t.Fatalf("first batch: %v, want added", r)
	}
	if r := add(2, t0+100); r != added { // 10 s gap, up to the clock
		t.Fatalf("batch after a gap: %v, want added", r)
	}
	// Replayed fast: each batch follows the last, running 60 s ahead.
	for i := range 600 {
		if r := add(uint64(3+i), t0+100.1+0.1*float64(i)); r != added {
			t.Fatalf("in-line batch %d, %.1f s ahead of the clock: %v, want added", i, 0.1*float64(i), r)
		}
	}
	last := a.water[0]
	if r := add(700, last+3000); r != heldAhead {
		t.Fatalf("batch 3000 s ahead: %v, want heldAhead", r)
	}
	if r := add(701, last+0.01); r != added {
		t.Fatalf("batch going on from before the jump: %v, want added", r)
	}
	rej, jumps := a.takeRejected(), a.takeJumps()
	if len(rej) != 1 || rej[0].seq != 700 || len(jumps) != 1 || !jumps[0].given {
		t.Fatalf("rejected %d (%+v), jumps %+v; want the jumped batch given up", len(rej), rej, jumps)
	}
	if want := last + 0.01 + 0.09; math.Abs(a.water[0]-want) > 1e-6 {
		t.Errorf("sensor's last sample %v, want %v", a.water[0], want)
	}
	// A sensor's first batch (no window published yet) is filed even when
	// far ahead of the clock: nothing says it jumped.
	b := newAssembler(time.Second, 2*time.Second, 1)
	b.clock = clock
	if r, _ := b.addMsg(0, 1, mkBatch(t0+3100, 100, 10, 1), now, "uc.data.a.s0", nil); r != added {
		t.Errorf("first batch 3000 s ahead: %v, want added", r)
	}
}
