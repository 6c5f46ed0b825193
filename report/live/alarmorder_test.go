package live

import (
	"context"
	"encoding/json"
	"math"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"

	"undercurrent/ingest/broker"
)

// silentFirstSite is testSiteText with a silence noticed after 1 s, an
// over-current alarm at the first window of the harness's data (currents
// 1001 + 10 k A, above 1000 A: raised once, at the onset) and a step
// alarm in every later window (10 A per window, above 5 A).
func silentFirstSite(t *testing.T) *Site {
	text := strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1s\"", 1)
	return testSite(t, strings.Replace(text, "max_current = 1035", "max_current = 1000\n  step = 5", 1))
}

// Reviewer's case (README's pipeline example, with a wait before the
// replay): serve starts, the asset hears nothing for silent_after, and
// its silent alarm was dated by the wall clock; the data then replayed
// is dated earlier (here 2025, the harness's t0), so the alarm stream
// was out of window order and the range queries, which binary-search
// that order, returned nothing for a range holding ten alarms. Now the
// silent alarm is moved to the asset's first window: the stored alarms
// are in window order, the silent alarm is stored once (its first copy
// deleted), and every range query returns what a full scan filtered by
// the range returns (the reference: scan reads the whole subject).
func TestFirstSilenceKeepsAlarmsInWindowOrder(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(silentFirstSite(t), "w1")
	all := func() []Alarm {
		return h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(Alarm) bool { return true })
	}
	waitFor(t, 30*time.Second, "the asset's silent alarm", func() bool { return len(all()) > 0 })
	h.publish(0, 5) // windows 0..9, dated before the silence was noticed
	waitFor(t, 30*time.Second, "10 estimates", func() bool { return len(h.estimates()) >= 10 })
	r.stop(t)

	got := all()
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	silent, cleared := 0, 0
	for i, a := range got {
		if i > 0 && a.Start < got[i-1].Start {
			t.Errorf("alarm %d (%s, window %d) stored after window %d: out of window order", i, a.Kind, a.Window, got[i-1].Window)
		}
		if a.Kind == AlarmSilent && a.Subject == "" && a.Cleared {
			// The data ended the silence (review rv29a, finding 8): its
			// cleared record is in the first window published, the
			// onset's own, and after it.
			cleared++
			if a.Window != k0 || silent != 1 {
				t.Errorf("asset silent alarm's cleared record in window %d after %d onsets, want window %d after the onset: %+v", a.Window, silent, k0, a)
			}
		} else if a.Kind == AlarmSilent && a.Subject == "" {
			silent++
			if a.Window != k0 || !strings.Contains(a.Message, "no data from any sensor") {
				t.Errorf("asset silent alarm in window %d, want the first window %d: %+v", a.Window, k0, a)
			}
		}
	}
	if silent != 1 || cleared != 1 {
		t.Errorf("%d asset silent alarms and %d cleared records stored, want 1 and 1", silent, cleared)
	}
	for _, c := range []struct {
		name, asset, kind string
		from, to          float64
	}{
		{"asset, windows 2-5", "fenwick-lane", "", t0 + 1, t0 + 3},
		{"every asset, windows 2-5", "", "", t0 + 1, t0 + 3},
		{"asset, from window 7", "fenwick-lane", "", t0 + 3.5, math.Inf(1)},
		{"asset, window 0", "fenwick-lane", "", t0, t0 + 0.5},
		{"step, windows 2-5", "fenwick-lane", AlarmStep, t0 + 1, t0 + 3},
		{"over-current, window 0", "fenwick-lane", AlarmOverCurrent, t0, t0 + 3},
	} {
		res, err := r.svc.Alarms(context.Background(), c.asset, c.kind, c.from, c.to, time.Time{}, 100)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		want := []Alarm{}
		for _, a := range got {
			if a.Start >= c.from && a.Start < c.to && (c.kind == "" || a.Kind == c.kind) {
				want = append(want, a)
			}
		}
		if len(want) == 0 || !reflect.DeepEqual(sameOrder(res), sameOrder(want)) {
			t.Errorf("%s: got %d alarms %v, the full scan %d %v", c.name, len(res), windowsOf(res), len(want), windowsOf(want))
		}
	}
}

// An alarm stream already stored out of window order (by an earlier
// version: an asset-wide silent alarm dated by the wall clock, then
// earlier windows) is read right: every range query returns exactly the
// alarms of the full scan whose start is in [from, to), none outside it,
// and the out-of-order alarm itself when its window is asked for.
func TestAlarmQueriesTolerateOutOfOrderAlarm(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, strings.Replace(testSiteText, `idle = "400ms"`, "idle = \"400ms\"\nsilent_after = \"1h\"", 1)), "w1")
	ctx := context.Background()
	pub := func(kind string, k int64) {
		start := t0 + 0.5*float64(k)
		data, _ := json.Marshal(Alarm{Asset: "fenwick-lane", Kind: kind, Window: int64(math.Floor(t0/0.5+1e-7)) + k, Start: start, End: start + 0.5})
		if _, err := h.js.PublishMsg(ctx, &nats.Msg{Subject: broker.AlarmSubject("fenwick-lane", kind), Data: data}); err != nil {
			t.Fatal(err)
		}
	}
	pub(AlarmSilent, 10000) // the wall clock, well after the data
	for k := int64(0); k < 40; k++ {
		pub(AlarmOverCurrent, k)
		if k%4 == 1 {
			pub(AlarmDegraded, k)
		}
	}
	got := h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(Alarm) bool { return true })
	w := func(k float64) float64 { return t0 + 0.5*k }
	for _, c := range []struct {
		name, kind string
		from, to   float64
	}{
		{"windows 10-19", "", w(10), w(20)},
		{"from window 35", "", w(35), math.Inf(1)},
		{"windows 3-8", "", w(3), w(8)},
		{"degraded, windows 3-8", AlarmDegraded, w(3), w(8)},
		{"the silent alarm's window", "", w(10000), w(10001)},
		{"everything", "", math.Inf(-1), math.Inf(1)},
	} {
		res, err := r.svc.Alarms(ctx, "fenwick-lane", c.kind, c.from, c.to, time.Time{}, 1000)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		want := []Alarm{}
		for _, a := range got {
			if a.Start >= c.from && a.Start < c.to && (c.kind == "" || a.Kind == c.kind) {
				want = append(want, a)
			}
		}
		if len(want) == 0 || !reflect.DeepEqual(sameOrder(res), sameOrder(want)) {
			t.Errorf("%s: got %d alarms %v, the full scan %d %v", c.name, len(res), windowsOf(res), len(want), windowsOf(want))
		}
	}
	r.stop(t)
}

// sameOrder sorts alarms by start, then kind, for comparing lists that
// may order alarms of one window differently.
func sameOrder(as []Alarm) []Alarm {
	out := append([]Alarm{}, as...)
	for i := 1; i < len(out); i++ {
		for j := i; j > 0 && (out[j].Start < out[j-1].Start || out[j].Start == out[j-1].Start && out[j].Kind < out[j-1].Kind); j-- {
			out[j], out[j-1] = out[j-1], out[j]
		}
	}
	return out
}

func windowsOf(as []Alarm) []int64 {
	var out []int64
	for _, a := range as {
		out = append(out, a.Window)
	}
	return out
}
