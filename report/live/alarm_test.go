package live

import (
	"math/rand/v2"
	"testing"
)

// alarmFor returns the alarm of kind about subject, if raised.
func alarmFor(as []Alarm, kind, subject string) (Alarm, bool) {
	for _, a := range as {
		if a.Kind == kind && a.Subject == subject {
			return a, true
		}
	}
	return Alarm{}, false
}

func TestAlarms(t *testing.T) {
	cases := []struct {
		name  string
		setup func(a *AssetConfig)
		// currents of two consecutive windows (go, return)
		first, second []complex128
		edit          func(w *window)
		want          string
		subject       string
		quality       string
	}{
		{"silent sensor", nil, []complex128{100, -100}, []complex128{100, -100},
			func(w *window) { w.Sensors[4] = series{} }, AlarmSilent, "fl-n1", "partial"},
		{"step between windows", func(a *AssetConfig) { a.Alarms.Step = 20 }, []complex128{100, -100}, []complex128{150, -150},
			nil, AlarmStep, "go", "good"},
		{"over-current", func(a *AssetConfig) { a.Alarms.MaxCurrent = 120 }, []complex128{100, -100}, []complex128{130, -130},
			nil, AlarmOverCurrent, "go", "good"},
		// The file claims 0.05 nT of noise; the data carry 2 nT, so the
		// reduced chi-square is far above max_chi2.
		{"degraded fit", func(a *AssetConfig) { a.Noise = 0.05 }, []complex128{100, -100}, []complex128{100, -100},
			nil, AlarmDegraded, "", "degraded"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			site := harrowFen(t)
			a := site.Asset("fenwick-lane")
			a.Alarms = AlarmConfig{MaxChi2: 25}
			if tc.setup != nil {
				tc.setup(a)
			}
			rng := rand.New(rand.NewPCG(9, 9))
			p := solvingProcessor(t, a, []string{"go", "return"})
			w1 := synthWindow(a, tc.first, [3]float64{}, 0, 1000, 500, 2, rng)
			e1, al1 := p.solve(w1, p.reduce(w1))
			if tc.want != AlarmDegraded {
				if len(al1) != 0 || e1.Quality != "good" {
					t.Fatalf("first window: quality %s, alarms %+v", e1.Quality, al1)
				}
			}
			w2 := synthWindow(a, tc.second, [3]float64{}, 0.5, 1000, 500, 2, rng)
			if tc.edit != nil {
				tc.edit(w2)
			}
			e2, al2 := p.solve(w2, p.reduce(w2))
			got, ok := alarmFor(al2, tc.want, tc.subject)
			if !ok {
				t.Fatalf("no %s alarm about %q; got %+v", tc.want, tc.subject, al2)
			}
			if got.Message == "" || got.Asset != "fenwick-lane" || got.Start != 0.5 {
				t.Errorf("alarm %+v", got)
			}
			if e2.Quality != tc.quality {
				t.Errorf("quality %s, want %s", e2.Quality, tc.quality)
			}
		})
	}
}
