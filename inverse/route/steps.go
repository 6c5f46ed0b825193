package route

import (
	"fmt"
	"math"
	"sort"
)

// steps reports changes in current between successive usable stations
// that exceed their uncertainty once the smooth trend is removed.
func steps(ps []Placed, set *Settings) []Finding {
	var u []*Placed
	for i := range ps {
		if ps[i].usable() {
			u = append(u, &ps[i])
		}
	}
	m := len(u) - 1 // intervals
	if m < 1 {
		return nil
	}
	dI := make([]float64, m)
	dx := make([]float64, m)
	s := make([]float64, m)
	for j := 0; j < m; j++ {
		dI[j] = u[j+1].Current - u[j].Current
		dx[j] = u[j+1].Chainage - u[j].Chainage
		s[j] = math.Hypot(u[j].CurrentSigma, u[j+1].CurrentSigma)
	}
	k := set.stepK()
	w := set.trendWindow()
	// Find steps one at a time, largest first, leaving each one found out
	// of the trend of the others: a step must not pass for a trend.
	isStep := make([]bool, m)
	excess := make([]float64, m)
	total := make([]float64, m)
	for {
		best, bestZ := -1, k
		for j := 0; j < m; j++ {
			if isStep[j] || s[j] == 0 {
				continue // no uncertainty given: nothing can be called significant
			}
			g, gs := trend(dI, dx, s, isStep, j, w)
			excess[j] = dI[j] - g*dx[j]
			total[j] = math.Hypot(s[j], gs*dx[j])
			if z := math.Abs(excess[j]) / total[j]; z > bestZ {
				best, bestZ = j, z
			}
		}
		if best < 0 {
			break
		}
		isStep[best] = true
	}
	var out []Finding
	for j := 0; j < m; j++ {
		if !isStep[j] {
			continue
		}
		a, b := u[j], u[j+1]
		verb, why := "falls", "current leaving the conductor between them"
		if math.Abs(b.Current) > math.Abs(a.Current) {
			verb, why = "rises", "current joining the conductor (a bond, a tee or another source) between them"
		}
		f := Finding{
			Kind:     KindCurrentStep,
			Severity: SeverityWarning,
			From:     a.Chainage,
			To:       b.Chainage,
			Position: mid(a.Point, b.Point),
			Keys:     []string{a.Key, b.Key},
			Message: fmt.Sprintf("current %s by %.3g ± %.2g A between %s (chainage %.1f m) and %s (%.1f m): %s",
				verb, math.Abs(dI[j]), s[j], label(a), a.Chainage, label(b), b.Chainage, why),
			Values: []Value{
				{Name: "step", Value: dI[j], Sigma: s[j], Unit: "A"},
				{Name: "step beyond trend", Value: excess[j], Sigma: total[j], Unit: "A"},
				{Name: "current before", Value: a.Current, Sigma: a.CurrentSigma, Unit: "A"},
				{Name: "current after", Value: b.Current, Sigma: b.CurrentSigma, Unit: "A"},
			},
		}
		out = append(out, f)
	}
	return out
}

// trend returns the median gradient of up to w intervals on each side of
// interval j, leaving out intervals already found to be steps, and the
// standard deviation of that median. The two intervals
// that share a station with j are skipped, so that the trend is independent
// of dI[j] and a step in one interval does not leak into its neighbours'
// tests.
func trend(dI, dx, s []float64, skip []bool, j, w int) (g, sigma float64) {
	var gs []float64
	var v float64
	for k := j - 1 - w; k <= j+1+w; k++ {
		if k >= j-1 && k <= j+1 || k < 0 || k >= len(dI) || skip[k] || dx[k] <= 0 {
			continue
		}
		gs = append(gs, dI[k]/dx[k])
		v += (s[k] / dx[k]) * (s[k] / dx[k])
	}
	if len(gs) == 0 {
		return 0, 0
	}
	sort.Float64s(gs)
	n := len(gs)
	if n%2 == 1 {
		g = gs[n/2]
	} else {
		g = (gs[n/2-1] + gs[n/2]) / 2
	}
	// Variance of the median of n normal values: about (pi/2) sigma^2 / n
	// for large n, and less for small n, so this errs on the safe side.
	sigma = math.Sqrt(math.Pi / 2 * (v / float64(n)) / float64(n))
	return g, sigma
}

func mid(a, b [3]float64) [3]float64 {
	return [3]float64{(a[0] + b[0]) / 2, (a[1] + b[1]) / 2, (a[2] + b[2]) / 2}
}
