package live

import (
	"context"
	"encoding/json"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// TestCommissionedSiteConductorsChanged: an asset commissioned with one conductor
// "pipe" (the pipe of commissionSite, simulated with the Biot-Savart field of its
// line) whose site file then renames it "spur" is commissioned again when serve
// restarts: the stored geometry named the old conductor, and before, the estimates
// went on naming "pipe", fitted with the old geometry, while the asset's endpoint
// listed "spur". The new geometry names "spur", is fitted from data after the
// restart, and every later estimate names "spur".
func TestCommissionedSiteConductorsChanged(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, commissionSite)
	a := site.Assets[0]
	rng := rand.New(rand.NewPCG(21, 22))
	pctx, pcancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer pcancel()
	publish := func(from, to int) { publishPipe(pctx, t, h, a, rng, from, to) }
	readAll := func() []Estimate { return readEstimates(h, a.Name) }
	_, stop := h.runService(t, site, "kestrel")
	publish(0, 4)
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(readAll()) >= 8 })
	if err := stop(); err != nil {
		t.Fatal(err)
	}

	renamed := testSite(t, strings.Replace(commissionSite, `name = "pipe"`, `name = "spur"`, 1))
	_, stop = h.runService(t, renamed, "kestrel")
	defer stop()
	publish(4, 8)
	kv, _ := h.js.KeyValue(context.Background(), broker.BucketState)
	var g storedGeometry
	waitFor(t, 30*time.Second, "a geometry naming spur", func() bool {
		e, err := kv.Get(context.Background(), geometryKey(a.Name))
		if err != nil {
			return false
		}
		g = storedGeometry{}
		json.Unmarshal(e.Value(), &g)
		return len(g.Conductors) == 1 && g.Conductors[0].Name == "spur"
	})
	if g.From < t0+4 {
		t.Errorf("recommissioned from %v s, want data after the restart (4 s)", g.From-t0)
	}
	waitFor(t, 30*time.Second, "16 estimates", func() bool { return len(readAll()) >= 16 })
	for i, e := range readAll()[8:] {
		if len(e.Conductors) != 1 || e.Conductors[0].Name != "spur" {
			t.Errorf("estimate %d after the rename names %+v, want spur", 8+i, e.Conductors)
		}
	}
}
