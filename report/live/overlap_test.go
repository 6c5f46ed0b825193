package live

import (
	"fmt"
	"io"
	"math"
	"net/http"
	"strings"
	"testing"
	"time"
)

// A batch that straddles its sensor's last sample (data sent again with
// other batch edges: a gateway resending its buffer after a reconnect, a
// replay run again with another --batch) was refused whole as out of
// order, and its new samples with it. The repeated samples are dropped and
// the rest filed; a batch with nothing new is still out of order.
func TestAssemblerKeepsNewSamplesOfOverlappingBatch(t *testing.T) {
	const start = 1764650000.0
	a := newAssembler(time.Second, 0, 1)
	now := time.Unix(0, 0)
	// mkBatch's bz is its sample number from start: a repeated sample has
	// the value it had the first time.
	if res, _ := a.add(0, 1, mkBatch(start, 100, 60, 0), now); res != added {
		t.Fatalf("first batch: %v", res)
	}
	res, dropped := a.add(0, 2, mkBatch(start+0.30, 100, 100, 30), now)
	if res != added || dropped != 0 || a.overlap != 30 {
		t.Fatalf("overlapping batch: %v, %d late, %d repeated; want added, 0 late, 30 repeated", res, dropped, a.overlap)
	}
	if res, _ := a.add(0, 3, mkBatch(start+0.5, 100, 20, 50), now); res != outOfOrder || a.overlap != 0 {
		t.Fatalf("batch with nothing new: %v (%d repeated), want outOfOrder", res, a.overlap)
	}
	a.add(0, 4, mkBatch(start+1.3, 100, 80, 130), now)
	ws := a.ready(now, 0)
	if len(ws) != 2 {
		t.Fatalf("closed %d windows, want 2", len(ws))
	}
	for _, w := range ws {
		s := w.Sensors[0]
		if s.len() != 100 {
			t.Errorf("window %d holds %d samples, want the 100 of its second", w.Index, s.len())
		}
		for i := range s.T {
			if i > 0 && !(s.T[i] > s.T[i-1]) {
				t.Fatalf("window %d: time %v after %v", w.Index, s.T[i], s.T[i-1])
			}
			if k := math.Round((s.T[i] - start) * 100); s.Bz[i] != k {
				t.Fatalf("window %d: sample %v has bz %v, want %v", w.Index, s.T[i], s.Bz[i], k)
			}
		}
	}
}

// Through the service: a second publisher sends the asset's data again
// from half a second back with other batch edges. Every window keeps all
// its samples, and the repeated ones are counted in
// uc_overlap_samples_total.
func TestServiceKeepsNewSamplesOfOverlappingBatches(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 1)    // 0.00-0.99 s in 0.1 s batches
	h.publish(0.55, 1) // 0.55-1.54 s: four batches per sensor repeat, one straddles 0.99
	waitFor(t, 30*time.Second, "3 estimates", func() bool { return len(h.estimates()) >= 3 })
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	r.stop(t)
	ests := h.estimates()
	checkExactlyOnce(t, ests, 3)
	for _, e := range ests {
		if e.Samples != 150 || e.Quality != "good" {
			t.Errorf("window %d: %d samples, quality %q (missing %v); want 150 (three sensors at 100 Hz for 0.5 s), good",
				e.Window, e.Samples, e.Quality, e.Missing)
		}
	}
	// Three sensors, each repeating 0.95-0.99 s in its straddling batch.
	if want := fmt.Sprintf(`uc_overlap_samples_total{asset="fenwick-lane"} %d`, 3*5); !strings.Contains(string(body), want) {
		t.Errorf("metrics lack %s", want)
	}
}
