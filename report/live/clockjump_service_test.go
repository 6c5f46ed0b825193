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

// jumpBatches returns the harness's 100 Hz data (sample) for sensors
// s0..s2 from time base+from for seconds, in 0.1 s batches, sensors
// interleaved; skip leaves out a sensor's batch.
func jumpBatches(base, from, seconds float64, skip func(s int, tt float64) bool) []*broker.Batch {
	var out []*broker.Batch
	for b := 0; b < int(seconds/0.1+0.5); b++ {
		start := from + 0.1*float64(b)
		for s := 0; s < 3; s++ {
			if skip != nil && skip(s, start) {
				continue
			}
			bt := &broker.Batch{Asset: "fenwick-lane", Sensor: fmt.Sprintf("s%d", s)}
			for i := 0; i < 10; i++ {
				tt := start + float64(i)/100
				k := int(tt/0.5 + 1e-7)
				bx, by, bz := sample(s, k, int(tt*100+0.5))
				bt.Time = append(bt.Time, base+tt)
				bt.Bx, bt.By, bt.Bz = append(bt.Bx, bx), append(bt.By, by), append(bt.Bz, bz)
			}
			out = append(out, bt)
		}
	}
	return out
}

// publishLive sends batches at the pace of their data, as a live
// gateway does (broker.Replay at speed 1, no shift).
func (h *harness) publishLive(batches []*broker.Batch) {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	if _, err := broker.Replay(ctx, h.js, batches, &broker.ReplaySettings{Speed: 1, Encoding: broker.ContentJSON}); err != nil {
		h.t.Fatal(err)
	}
}

func metricValue(t *testing.T, c interface{ Write(*dto.Metric) error }) float64 {
	t.Helper()
	var m dto.Metric
	if err := c.Write(&m); err != nil {
		t.Fatal(err)
	}
	return m.GetCounter().GetValue()
}

// Reviewer's case (rv17c) through the service: live data, then one batch
// per sensor dated 50 min ahead (inside the default max_ahead of 1 h),
// then the live data goes on after a pause longer than idle (so that a
// window closes on idle, and a checkpoint is written, while the batches
// are held). Before, the future batches became every sensor's last
// sample, every live batch after them was refused as out-of-order, the
// future window was published and no alarm said so. Now they are
// refused as malformed when each sensor's data goes on from before them,
// a clock-jump alarm names each sensor, and every live window is
// published once, with no step alarm.
func TestClockJumpBatchGivenUpAssetGoesOn(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, shortResumeSite), "w1")
	base := math.Floor(float64(time.Now().Unix())) - 1 // live: about the broker's clock
	h.publishLive(jumpBatches(base, 0, 1, nil))
	h.publishLive(jumpBatches(base, 3000, 0.1, nil))
	time.Sleep(1500 * time.Millisecond)
	h.publishLive(jumpBatches(base, 1, 1, nil))
	k0 := int64(math.Floor(base/0.5 + 1e-7))
	met := r.svc.met
	waitFor(t, 30*time.Second, "the live batches examined", func() bool {
		return metricValue(t, met.messages.WithLabelValues("fenwick-lane", "accepted"))+
			metricValue(t, met.deadLetters.WithLabelValues(broker.ReasonOutOfOrder)) >= 60
	})
	waitFor(t, 30*time.Second, "the last window closed", func() bool {
		for _, e := range h.estimates() {
			if e.Window == k0+3 {
				return true
			}
		}
		return false
	})
	time.Sleep(time.Second)
	r.stop(t)
	seen := map[int64]int{}
	for _, e := range h.estimates() {
		k := e.Window - k0
		seen[k]++
		if k > 3 {
			t.Errorf("estimate published for window %d, %v s after the live data", k, float64(k)*0.5)
			continue
		}
		// sample gives a mean vertical reading of 1001 + 10 k over s0..s2.
		if want := 1001 + 10*float64(k); len(e.Conductors) != 1 || math.Abs(e.Conductors[0].Current-want) > 1e-6 || e.Samples != 150 {
			t.Errorf("window %d: %d samples, estimate %+v, want 150 samples and current %v", k, e.Samples, e.Conductors, want)
		}
	}
	for k := int64(0); k <= 3; k++ {
		if seen[k] != 1 {
			t.Errorf("window %d published %d times, want once", k, seen[k])
		}
	}
	if n := metricValue(t, met.deadLetters.WithLabelValues(broker.ReasonOutOfOrder)); n != 0 {
		t.Errorf("%v live batches refused as out-of-order, want 0", n)
	}
	if n := metricValue(t, met.deadLetters.WithLabelValues(broker.ReasonMalformed)); n != 3 {
		t.Errorf("%v batches refused as malformed, want the 3 future ones", n)
	}
	jumps := h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == AlarmClockJump })
	got := map[string]bool{}
	for _, al := range jumps {
		got[al.Subject] = true
		// 3000 s ahead of base, about 1 s before the broker's clock.
		if !(al.Value > 2990 && al.Value <= 3000) || !strings.Contains(al.Message, "refused") {
			t.Errorf("clock-jump alarm for %s: value %v s, message %q; want about 2999 s ahead and saying the batches were refused", al.Subject, al.Value, al.Message)
		}
	}
	if len(jumps) != 3 || !got["s0"] || !got["s1"] || !got["s2"] {
		t.Errorf("clock-jump alarms %v (%d), want one for each of s0, s1, s2", got, len(jumps))
	}
	for _, al := range h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == AlarmStep || a.Cleared }) {
		t.Errorf("%s alarm raised (cleared %v): %s", al.Kind, al.Cleared, al.Message)
	}
}

// A log replayed --now style at 50 times real time with gaps inside
// (regression review rg16b), through the service: every sensor pauses
// from 3 s to 303 s of data time, and s2 alone from 306 s to 312 s. The
// data after the gaps is ahead of the broker's clock (by about 290 s),
// but in line with the replay's pace. No clock-jump alarm, nothing
// dead-lettered, every sample counted and every window published with
// all its samples. The hold taken back in 8c43cc5 raised a clock-jump
// alarm per sensor and dropped s2's data after its own gap.
func TestClockJumpFastReplayWithGap(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, shortResumeSite), "w1")
	// The log's times are an hour and a half second before the clock, so
	// that --now's whole-minute shift (an hour) starts it at the clock.
	now := float64(time.Now().UnixNano()) / 1e9
	logBase := math.Floor(now) - 3600
	skip := func(s int, tt float64) bool { return s == 2 && tt >= 306-1e-9 && tt < 312-1e-9 }
	batches := append(jumpBatches(logBase, 0, 3, nil), jumpBatches(logBase, 303, 12, skip)...)
	shift := math.Floor((now-batches[0].Time[0])/60) * 60 // as replay --now does
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	st, err := broker.Replay(ctx, h.js, batches, &broker.ReplaySettings{Speed: 50, Encoding: broker.ContentJSON, Shift: shift, MaxAhead: time.Hour - time.Minute})
	if err != nil {
		t.Fatal(err)
	}
	total := st.Samples
	if want := (15*3 - 6) * 100; total != want {
		t.Fatalf("replayed %d samples, want %d", total, want)
	}
	met := r.svc.met
	waitFor(t, 60*time.Second, "every sample filed", func() bool {
		return metricValue(t, met.samples.WithLabelValues("fenwick-lane")) >= float64(total)
	})
	k0 := int64(math.Floor((logBase+shift)/0.5 + 1e-7))
	waitFor(t, 30*time.Second, "the last window closed", func() bool {
		for _, e := range h.estimates() {
			if e.Window == k0+629 {
				return true
			}
		}
		return false
	})
	r.stop(t)
	if n := metricValue(t, met.samples.WithLabelValues("fenwick-lane")); n != float64(total) {
		t.Errorf("uc_samples_total %v, want %d", n, total)
	}
	for _, reason := range []string{broker.ReasonMalformed, broker.ReasonLate, broker.ReasonOutOfOrder} {
		if n := metricValue(t, met.deadLetters.WithLabelValues(reason)); n != 0 {
			t.Errorf("%v batches dead-lettered %s, want 0", n, reason)
		}
	}
	for _, al := range h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Kind == AlarmClockJump }) {
		t.Errorf("clock-jump alarm raised: %s", al.Message)
	}
	n := 0
	for _, e := range h.estimates() {
		k := e.Window - k0
		want := 150
		if k >= 612 && k < 624 { // s2's own gap, 306 s to 312 s
			want = 100
		}
		if e.Samples != want {
			t.Errorf("window %d: %d samples, want %d", k, e.Samples, want)
		}
		n++
	}
	if n != 6+24 {
		t.Errorf("%d windows published, want 30", n)
	}
}
