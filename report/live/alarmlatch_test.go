package live

import (
	"math"
	"math/rand/v2"
	"net/http"
	"strconv"
	"strings"
	"testing"
	"time"
)

// A condition that lasts (a conductor over max_current for several
// windows) is alarmed once, at its onset, and once more, marked cleared,
// in the first window without it; the windows in between list it as
// ongoing with its count (ISA-18.2 / EEMUA 191 practice, from memory: an
// alarm per onset, so that a flood cannot bury a new one). Simulated
// truth: the harness's currents are 1001 + 10 k A in window k, and
// max_current is 1035 A, so windows 4 to 7 are over it (across a restart
// of serve after window 5).
func TestPersistentOverCurrentAlarmedOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, testSiteText)
	r := h.start(site, "w1")
	h.publish(0, 3) // windows 0..5
	waitFor(t, 30*time.Second, "6 estimates", func() bool { return len(h.estimates()) >= 6 })
	// serve restarted in the middle of the condition: the checkpoint
	// carries it, so it is neither raised again nor counted afresh.
	r.stop(t)
	r = h.start(site, "w2")
	h.publish(3, 1) // windows 6, 7
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	// Over-current stays while the current is above the limit: the test
	// publishes no window under it after 7, so nothing is cleared.
	ests := h.estimates()
	as := h.storedAlarms(t, AlarmOverCurrent)
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	if len(as) != 1 || as[0].Window != k0+4 || as[0].Cleared {
		t.Fatalf("over-current alarms %+v; want one, raised in window %d (the first over 1035 A)", as, k0+4)
	}
	for _, e := range ests {
		k := e.Window - k0
		var n int
		for _, o := range e.Ongoing {
			if o.Kind == AlarmOverCurrent && o.Subject == "go" {
				n = o.Windows
			}
		}
		want := 0
		if k >= 4 {
			want = int(k - 3)
		}
		if n != want {
			t.Errorf("window %d: ongoing over-current counted %d windows, want %d", k, n, want)
		}
	}

	// The listings say when their limit cut them: history of 8 windows
	// asked for 3 gives 3 and points at the 4th.
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/api/v1/assets/fenwick-lane/history?limit=3&format=csv")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	next, _ := strconv.ParseFloat(resp.Header.Get(HeaderNextFrom), 64)
	if resp.Header.Get(HeaderMore) != "true" || next != float64(k0+3)*0.5 {
		t.Errorf("history cut at 3 of 8: %s=%q %s=%q, want true and %v", HeaderMore, resp.Header.Get(HeaderMore), HeaderNextFrom, resp.Header.Get(HeaderNextFrom), float64(k0+3)*0.5)
	}
	resp, err = http.Get("http://" + r.svc.HTTPAddr() + "/api/v1/assets/fenwick-lane/history?limit=8")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.Header.Get(HeaderMore) != "" || resp.Header.Get(HeaderNextFrom) != "" {
		t.Errorf("history of all 8 windows marked as cut: %v", resp.Header)
	}
	r.stop(t)
}

// The processor side of the latch: four windows over max_current, then
// one under it, give one alarm at the onset and one marked cleared, with
// the count of windows it held, the window's own value and the peak. Simulated truth: synthWindow's currents.
func TestConditionAlarmClearedWhenItEnds(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Alarms = AlarmConfig{MaxChi2: 25, MaxCurrent: 120}
	rng := rand.New(rand.NewPCG(16, 9))
	p := solvingProcessor(t, a, []string{"go", "return"})
	var got []Alarm
	for k, i := range []complex128{100, 130, 131, 132, 133, 100} {
		w := synthWindow(a, []complex128{i, -i}, [3]float64{}, 0.5*float64(k), 1000, 500, 2, rng)
		w.Index = int64(k)
		e, al := p.solve(w, p.reduce(w))
		got = append(got, p.latch(w, e, al)...)
	}
	var raised, cleared []Alarm
	for _, al := range got {
		if al.Kind == AlarmOverCurrent && al.Subject == "go" {
			if al.Cleared {
				cleared = append(cleared, al)
			} else {
				raised = append(raised, al)
			}
		}
	}
	if len(raised) != 1 || raised[0].Window != 1 {
		t.Errorf("over-current of go raised %+v, want once in window 1", raised)
	}
	if len(cleared) != 1 || cleared[0].Window != 5 || cleared[0].Windows != 4 || cleared[0].Since != 0.5 ||
		math.Abs(cleared[0].Value-100) > 1 || math.Abs(cleared[0].Peak-133) > 1 || cleared[0].Threshold != 120 {
		t.Errorf("over-current of go cleared %+v, want once in window 5, after 4 windows since 0.5 s, value about 100 A (this window's), peak about 133 A, threshold 120 A", cleared)
	}
	if len(cleared) == 1 && !strings.Contains(cleared[0].Message, "cleared") {
		t.Errorf("cleared message %q", cleared[0].Message)
	}
}
