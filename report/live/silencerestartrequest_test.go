package live

import (
	"context"
	"encoding/json"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// storedAlarms returns the asset fenwick-lane's alarms of kind stored in
// the alarm stream, in storage order.
func (h *harness) storedAlarms(t *testing.T, kind string) []Alarm {
	t.Helper()
	var out []Alarm
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if err := scan(ctx, h.js, broker.StreamAlarms, broker.AlarmSubject("fenwick-lane", kind), func(d []byte) bool {
		var a Alarm
		if err := json.Unmarshal(d, &a); err != nil {
			t.Fatal(err)
		}
		out = append(out, a)
		return true
	}); err != nil {
		t.Fatal(err)
	}
	return out
}

// A restart request re-reads the asset's stored data: the silence the
// asset's silent alarm was raised for before it is the same silence, and
// is not alarmed a second time in the middle of the re-read data
// (README: "once per silence ... also across restarts and takeovers").
func TestRestartRequestRaisesNoSecondSilentAlarm(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1s\"", 1))
	r := h.start(site, "w1")
	h.publish(0, 2) // windows 0..3, then silence
	waitFor(t, 30*time.Second, "the silent alarm", func() bool { return len(h.storedAlarms(t, AlarmSilent)) == 1 })
	req := requestRestart(t, r, "?start=retained", "")
	waitApplied(t, r, req.ID)
	waitFor(t, 30*time.Second, "the re-read's 4 estimates", func() bool {
		n := 0
		for _, e := range h.estimates() {
			if e.Revision == 1 {
				n++
			}
		}
		return n >= 4
	})
	time.Sleep(3 * site.Service.SilentAfter.Duration) // past silent_after again
	r.stop(t)
	if as := h.storedAlarms(t, AlarmSilent); len(as) != 1 {
		t.Fatalf("%d asset silent alarms for one silence across a restart request, want 1: %+v", len(as), as)
	}
}
