package live

import (
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"net/http"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
	"undercurrent/inverse"
)

// commissionSite is a DC asset whose line geometry is fitted from the
// first 2 s of data, from six sensors in two rows (the Kestrel Moor
// layout of the example site).
const commissionSite = `
[service]
http = "127.0.0.1:0"
token = "kestrel-moor-token"
lease_ttl = "1s"
idle = "400ms"
[[asset]]
name = "kestrel-moor"
mode = "dc"
window = "500ms"
model = "commission"
commission = "2s"
  [[asset.sensor]]
  name = "km-a"
  position = [-2.0, -1.0, 0.5]
  [[asset.sensor]]
  name = "km-b"
  position = [0.0, -1.0, 0.5]
  [[asset.sensor]]
  name = "km-c"
  position = [2.0, -1.0, 0.5]
  [[asset.sensor]]
  name = "km-d"
  position = [-2.0, 1.0, 0.5]
  [[asset.sensor]]
  name = "km-e"
  position = [0.0, 1.0, 0.5]
  [[asset.sensor]]
  name = "km-f"
  position = [2.0, 1.0, 0.5]
  [[asset.conductor]]
  name = "pipe"
`

// The pipe runs about north-east, 1.4 m below ground, carrying 4 A of
// cathodic-protection current; the Earth's field is fitted as background.
var (
	pipeLine  = inverse.Line{Point: [3]float64{0.3, 0, -1.4}, Dir: [3]float64{0.5, 0.8660254037844386, 0}}
	pipeAmps  = 4.0
	pipeEarth = [3]float64{1520, 17850, -45760}
)

func TestCommissionThenHold(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, commissionSite)
	svc, stop := h.runService(t, site, "kestrel")

	// 4 s of 100 Hz data, 0.1 s batches: windows 0-3 commission, 4-7 follow.
	rng := rand.New(rand.NewPCG(11, 12))
	a := site.Assets[0]
	pctx, pcancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer pcancel()
	publish := func(from, to int) { publishPipe(pctx, t, h, a, rng, from, to) }
	readAll := func() []Estimate { return readEstimates(h, a.Name) }
	publish(0, 4)
	var ests []Estimate
	waitFor(t, 30*time.Second, "8 estimates", func() bool { ests = readAll(); return len(ests) >= 8 })
	if len(ests) != 8 {
		t.Fatalf("%d estimates, want 8", len(ests))
	}
	for i, e := range ests {
		if len(e.Conductors) != 1 || e.Conductors[0].Name != "pipe" {
			t.Fatalf("window %d: %+v", i, e.Conductors)
		}
		c := e.Conductors[0]
		// The line's direction sign is the fit's choice; compare magnitudes.
		if math.Abs(math.Abs(c.Current)-pipeAmps) > 5*c.CurrentSigma+0.01*pipeAmps {
			t.Errorf("window %d: %.4f +- %.2g A, truth %v A", i, c.Current, c.CurrentSigma, pipeAmps)
		}
		// The held geometry's error is in the sigma, and said apart.
		if !(c.CurrentSigmaGeometry > 0 && c.CurrentSigmaGeometry < c.CurrentSigma) {
			t.Errorf("window %d: geometry sigma %.2g A of %.2g A", i, c.CurrentSigmaGeometry, c.CurrentSigma)
		}
	}
	// The stored geometry is the pipe: depth and direction.
	kv, _ := h.js.KeyValue(context.Background(), broker.BucketState)
	entry, err := kv.Get(context.Background(), geometryKey(a.Name))
	if err != nil {
		t.Fatal(err)
	}
	var g storedGeometry
	json.Unmarshal(entry.Value(), &g)
	if len(g.Conductors) != 1 || g.Uncertainty == nil || len(g.Uncertainty.Covariance) != 4 {
		t.Fatalf("stored geometry %+v", g)
	}
	c := g.Conductors[0]
	u := c.Direction
	n := math.Sqrt(u[0]*u[0] + u[1]*u[1] + u[2]*u[2])
	if cos := math.Abs(u[0]*pipeLine.Dir[0]+u[1]*pipeLine.Dir[1]+u[2]*pipeLine.Dir[2]) / n; cos < math.Cos(2*math.Pi/180) {
		t.Errorf("commissioned direction %v is more than 2 degrees off %v", u, pipeLine.Dir)
	}
	// Distance from the true line's point to the fitted line, m.
	d := [3]float64{pipeLine.Point[0] - c.Point[0], pipeLine.Point[1] - c.Point[1], pipeLine.Point[2] - c.Point[2]}
	along := (d[0]*u[0] + d[1]*u[1] + d[2]*u[2]) / n
	perp := math.Sqrt(d[0]*d[0] + d[1]*d[1] + d[2]*d[2] - along*along)
	if perp > 0.05 {
		t.Errorf("commissioned line passes %.3f m from the pipe", perp)
	}

	// Recommissioning forgets the geometry; it needs the token.
	req, _ := http.NewRequest("POST", "http://"+svc.HTTPAddr()+"/api/v1/assets/kestrel-moor/recommission", nil)
	req.Header.Set("Authorization", "Bearer kestrel-moor-token")
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != 200 {
		t.Fatalf("recommission: %d", resp.StatusCode)
	}
	if _, err := kv.Get(context.Background(), geometryKey(a.Name)); err != jetstream.ErrKeyNotFound {
		t.Errorf("geometry still stored after recommission: %v", err)
	}
	// The holder notices at its next window and commissions again from new data.
	publish(4, 7)
	waitFor(t, 30*time.Second, "a new geometry", func() bool {
		e, err := kv.Get(context.Background(), geometryKey(a.Name))
		if err != nil {
			return false
		}
		json.Unmarshal(e.Value(), &g)
		return true
	})
	if g.From < t0+4 {
		t.Errorf("recommissioned from %v, want data after %v", g.From-t0, 4)
	}
	waitFor(t, 30*time.Second, "14 estimates", func() bool { return len(readAll()) >= 14 })
	if n := len(readAll()); n != 14 {
		t.Errorf("%d estimates, want 14 (one per window)", n)
	}
	if err := stop(); err != nil {
		t.Fatal(err)
	}
}

// publishPipe publishes the pipe's field (pipeLine carrying pipeAmps, by
// Biot-Savart, on pipeEarth, with 0.3 nT of noise from rng) at asset a's
// sensors, 100 Hz in 0.1 s batches, from second from to second to of t0.
func publishPipe(ctx context.Context, t *testing.T, h *harness, a AssetConfig, rng *rand.Rand, from, to int) {
	t.Helper()
	publishPipeAmps(ctx, t, h, a, rng, from, to, pipeAmps)
}

// readEstimates returns every estimate stored for the asset, in order.
func readEstimates(h *harness, asset string) []Estimate {
	var out []Estimate
	scan(context.Background(), h.js, broker.StreamEstimates, broker.EstimateSubject(asset), func(d []byte) bool {
		var e Estimate
		json.Unmarshal(d, &e)
		out = append(out, e)
		return true
	})
	return out
}
