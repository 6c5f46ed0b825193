package live

import (
	"context"
	"encoding/json"
	"log/slog"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// TestCommissionedSitePointMoved: an asset commissioned with its pipe's point
// given in the site file (the pipe of commissionSite, simulated with the
// Biot-Savart field of its line, 1.4 m below (0.3, 0)) keeps its geometry when
// serve restarts on the same site file, and is commissioned again when the site
// file then moves the point (same name, 0.5 m east): before, the stored geometry
// fitted from the old point was kept without a word, as only renamed, added or
// removed conductors were noticed. The log's warning names the change, and the
// new geometry is fitted from data after the second restart and records the new
// point.
func TestCommissionedSitePointMoved(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	withPoint := strings.Replace(commissionSite, `name = "pipe"`, "name = \"pipe\"\n  point = [0.3, 0.0, -1.4]", 1)
	site := testSite(t, withPoint)
	a := site.Assets[0]
	rng := rand.New(rand.NewPCG(31, 32))
	pctx, pcancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer pcancel()
	publish := func(from, to int) { publishPipe(pctx, t, h, a, rng, from, to) }
	kv, _ := h.js.KeyValue(context.Background(), broker.BucketState)
	stored := func() (storedGeometry, bool) {
		var g storedGeometry
		e, err := kv.Get(context.Background(), geometryKey(a.Name))
		if err != nil {
			return g, false
		}
		json.Unmarshal(e.Value(), &g)
		return g, true
	}
	run := func(s *Site) (*syncBuffer, func() error) {
		logs := &syncBuffer{}
		_, stop := h.runConfig(t, Config{Site: s, Worker: "wk", Logger: slog.New(slog.NewTextHandler(logs, nil))}, "kestrel")
		return logs, stop
	}

	_, stop := run(site)
	publish(0, 4)
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(readEstimates(h, a.Name)) >= 8 })
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	first, ok := stored()
	if !ok || first.Inputs == nil || len(first.Inputs.Conductors) != 1 || first.Inputs.Conductors[0].Point == nil ||
		*first.Inputs.Conductors[0].Point != [3]float64{0.3, 0, -1.4} || first.InputsDigest != commissionInputsOf(&a).digest() {
		t.Fatalf("stored geometry %+v does not record the site file's settings", first)
	}

	// The same site file: the geometry is kept.
	logs, stop := run(testSite(t, withPoint))
	publish(4, 6)
	waitFor(t, 30*time.Second, "12 estimates", func() bool { return len(readEstimates(h, a.Name)) >= 12 })
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	if g, ok := stored(); !ok || g.From != first.From || g.To != first.To {
		t.Fatalf("restart on the same site file: geometry from %v to %v, want the first (%v to %v)", g.From, g.To, first.From, first.To)
	}
	if strings.Contains(logs.String(), "commissioned again") {
		t.Errorf("restart on the same site file recommissions:\n%s", logs)
	}

	moved := testSite(t, strings.Replace(withPoint, "point = [0.3, 0.0, -1.4]", "point = [0.8, 0.0, -1.4]", 1))
	logs, stop = run(moved)
	defer stop()
	publish(6, 10)
	var g storedGeometry
	waitFor(t, 30*time.Second, "a geometry commissioned from data after the restart (6 s)", func() bool {
		g, ok = stored()
		return ok && g.From >= t0+6
	})
	if g.Inputs == nil || len(g.Inputs.Conductors) != 1 || g.Inputs.Conductors[0].Point == nil || *g.Inputs.Conductors[0].Point != [3]float64{0.8, 0, -1.4} {
		t.Errorf("the new geometry records settings %+v, want the moved point", g.Inputs)
	}
	if want := "conductor pipe point [0.3, 0, -1.4], now [0.8, 0, -1.4]"; !strings.Contains(logs.String(), want) {
		t.Errorf("the log does not name the change %q:\n%s", want, logs)
	}
	waitFor(t, 30*time.Second, "20 estimates", func() bool { return len(readEstimates(h, a.Name)) >= 20 })
}

// inputsDiff names each change of the commissioning settings: a sensor
// moved or turned, a direction given, the mode, frequency and period; the
// same site file, or its sensors listed in another order, give the same
// digest.
func TestCommissionInputsDiffNamesChanges(t *testing.T) {
	base := testSite(t, commissionSite).Assets[0]
	old := commissionInputsOf(&base)
	for _, tc := range []struct {
		name, from, to, want string
	}{
		{"sensor moved", "position = [-2.0, -1.0, 0.5]", "position = [-2.0, -1.2, 0.5]", "sensor km-a position [-2, -1, 0.5], now [-2, -1.2, 0.5]"},
		{"sensor turned", "name = \"km-b\"", "name = \"km-b\"\n  orientation = [90.0, 0.0, 0.0]", "sensor km-b orientation [0, 0, 0], now [90, 0, 0]"},
		{"direction given", "name = \"pipe\"", "name = \"pipe\"\n  direction = [0.5, 0.866, 0.0]", "conductor pipe direction not given, now [0.5, 0.866, 0]"},
		{"period", `commission = "2s"`, `commission = "3s"`, "commission 2 s, now 3 s"},
		{"mode", "mode = \"dc\"", "mode = \"ac\"\nfrequency = 50.0", "mode dc, now ac; frequency 0 Hz, now 50 Hz"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := strings.Replace(commissionSite, tc.from, tc.to, 1)
			if text == commissionSite {
				t.Fatalf("%q not in the site", tc.from)
			}
			a := testSite(t, text).Assets[0]
			now := commissionInputsOf(&a)
			if now.digest() == old.digest() {
				t.Errorf("the digest does not change")
			}
			if got := inputsDiff(old, now); got != tc.want {
				t.Errorf("diff %q, want %q", got, tc.want)
			}
		})
	}
	same := testSite(t, commissionSite).Assets[0]
	if commissionInputsOf(&same).digest() != old.digest() {
		t.Errorf("the same site file gives another digest")
	}
	// The sensors listed in another order: the same readings, the same fit.
	same.Sensors[0], same.Sensors[4] = same.Sensors[4], same.Sensors[0]
	if got := commissionInputsOf(&same); got.digest() != old.digest() {
		t.Errorf("sensors listed in another order give another digest (%s)", inputsDiff(old, got))
	}
}
