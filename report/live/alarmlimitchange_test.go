package live

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// A held over-current whose limit changes while it holds (a restart, or
// a takeover by a worker whose site file gives another max_current) is
// ended by a record that says the limit changed and gives the new
// threshold, not by a plain "has cleared" with the old threshold beside a
// value four times it (rv24d t4: imbalance 20 A cleared with threshold 5
// once the limit in force was 50). Before, the record read "the
// over-current condition of go has cleared", threshold 120, value 131.
// When the value falls under both limits the clearing is real and says
// the limit also changed. Simulated truth: synthWindow's currents.
func TestClearedByLimitChangeSaysSo(t *testing.T) {
	for _, c := range []struct {
		name      string
		last      complex128
		wantLead  string
		wantWords string
	}{
		{"still past the former limit", 131, "is no longer held", "the limit changed from 120 to 200: no longer judged a condition"},
		{"under both limits", 100, "has cleared", "the limit also changed from 120 to 200"},
	} {
		t.Run(c.name, func(t *testing.T) {
			site := harrowFen(t)
			a := site.Asset("fenwick-lane")
			a.Alarms = AlarmConfig{MaxChi2: 25, MaxCurrent: 120}
			rng := rand.New(rand.NewPCG(16, 9))
			p := solvingProcessor(t, a, []string{"go", "return"})
			var got []Alarm
			for k, i := range []complex128{100, 130, 131, c.last} {
				if k == 3 {
					a.Alarms.MaxCurrent = 200 // the settings in force now
				}
				w := synthWindow(a, []complex128{i, -i}, [3]float64{}, 0.5*float64(k), 1000, 500, 2, rng)
				w.Index = int64(k)
				e, al := p.solve(w, p.reduce(w))
				got = append(got, p.latch(w, e, al)...)
			}
			var cleared []Alarm
			for _, al := range got {
				if al.Kind == AlarmOverCurrent && al.Subject == "go" && al.Cleared {
					cleared = append(cleared, al)
				}
			}
			if len(cleared) != 1 {
				t.Fatalf("cleared over-current of go: %+v, want one in window 3", cleared)
			}
			cl := cleared[0]
			if cl.Threshold != 200 || cl.FormerThreshold != 120 || math.Abs(cl.Value-real(c.last)) > 1 {
				t.Errorf("cleared record threshold %v former %v value %v; want threshold 200 (the limit now), former 120, value about %v", cl.Threshold, cl.FormerThreshold, cl.Value, real(c.last))
			}
			if !strings.Contains(cl.Message, c.wantLead) || !strings.Contains(cl.Message, c.wantWords) || !strings.Contains(cl.Message, "max_current") {
				t.Errorf("cleared message %q; want %q and %q, naming max_current", cl.Message, c.wantLead, c.wantWords)
			}
		})
	}
}
