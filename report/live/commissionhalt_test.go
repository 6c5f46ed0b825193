package live

import (
	"context"
	"errors"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// stopSiteText is a commissioned DC asset (three sensors, 0.5 s windows,
// 1 s of commissioning) whose pair is listed without points.
const stopSiteText = `
[service]
http = "127.0.0.1:0"
lease_ttl = "1s"
idle = "400ms"
[[asset]]
name = "fenwick-lane"
window = "500ms"
model = "commission"
commission = "1s"
  [[asset.sensor]]
  name = "s0"
  position = [-1, 0, 0.3]
  [[asset.sensor]]
  name = "s1"
  position = [0, 0, 0.3]
  [[asset.sensor]]
  name = "s2"
  position = [1, 0, 0.3]
  [[asset.conductor]]
  name = "go"
  [[asset.conductor]]
  name = "return"
`

// refusingCommissioner refuses every commissioning for want of points,
// as InverseCommissioner refuses an unresolved pair listed without them
// (TestCommissionUnresolvedPairWithoutPointsStops), and counts the calls.
type refusingCommissioner struct{ calls *atomic.Int32 }

func (c refusingCommissioner) Commission(*SolveInput, []ConductorConfig) ([]ConductorConfig, error) {
	c.calls.Add(1)
	return nil, &needsSiteError{errors.New("give each [[asset.conductor]] its point")}
}

// A commissioning that only the site file can mend stops the asset once:
// the worker keeps its lease without reading on (it is not taken again,
// by it or another worker, to fail the same way every lease round), the
// asset's endpoint says why, and serve drains cleanly.
func TestCommissionRefusalStopsOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	var calls atomic.Int32
	svc, stop := runStopSite(t, h, refusingCommissioner{&calls})
	defer stop()
	h.publish(0, 3)
	waitFor(t, 30*time.Second, "commissioning", func() bool { return calls.Load() > 0 })

	// Three lease renewals later (each round renews the lease of every
	// held asset, and takes up any asset not held) it was not taken again.
	kv := h.leases()
	e, err := kv.Get(context.Background(), "fenwick-lane")
	if err != nil {
		t.Fatal(err)
	}
	rev0 := e.Revision()
	waitFor(t, 30*time.Second, "three lease renewals", func() bool {
		e, err := kv.Get(context.Background(), "fenwick-lane")
		return err == nil && e.Revision() >= rev0+3
	})
	if n := calls.Load(); n != 1 {
		t.Errorf("commissioned %d times, want once", n)
	}
	ai := fenwickInfo(t, svc)
	if !strings.Contains(ai.Stopped, "its point") || ai.Worker != "wk" {
		t.Errorf("asset endpoint: stopped %q, worker %q; want the refusal, held by wk", ai.Stopped, ai.Worker)
	}
	stop()
}

// runStopSite runs the service on stopSiteText's site with commissioner c,
// ready; stop cancels it and reports an error from Run (calling it again
// does nothing).
func runStopSite(t *testing.T, h *harness, c Commissioner) (svc *Service, stop func()) {
	t.Helper()
	svc, err := New(Config{Site: testSite(t, stopSiteText), Conn: h.nc, Worker: "wk", NewEstimator: newMean, Commissioner: c})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- svc.Run(ctx) }()
	<-svc.Ready()
	var once sync.Once
	return svc, func() {
		once.Do(func() {
			cancel()
			if err := <-done; err != nil {
				t.Errorf("Run: %v", err)
			}
		})
	}
}

// fenwickInfo returns the fenwick-lane asset's endpoint document.
func fenwickInfo(t *testing.T, svc *Service) AssetInfo {
	t.Helper()
	ai, err := svc.assetInfo(context.Background(), svc.site.Asset("fenwick-lane"))
	if err != nil {
		t.Fatal(err)
	}
	return ai
}
