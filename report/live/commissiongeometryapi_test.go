package live

import (
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"net/http"
	"testing"
	"time"
)

// TestCommissionedGeometryPublished: the asset's endpoint publishes the geometry
// commissioning fitted, with sigmas from the commissioning fit's covariance. The
// pipe of commissionSite (simulated truth: 4 A, Biot-Savart) passes under the six
// sensors' centroid (0, 0) in plan at (0.225, -0.130) m, 1.9 m below their height
// of 0.5 m, at an azimuth of 30 degrees (direction (0.5, 0.866)); the published
// point, depth and azimuth must lie within 4 of their sigmas of the truth (and
// within 0.05 m, 2 degrees: the sigmas are not so wide as to pass anything), with
// every sigma positive, and the span the first 2 s of readings.
func TestCommissionedGeometryPublished(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, commissionSite)
	a := site.Assets[0]
	svc, stop := h.runService(t, site, "kestrel")
	defer stop()
	rng := rand.New(rand.NewPCG(31, 32))
	pctx, pcancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer pcancel()
	publishPipe(pctx, t, h, a, rng, 0, 3)
	var ai AssetInfo
	waitFor(t, 30*time.Second, "the geometry on the asset's endpoint", func() bool {
		resp, err := http.Get("http://" + svc.HTTPAddr() + "/api/v1/assets/kestrel-moor")
		if err != nil {
			return false
		}
		defer resp.Body.Close()
		ai = AssetInfo{}
		return json.NewDecoder(resp.Body).Decode(&ai) == nil && ai.Geometry != nil
	})
	g := ai.Geometry
	if len(g.Conductors) != 1 || g.Conductors[0].Name != "pipe" {
		t.Fatalf("geometry conductors %+v, want one named pipe", g.Conductors)
	}
	if g.From != t0 || !(g.To >= t0+2-1e-6) {
		t.Errorf("span %v to %v s, want 0 to at least 2", g.From-t0, g.To-t0)
	}
	c := g.Conductors[0]
	if c.PointSigmaM == nil || c.DepthSigmaM == nil || c.AzimuthSigmaDeg == nil {
		t.Fatalf("no sigmas: %+v", c)
	}
	check := func(what string, got, truth, sigma, tol float64) {
		if !(sigma > 0) || math.Abs(got-truth) > 4*sigma || math.Abs(got-truth) > tol {
			t.Errorf("%s %.4f ± %.2g, truth %.4f", what, got, sigma, truth)
		}
	}
	check("east", c.PointM[0], 0.225, c.PointSigmaM[0], 0.05)
	check("north", c.PointM[1], -0.15*math.Sqrt(3)/2, c.PointSigmaM[1], 0.05)
	check("depth", c.DepthM, 1.9, *c.DepthSigmaM, 0.05)
	check("azimuth", c.AzimuthDeg, 30, *c.AzimuthSigmaDeg, 2)
}
