package live

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// AlarmInconsistent: a sensor whose reading the other sensors' readings
// contradict (a sensor knocked round on its mount, moved, or whose offset
// changed): leaving it out brings the window's fit to the noise. Its
// subject is the sensor; the window is solved without it.
const AlarmInconsistent = "inconsistent"

// scatterSamples is the fewest samples a sensor needs in a window for
// the scatter of its samples to stand for the noise of its window mean
// (reduced.scatter).
const scatterSamples = 10

// sampleScatter is the one-sigma of the mean of the columns' samples
// from their own scatter, sqrt(mean over axes of v_k) with v_k = s_k^2 / n,
// s_k^2 the unbiased sample variance of axis k; 0 when there are fewer
// than scatterSamples samples.
//
// v_k is floored by the rounding of readings logged at a resolution q
// (the smallest step between two values of the axis in the window): the
// rounding adds q^2/12 to each reading's variance (Sheppard's
// correction), and when the noise is below q it does not average out:
// the mean of rounded readings is biased by up to (q/pi)
// exp(-2 pi^2 s^2/q^2) (the first term of the Fourier series of the
// rounding error, averaged over Gaussian noise of sigma s; from memory),
// whose mean square over the true value's place in the step is half its
// square. Without the floor, 492 of 500 readings of one value gave a
// mean that "missed" the model by five times its scatter.
func sampleScatter(cols ...[]float64) float64 {
	var v float64
	n := 0
	for _, c := range cols {
		n = len(c)
		if n < scatterSamples {
			return 0
		}
		m := mean(c)
		var s float64
		for _, x := range c {
			s += (x - m) * (x - m)
		}
		s /= float64(n - 1)
		vk := s / float64(n)
		if q := smallestStep(c); q > 0 && !math.IsInf(q, 1) {
			b := q / math.Pi * math.Exp(-2*math.Pi*math.Pi*s/(q*q))
			vk = math.Max(vk, q*q/12/float64(n)+b*b/2)
		}
		v += vk
	}
	if n == 0 {
		return 0
	}
	return math.Sqrt(v / float64(len(cols)))
}

// smallestStep is the smallest positive difference between two values of
// col (+Inf when all are equal).
func smallestStep(col []float64) float64 {
	u := append([]float64(nil), col...)
	sort.Float64s(u)
	q := math.Inf(1)
	for i := 1; i < len(u); i++ {
		if d := u[i] - u[i-1]; d > 0 && d < q {
			q = d
		}
	}
	return q
}

// judged is a window's input with the sigmas its fit is judged by: the
// stated noise's (r.in) or, with noise = 0 (the sigmas taken from the fit's
// own residuals, which a model error enters as if it were noise), each
// sensor's scatter of its samples about their mean (DC) or about its sine
// fit (AC). ok is false when neither is known (noise = 0 and a sensor
// with too few samples, or none scattered).
func (p *processor) judged(r *reduced) (in *SolveInput, ok bool) {
	if p.asset.Noise > 0 {
		return &r.in, true
	}
	if len(r.scatter) != len(r.in.Points) || len(r.scatter) == 0 {
		return nil, false
	}
	for _, s := range r.scatter {
		if !(s > 0) {
			return nil, false
		}
	}
	c := r.in
	c.Sigmas = append([]float64(nil), r.scatter...)
	sorted := append([]float64(nil), r.scatter...)
	sort.Float64s(sorted)
	c.Sigma = sorted[len(sorted)/2]
	return &c, true
}

// reducedChi2 is the reduced chi-square of the estimator's fit to in, or
// NaN when it cannot be found.
func (p *processor) reducedChi2(in *SolveInput) float64 {
	out, err := p.est.Solve(in)
	if err != nil || out.DOF <= 0 || nonFiniteOutput(out) != "" {
		return math.NaN()
	}
	return out.Chi2 / float64(out.DOF)
}

// without is r without its k-th used sensor.
func (r *reduced) without(k int) *reduced {
	cut := func(n int) func(int) bool { return func(i int) bool { return i != k && i < n } }
	o := &reduced{missing: map[string]string{}, freq: r.freq, freqSigma: r.freqSigma, spikes: r.spikes, alarms: r.alarms, ref: r.ref, refSigma: r.refSigma}
	for _, hp := range r.harm {
		var kept [][3]complex128
		for i := range hp {
			if i != k {
				kept = append(kept, hp[i])
			}
		}
		o.harm = append(o.harm, kept)
	}
	for key, v := range r.missing {
		o.missing[key] = v
	}
	keep := cut(len(r.used))
	for i := range r.used {
		if !keep(i) {
			continue
		}
		o.used = append(o.used, r.used[i])
		if i < len(r.totals) {
			o.totals = append(o.totals, r.totals[i])
		}
		if i < len(r.scatter) {
			o.scatter = append(o.scatter, r.scatter[i])
		}
		if i < len(r.counts) {
			o.counts = append(o.counts, r.counts[i])
			o.samples += r.counts[i]
		}
	}
	o.in = r.in.without(k)
	if len(o.in.Sigmas) > 0 {
		sorted := append([]float64(nil), o.in.Sigmas...)
		sort.Float64s(sorted)
		o.in.Sigma = sorted[len(sorted)/2]
	}
	return o
}

// sensorShare is one sensor's share of a window's misfit: the fall of
// the judged chi-square when it is left out.
type sensorShare struct {
	k     int // index among the used sensors
	name  string
	fall  float64 // chi-square fall
	red   float64 // reduced chi-square of the rest
	valid bool
}

// shares returns every used sensor's share of the misfit of r (judged
// by judged), largest first, given the judged chi-square chi2 of all.
func (p *processor) shares(r *reduced, chi2 float64) []sensorShare {
	var out []sensorShare
	for k, i := range r.used {
		sub := r.without(k)
		jin, ok := p.judged(sub)
		if !ok {
			continue
		}
		o, err := p.est.Solve(jin)
		if err != nil || o.DOF <= 0 || nonFiniteOutput(o) != "" {
			continue
		}
		out = append(out, sensorShare{k: k, name: p.asset.Sensors[i].Name, fall: chi2 - o.Chi2, red: o.Chi2 / float64(o.DOF), valid: true})
	}
	sort.SliceStable(out, func(a, b int) bool { return out[a].fall > out[b].fall })
	return out
}

// dominantFall is the fraction of a window's chi-square that leaving one
// sensor out must remove for that sensor to be taken as the cause of the
// misfit rather than one of several sensors the model misses.
const dominantFall = 0.9

// isolate looks for the sensors whose readings the others contradict in
// a window whose fit misses the readings (judged reduced chi-square
// above max_chi2): leave-one-out, the sensor whose removal lowers the
// chi-square most is left out when that removes at least dominantFall of
// it, and again with the rest, up to a minority of the sensors, until the
// rest fit within max_chi2; that last step must be unique (one sensor
// only whose removal brings the fit within max_chi2), so that among
// sensors that fit as well either way none is blamed. It returns the
// window without them, their names, and for each its reading's departure
// from the rest's fit, and the judged reduced chi-square of the window
// with it (the sensors found before it left out); nil when no such set
// is found (the model misses the readings as a whole: an extended
// conductor, a wrong geometry).
func (p *processor) isolate(r *reduced) (*reduced, []string, []string, []float64) {
	max := p.asset.Alarms.MaxChi2
	cur := r
	var names, why []string
	var reds []float64
	for len(names) < (len(r.used)-1)/2 {
		jin, ok := p.judged(cur)
		if !ok {
			return nil, nil, nil, nil
		}
		o, err := p.est.Solve(jin)
		if err != nil || o.DOF <= 0 {
			return nil, nil, nil, nil
		}
		sh := p.shares(cur, o.Chi2)
		if len(sh) == 0 || sh[0].fall < dominantFall*o.Chi2 {
			return nil, nil, nil, nil
		}
		best := sh[0]
		names = append(names, best.name)
		reds = append(reds, o.Chi2/float64(o.DOF))
		why = append(why, fmt.Sprintf("leaving it out removes %.0f%% of the window's misfit (chi-square from %.3g to %.3g, reduced %.3g)", 100*math.Min(1, math.Max(0, best.fall/o.Chi2)), o.Chi2, o.Chi2-best.fall, best.red))
		next := cur.without(best.k)
		if best.red <= max {
			good := 0
			for _, s := range sh {
				if s.red <= max {
					good++
				}
			}
			if good != 1 {
				return nil, nil, nil, nil
			}
			return next, names, why, reds
		}
		cur = next
	}
	return nil, nil, nil, nil
}

// inconsistentDeadband records, for each sensor held inconsistent (see
// latch) that r still uses, the window's judged reduced chi-square jred
// as its level when the sensor would still be blamed but for max_chi2:
// jred over max_chi2 / WorsenFactor^2 and its leaving out removing
// dominantFall of the chi-square. latch then holds it rather than
// clearing it (the deadband: a sensor whose offset is near what
// max_chi2 lets through was left out in some windows and not in others,
// each change an alarm: 93 of 300 windows gave 65 onsets and 64
// clearings, measured with the Kestrel Moor layout and a 2.2 nT offset
// against 0.5 nT of noise).
func (p *processor) inconsistentDeadband(r *reduced, jred float64) {
	max := p.asset.Alarms.MaxChi2
	if !(jred > max/(WorsenFactor*WorsenFactor)) || len(p.active) == 0 {
		return
	}
	held := map[string]bool{}
	for _, st := range p.active {
		if st.Kind == AlarmInconsistent {
			held[st.Subject] = true
		}
	}
	if len(held) == 0 {
		return
	}
	jin, ok := p.judged(r)
	if !ok {
		return
	}
	o, err := p.est.Solve(jin)
	if err != nil || !(o.Chi2 > 0) {
		return
	}
	sh := p.shares(r, o.Chi2)
	if len(sh) > 0 && held[sh[0].name] && sh[0].fall >= dominantFall*o.Chi2 {
		p.setLevel(AlarmInconsistent, sh[0].name, jred)
	}
}

// worstSensors names the sensors with the largest shares of a window's
// misfit (at most three, each with its share in percent), for the
// degraded alarm's message; "" when none can be found.
func (p *processor) worstSensors(r *reduced) string {
	jin, ok := p.judged(r)
	if !ok {
		return ""
	}
	o, err := p.est.Solve(jin)
	if err != nil || !(o.Chi2 > 0) {
		return ""
	}
	var parts []string
	for _, s := range p.shares(r, o.Chi2) {
		if len(parts) == 3 {
			break
		}
		parts = append(parts, fmt.Sprintf("%s (by %.0f%%)", s.name, 100*math.Min(1, math.Max(0, s.fall/o.Chi2))))
	}
	return strings.Join(parts, ", ")
}
