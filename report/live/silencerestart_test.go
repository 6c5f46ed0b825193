package live

import (
	"context"
	"encoding/json"
	"io"
	"net/http"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// One silence gives one asset-wide silent alarm: a worker that takes the
// asset over (a restart, a takeover) while nothing has arrived neither
// raises it again nor dates the silence from its own start. Data arriving
// later ends the silence; the next silence is dated from that data's
// storage time even across a restart.
func TestSilentAlarmOncePerSilenceAcrossRestarts(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1s\"", 1))
	// alarms are the onsets; cleared counts the cleared records (data
	// ending a silence clears its alarm, review rv29a finding 8).
	cleared := 0
	alarms := func() []Alarm {
		var out []Alarm
		cleared = 0
		for _, a := range silentAlarms(t, h) {
			if a.Cleared {
				cleared++
			} else {
				out = append(out, a)
			}
		}
		return out
	}
	held := func(r *running) bool {
		resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		return strings.Contains(string(body), "uc_assets_held 1")
	}
	r := h.start(site, "w1")
	waitFor(t, 30*time.Second, "the silent alarm", func() bool { return len(alarms()) == 1 })
	r.stop(t)
	for _, worker := range []string{"w1", "w2"} { // a restart, then a takeover
		r = h.start(site, worker)
		waitFor(t, 30*time.Second, worker+" to take the asset", func() bool { return held(r) })
		time.Sleep(3 * site.Service.SilentAfter.Duration) // past silent_after again: still one alarm
		r.stop(t)
	}
	if as := alarms(); len(as) != 1 || cleared != 0 {
		t.Fatalf("%d silent alarms and %d cleared records for one silence across a restart and a takeover, want 1 and 0: %+v", len(as), cleared, as)
	}

	// Data ends the silence; the next one is dated from that data's
	// storage, also for a worker that takes the asset before the alarm is
	// raised and well after the data arrived.
	site3 := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"4s\"", 1))
	r = h.start(site3, "w1")
	h.publish(0, 1)
	stored := time.Now()
	waitFor(t, 30*time.Second, "the data's windows", func() bool { return len(h.estimates()) >= 2 })
	r.stop(t)
	if as := alarms(); len(as) != 1 || cleared != 1 {
		t.Fatalf("%d silent alarms and %d cleared records before the second silence lasted silent_after, want 1 and 1 (the data cleared the first)", len(as), cleared)
	}
	time.Sleep(2500 * time.Millisecond) // the new worker starts well after the data
	r = h.start(site3, "w2")
	waitFor(t, 30*time.Second, "a second silent alarm", func() bool { return len(alarms()) == 2 })
	r.stop(t)
	as := alarms()
	if len(as) != 2 {
		t.Fatalf("%d silent alarms, want 2 (one per silence): %+v", len(as), as)
	}
	since := as[1].Message[strings.Index(as[1].Message, "(since ")+7 : len(as[1].Message)-1]
	at, err := time.Parse(time.RFC3339, since) // whole seconds
	if err != nil {
		t.Fatal(err)
	}
	if d := stored.Sub(at); d < -500*time.Millisecond || d > 1500*time.Millisecond {
		t.Errorf("second silence dated %v, %v before the data's arrival; want the arrival (to the second)", at, d)
	}
}

// A worker that takes an asset whose data was stored before it started
// (a takeover re-reading the backlog) dates the asset's silence from the
// broker's storage of the last batch, not from its re-reading it: the
// README's subjects table promises the silent alarm is "dated from the
// last stored batch, also across restarts and takeovers" (simulated
// truth: the test's own publish time).
func TestSilenceAfterTakeoverDatedFromStoredBacklog(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"4s\"", 1))
	h.publish(0, 1) // stored while no worker holds the asset
	stored := time.Now()
	time.Sleep(2500 * time.Millisecond) // the worker takes the asset well after the data
	r := h.start(site, "w1")
	var as []Alarm
	waitFor(t, 30*time.Second, "the silent alarm", func() bool {
		as = nil
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		defer cancel()
		if err := scan(ctx, h.js, broker.StreamAlarms, broker.AlarmSubject("fenwick-lane", AlarmSilent), func(d []byte) bool {
			var a Alarm
			if err := json.Unmarshal(d, &a); err != nil {
				t.Fatal(err)
			}
			as = append(as, a)
			return true
		}); err != nil {
			t.Fatal(err)
		}
		return len(as) == 1
	})
	r.stop(t)
	since := as[0].Message[strings.Index(as[0].Message, "(since ")+7 : len(as[0].Message)-1]
	at, err := time.Parse(time.RFC3339, since) // whole seconds
	if err != nil {
		t.Fatal(err)
	}
	if d := stored.Sub(at); d < -500*time.Millisecond || d > 1500*time.Millisecond {
		t.Errorf("silence dated %v, %v before the data was stored; want the storage time (to the second), not the takeover", at, d)
	}
}
