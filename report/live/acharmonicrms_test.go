package live

import (
	"encoding/csv"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
)

// TestACOverCurrentCountsHarmonics: an AC conductor's total RMS current
// counts its harmonics, and the over-current alarm judges it, since a
// cable's heating, and so its rating, goes with the total RMS (IEC 60287
// derates cables for harmonic currents; from memory). Simulated truth
// (synthACWindowVarying: harrow-fen's fenwick-lane pair by Biot-Savart,
// 249.7 A of 50 Hz fundamental in the go and return, a third harmonic of
// 35 % of it as rectifier and LED-driver loads draw, 2 nT noise, 500 Hz,
// 1 s windows), max_current 260 A: the total RMS is 249.7 sqrt(1 + 0.35^2)
// = 264.5 A (Parseval: the RMS of a sum of sinusoids of different
// frequencies is the root sum of their squares), and every window must
// raise over-current for both cores at that value, the total and the
// third harmonic (87.4 A) within 5 of their sigmas of the truth, the
// second and fourth within 5 sigma of 0. The fundamental's RMS alone
// (249.7 A) was judged, and nothing was raised. With a 10 % third
// harmonic (total 251.0 A) nothing may be raised.
func TestACOverCurrentCountsHarmonics(t *testing.T) {
	for _, h3 := range []float64{0.35, 0.10} {
		a, p := fenwickProcessor(t)
		a.Alarms.MaxCurrent, a.Alarms.Step, a.Alarms.MaxImbalance = 260, 0, 0
		const fund = 249.7
		truth := []complex128{cmplx.Rect(fund, 20*math.Pi/180), cmplx.Rect(fund, 200*math.Pi/180)}
		cur := func(float64) []complex128 { return truth }
		total := fund * math.Sqrt(1+h3*h3)
		rng := rand.New(rand.NewPCG(uint64(h3*100), 4))
		for win := range 6 {
			t0 := 1796104800 + float64(win)
			w := synthACWindowVarying(a, cur, a.Frequency, h3, 0, t0, 500, 500, a.Noise, rng)
			e, alarms := p.solve(w, p.reduce(w))
			over := 0
			for _, al := range alarms {
				if al.Kind == AlarmOverCurrent {
					over++
					if math.Abs(al.Value-total) > 0.5 || !strings.Contains(al.Message, "harmonics") {
						t.Errorf("h3 %v window %d: over-current %v: %s, want %.4g A with its harmonics", h3, win, al.Value, al.Message, total)
					}
				}
			}
			if want := map[bool]int{true: 2, false: 0}[total > 260]; over != want {
				t.Errorf("h3 %v window %d: %d over-current alarms, want %d (total RMS %.4g A, limit 260 A)", h3, win, over, want, total)
			}
			for _, c := range e.Conductors {
				if c.CurrentTotal == nil || c.CurrentTotalSigma == nil {
					t.Fatalf("h3 %v window %d, %s: no total RMS", h3, win, c.Name)
				}
				if z := (*c.CurrentTotal - total) / *c.CurrentTotalSigma; !(math.Abs(z) < 5) {
					t.Errorf("h3 %v window %d, %s: total %.4f +- %.2g A, truth %.4f", h3, win, c.Name, *c.CurrentTotal, *c.CurrentTotalSigma, total)
				}
				if len(c.Harmonics) != 3 {
					t.Fatalf("h3 %v window %d, %s: harmonics %+v, want orders 2 to 4", h3, win, c.Name, c.Harmonics)
				}
				for _, hc := range c.Harmonics {
					want := 0.0
					if hc.Order == 3 {
						want = h3 * fund
					}
					if !(hc.CurrentSigma > 0) || math.Abs(hc.Current-want) > 5*hc.CurrentSigma+1e-9 {
						t.Errorf("h3 %v window %d, %s: harmonic %d %.4f +- %.2g A, truth %.4g", h3, win, c.Name, hc.Order, hc.Current, hc.CurrentSigma, want)
					}
				}
			}
		}
	}
}

// TestHistoryCSVTotalRMSAndHarmonics: the CSV history carries an AC
// conductor's total RMS current, its sigma and its harmonics after the
// columns it always had (which keep their places), empty for DC. The
// estimates are invented fixtures; what is checked is the project's own
// format (README), no outside value.
func TestHistoryCSVTotalRMSAndHarmonics(t *testing.T) {
	tot, ts := 264.5, 0.004
	ests := []Estimate{
		{Asset: "a", Window: 7, Start: 70, End: 80, Mode: "ac", Frequency: 50,
			Conductors: []ConductorEstimate{{Name: "go", Current: 249.7, CurrentSigma: 0.001, CurrentTotal: &tot, CurrentTotalSigma: &ts,
				Harmonics: []HarmonicCurrent{{Order: 2, Current: 0.01, CurrentSigma: 0.002}, {Order: 3, Current: 87.4, CurrentSigma: 0.002}}}},
			Quality: "good", Sensors: 5},
		{Asset: "a", Window: 8, Start: 80, End: 90, Mode: "dc",
			Conductors: []ConductorEstimate{{Name: "go", Current: 100, CurrentSigma: 0.01}}, Quality: "good", Sensors: 5},
	}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, ests)
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil || len(rows) != 3 {
		t.Fatalf("rows %d, err %v", len(rows), err)
	}
	col := func(name string) int {
		i := slices.Index(rows[0], name)
		if i < 0 {
			t.Fatalf("no column %s in %v", name, rows[0])
		}
		return i
	}
	if col("frequency_sigma_hz") > col("current_total_a") {
		t.Errorf("the new columns come before frequency_sigma_hz: %v", rows[0])
	}
	for _, c := range []struct {
		row       int
		name, val string
	}{{1, "current_total_a", "264.5"}, {1, "current_total_sigma_a", "0.004"}, {1, "harmonics", "2: 0.01 ± 0.002; 3: 87.4 ± 0.002"},
		{2, "current_total_a", ""}, {2, "harmonics", ""}} {
		if got := rows[c.row][col(c.name)]; got != c.val {
			t.Errorf("row %d %s = %q, want %q", c.row, c.name, got, c.val)
		}
	}
}
