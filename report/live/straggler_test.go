package live

import (
	"context"
	"encoding/json"
	"io"
	"math"
	"math/rand/v2"
	"net/http"
	"strconv"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// One sample that a sensor with its clock a few milliseconds ahead sends
// past the end of the data falls in the next window, which then closes on
// idle with that sample alone. It is not published as an estimate: it
// had no sensor with enough samples to use, it would replace the last
// real estimate as latest, and its other sensors were not silent, the
// whole feed had stopped. Before, it was a "failed" estimate that became
// latest, with a silent alarm for every other sensor and a degraded
// alarm showing the estimator's internal error.
func TestStragglerWindowNotPublished(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	// resume_idle as short as idle, in case the worker takes the asset
	// after the data is stored (a backlog).
	r := h.start(testSite(t, shortResumeSite), "w1")
	h.publish(0, 2) // windows 0 to 3
	straggler := &broker.Batch{Asset: "fenwick-lane", Sensor: "s0", Time: []float64{t0 + 2.003}, Bx: []float64{0}, By: []float64{5}, Bz: []float64{1040}}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	if _, err := broker.PublishBatch(ctx, h.js, straggler, broker.ContentJSON); err != nil {
		t.Fatal(err)
	}
	// Every window closed, the straggler's (window 4) on idle.
	waitFor(t, 30*time.Second, "5 windows closed", func() bool { return windowsClosed(t, r) >= 5 })
	r.stop(t)
	checkExactlyOnce(t, h.estimates(), 4)
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	kv, err := h.js.KeyValue(context.Background(), broker.BucketLatest)
	if err != nil {
		t.Fatal(err)
	}
	e, err := kv.Get(context.Background(), "fenwick-lane")
	if err != nil {
		t.Fatal(err)
	}
	var latest Estimate
	if err := json.Unmarshal(e.Value(), &latest); err != nil {
		t.Fatal(err)
	}
	if latest.Window != k0+3 || len(latest.Conductors) != 1 {
		t.Errorf("latest is window %d with %d conductors (quality %s), want window 3 with its current", latest.Window-k0, len(latest.Conductors), latest.Quality)
	}
	for _, al := range h.allAlarms(broker.AlarmPrefix+".fenwick-lane.>", func(a Alarm) bool { return a.Window == k0+4 }) {
		t.Errorf("alarm raised for the straggler's window: %s %s: %s", al.Kind, al.Subject, al.Message)
	}
}

// windowsClosed sums uc_windows_total of fenwick-lane over the reasons.
func windowsClosed(t *testing.T, r *running) float64 {
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	body, _ := io.ReadAll(resp.Body)
	var n float64
	for _, l := range strings.Split(string(body), "\n") {
		if strings.HasPrefix(l, `uc_windows_total{asset="fenwick-lane"`) {
			f := strings.Fields(l)
			v, _ := strconv.ParseFloat(f[len(f)-1], 64)
			n += v
		}
	}
	return n
}

// A window solved with no usable sensor (each gave fewer samples than a
// sine fit needs, IEEE Std 1057: more than three) is "failed", and its
// degraded alarm says why in the operator's terms, not with the
// estimator's internal error ("inverse: problem has neither Fields nor
// Phasors" before).
func TestFailedWindowAlarmSaysWhy(t *testing.T) {
	a, p := fenwickProcessor(t)
	w := synthWindow(a, []complex128{200, -200}, [3]float64{}, 1796279400, 500, minSamples-1, a.Noise, rand.New(rand.NewPCG(3, 3)))
	e, alarms := p.solve(w, p.reduce(w))
	if e.Quality != "failed" {
		t.Fatalf("quality %q, want failed", e.Quality)
	}
	al, ok := alarmFor(alarms, AlarmDegraded, "")
	if !ok {
		t.Fatal("no degraded alarm")
	}
	if !strings.Contains(al.Message, "no sensor gave enough usable samples") || strings.Contains(al.Message, "inverse") {
		t.Errorf("alarm message %q, want the reason in the operator's terms", al.Message)
	}
	if p.solveErr == nil {
		t.Error("the estimator's error is not kept for the log")
	}
}
