package live

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// uc_data_lag_seconds is computed when scraped: with no window published
// it keeps growing with the wall clock (its help says "wall-clock time
// minus the end of the last published window"), and an asset the worker
// no longer holds is dropped.
func TestDataLagFollowsWallClock(t *testing.T) {
	m := newMetrics()
	now := time.Unix(1796104900, 0)
	m.dataLag.now = func() time.Time { return now }
	m.dataLag.published("fenwick-lane", 1796104860)
	lag := func() []float64 {
		t.Helper()
		mfs, err := m.reg.Gather()
		if err != nil {
			t.Fatal(err)
		}
		var out []float64
		for _, mf := range mfs {
			if mf.GetName() != "uc_data_lag_seconds" {
				continue
			}
			for _, x := range mf.GetMetric() {
				if len(x.GetLabel()) != 1 || x.GetLabel()[0].GetValue() != "fenwick-lane" {
					t.Errorf("labels %v", x.GetLabel())
				}
				out = append(out, x.GetGauge().GetValue())
			}
		}
		return out
	}
	if got := lag(); len(got) != 1 || got[0] != 40 {
		t.Errorf("lag %v, want [40]", got)
	}
	now = now.Add(12 * time.Second) // nothing published meanwhile
	if got := lag(); len(got) != 1 || got[0] != 52 {
		t.Errorf("lag %v 12 s later, want [52]", got)
	}
	m.dataLag.forget("fenwick-lane")
	if got := lag(); len(got) != 0 {
		t.Errorf("lag %v after the asset was released, want none", got)
	}
}

// When every sensor of an asset stops, no window opens, so no window can
// raise the per-sensor silent alarms: the asset's own silent alarm (no
// subject) is raised once silent_after of wall time has passed without a
// batch, and once only.
func TestWholeAssetSilenceAlarm(t *testing.T) {
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1s\"", 1))
	r := h.start(site, "w1")
	h.publish(0, 1)
	var alarms []Alarm
	read := func() bool {
		alarms = silentAlarms(t, h)
		return len(alarms) > 0
	}
	waitFor(t, 30*time.Second, "the asset's silent alarm", read)
	time.Sleep(1500 * time.Millisecond) // longer than silent_after: still one alarm
	read()
	if len(alarms) != 1 {
		t.Fatalf("%d silent alarms, want 1: %+v", len(alarms), alarms)
	}
	a := alarms[0]
	k1 := int64(math.Floor(t0/0.5+1e-7)) + 2 // the window after the last published one (0.5 s windows, 1 s of data)
	if a.Subject != "" || a.Window != k1 || a.Threshold != 1 || a.Value < 1 ||
		!strings.Contains(a.Message, "no data from any sensor of asset fenwick-lane for") {
		t.Errorf("alarm %+v, want window %d with no subject", a, k1)
	}
	r.stop(t)
}

// Review rv29a, finding 8: the asset's silent alarm had no cleared
// record when data came again, unlike a sensor's silence or an
// over-current. The first window published after the silence carries
// one, once: cleared, no subject, since the onset window's start, and
// windows counting those from the onset's to it, which had no data.
func TestWholeAssetSilenceCleared(t *testing.T) {
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1s\"", 1))
	r := h.start(site, "w1")
	h.publish(0, 1) // windows 0, 1
	var alarms []Alarm
	read := func() {
		alarms = silentAlarms(t, h)
	}
	waitFor(t, 30*time.Second, "the asset's silent alarm", func() bool { read(); return len(alarms) > 0 })
	for _, a := range alarms {
		if a.Cleared {
			t.Fatalf("cleared before data came again: %+v", alarms)
		}
	}
	h.publish(2, 2) // windows 4 to 7: one cleared record, in window 4
	waitFor(t, 30*time.Second, "the estimate of window 7", func() bool {
		ests := h.estimates()
		return len(ests) > 0 && ests[len(ests)-1].Start == t0+3.5
	})
	read()
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	// A silence after window 7 (1 s after the last data, by the wall
	// clock) would be alarmed in window 8: not this test's.
	kept := alarms[:0]
	for _, a := range alarms {
		if a.Window <= k0+7 {
			kept = append(kept, a)
		}
	}
	alarms = kept
	if len(alarms) != 2 {
		t.Fatalf("%d silent alarms of the asset, want the onset and one cleared record: %+v", len(alarms), alarms)
	}
	on, off := alarms[0], alarms[1]
	if on.Cleared || on.Window != k0+2 {
		t.Errorf("onset %+v, want window %d not cleared", on, k0+2)
	}
	if !off.Cleared || off.Subject != "" || off.Window != k0+4 || off.Since != on.Start || off.Windows != 2 || off.Threshold != 1 ||
		!strings.Contains(off.Message, "again") {
		t.Errorf("cleared record %+v, want window %d with no subject, since %v, 2 windows, threshold 1", off, k0+4, on.Start)
	}
	r.stop(t)
}

// silentAlarms reads the asset fenwick-lane's silent alarms, onsets and
// cleared records, in the order stored.
func silentAlarms(t *testing.T, h *harness) []Alarm {
	t.Helper()
	var alarms []Alarm
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	err := scan(ctx, h.js, broker.StreamAlarms, broker.AlarmSubject("fenwick-lane", AlarmSilent), func(d []byte) bool {
		var a Alarm
		if err := json.Unmarshal(d, &a); err != nil {
			t.Fatal(err)
		}
		alarms = append(alarms, a)
		return true
	})
	if err != nil {
		t.Fatal(err)
	}
	return alarms
}
