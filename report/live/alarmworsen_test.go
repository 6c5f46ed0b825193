package live

import (
	"io"
	"math"
	"math/rand/v2"
	"net/http"
	"strings"
	"testing"
	"time"
)

// A held imbalance that grows is raised again, marked worsened, when it
// reaches WorsenFactor (1.5) times the value last alarmed, and the
// estimates carry its current value in ongoing. Simulated truth:
// synthWindow's currents, go 200 A and return -180, -180, -135 A
// (imbalance 20, 20, 65 A: 65 >= 1.5 x 20), then -190 A (10 A, still
// over the 5 A threshold, not grown), then -200 A (cleared).
func TestGrowingImbalanceRaisedAgain(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Alarms = AlarmConfig{MaxChi2: 25, MaxImbalance: 5, Balance: []string{"go", "return"}}
	rng := rand.New(rand.NewPCG(16, 15))
	p := solvingProcessor(t, a, []string{"go", "return"})
	returns := []complex128{-200, -180, -180, -135, -135, -190, -200}
	var got []Alarm
	var ests []*Estimate
	for k, r := range returns {
		w := synthWindow(a, []complex128{200, r}, [3]float64{}, 0.5*float64(k), 1000, 500, 2, rng)
		w.Index = int64(k)
		e, al := p.solve(w, p.reduce(w))
		got = append(got, p.latch(w, e, al)...)
		ests = append(ests, e)
	}
	var imb []Alarm
	for _, al := range got {
		if al.Kind == AlarmImbalance {
			imb = append(imb, al)
		}
	}
	if len(imb) != 3 {
		t.Fatalf("imbalance alarms %+v; want the onset (window 1), a worsening (window 3) and a clearing (window 6)", imb)
	}
	if imb[0].Window != 1 || imb[0].Worsened || imb[0].Cleared || math.Abs(imb[0].Value-20) > 0.5 {
		t.Errorf("onset %+v, want window 1, about 20 A", imb[0])
	}
	if w := imb[1]; w.Window != 3 || !w.Worsened || w.Cleared || math.Abs(w.Value-65) > 0.5 || math.Abs(w.Previous-20) > 0.5 || w.Since != 0.5 {
		t.Errorf("worsening %+v, want window 3, about 65 A, previous about 20 A, since 0.5 s", w)
	}
	if c := imb[2]; c.Window != 6 || !c.Cleared || math.Abs(c.Value) > 0.5 || math.Abs(c.Peak-65) > 0.5 || c.Threshold != 5 || c.Windows != 5 {
		t.Errorf("clearing %+v, want window 6, value about 0 A (this window's), peak about 65 A, threshold 5, 5 windows", c)
	}
	// Ongoing carries this window's value: 65 A in window 4, 10 A in 5.
	for k, want := range map[int]float64{2: 20, 4: 65, 5: 10} {
		var v float64 = -1
		for _, o := range ests[k].Ongoing {
			if o.Kind == AlarmImbalance {
				v = o.Value
			}
		}
		if math.Abs(v-want) > 0.5 {
			t.Errorf("window %d: ongoing imbalance value %v, want about %v", k, v, want)
		}
	}
}

// Through the service: sensor s2 silent in windows 2 and 3 (from 1 s to
// 2 s) is alarmed once and cleared in window 4; uc_alarms_total counts
// the onset, not the clearing, and the cleared record keeps the kind's
// threshold. Simulated truth: the harness's data with s2 left out.
func TestClearedAlarmNotCounted(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publishSensors([]int{0, 1, 2}, 0, 1)
	h.publishSensors([]int{0, 1}, 1, 1)
	h.publishSensors([]int{0, 1, 2}, 2, 1.5)
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	as := h.storedAlarms(t, AlarmSilent)
	var onset, cleared int
	for _, al := range as {
		if al.Subject != "s2" {
			continue
		}
		if al.Cleared {
			cleared++
		} else {
			onset++
		}
	}
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	r.stop(t)
	if onset != 1 || cleared != 1 {
		t.Fatalf("silent alarms of s2 %+v; want one onset and one cleared", as)
	}
	if want := `uc_alarms_total{asset="fenwick-lane",kind="silent"} 1`; !strings.Contains(string(body), want) {
		t.Errorf("metrics lack %s (the clearing counted?):\n%s", want, grepLines(string(body), "uc_alarms_total"))
	}
}

func grepLines(s, sub string) string {
	var out []string
	for _, l := range strings.Split(s, "\n") {
		if strings.Contains(l, sub) {
			out = append(out, l)
		}
	}
	return strings.Join(out, "\n")
}
