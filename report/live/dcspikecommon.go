package live

import (
	"math"
	"sort"

	"undercurrent/calibrate"
)

// A spike is one sensor's: a logger glitch or a bit error touches one
// sensor's readings at a time. A change of the current touches every
// sensor that sees the conductor at once: a switching transient of a
// traction return (800 A dipping to 200 A for 0.3 s), a cathodic-protection
// rectifier switched on or off, a fault surge. Judged sensor by sensor,
// such a change is a run of readings off each sensor's running median,
// and when it is shorter than half the filter's span (dcDespikeHalf) the
// filter takes it for spikes: it was cut from every sensor, and the window
// reported a current that never flowed (the level before the dip) with
// quality "good". So a reading the filter flags is left out only when it
// is its sensor's alone: when fewer than dcCommonMin of the window's
// despiked sensors flag a reading within one sample interval of it, it is
// a spike; otherwise it is the field and kept (and the window's change
// test, windowChange, says the window holds a change).

// dcCommonMin is the fewest sensors, and dcCommonFrac the least fraction
// of a window's despiked sensors, that must flag readings at the same
// time for them to be taken for a change of the field rather than spikes:
// two sensors glitching independently within one sample of each other is
// unlikely, and a change of current large enough to flag one sensor near
// the conductor flags most of an asset's sensors, which are placed to see
// it.
const (
	dcCommonMin  = 2
	dcCommonFrac = 0.5
)

// dcSpikeRows returns the readings of one sensor's DC window that depart
// from the running median of their neighbours by more than dcSpikeSigmas
// robust standard deviations (the Hampel filter, as
// calibrate.DespikeBaseColumns judges a base record), finite ones only,
// in order. A window of fewer than dcDespikeMin readings is not judged.
func dcSpikeRows(d *sensorData) ([]int, error) {
	if len(d.t) < dcDespikeMin {
		return nil, nil
	}
	flag, _, _, err := calibrate.FindSpikes([][]float64{d.bx, d.by, d.bz},
		&calibrate.DespikeSettings{Threshold: dcSpikeSigmas, HalfWidth: dcDespikeHalf, Median: true})
	if err != nil {
		return nil, err
	}
	var rows []int
	for i, f := range flag {
		if f && finite(d.bx[i]) && finite(d.by[i]) && finite(d.bz[i]) {
			rows = append(rows, i)
		}
	}
	return rows, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// despikeDCWindow leaves out of a DC window's sensors (use) the readings
// that are spikes: flagged by dcSpikeRows on their sensor and not, within
// one sample interval, on at least dcCommonMin and dcCommonFrac of the
// sensors judged. It returns the number left out per entry of use, and
// the first error of the filter with its entry (-1: none); a sensor whose
// filter failed is left as it was.
func despikeDCWindow(use []sensorData) ([]int, int, error) {
	rows := make([][]int, len(use))
	dt := make([]float64, len(use))
	judged := 0
	for k := range use {
		r, err := dcSpikeRows(&use[k])
		if err != nil {
			return nil, k, err
		}
		rows[k] = r
		if len(use[k].t) >= dcDespikeMin {
			judged++
		}
		dt[k] = medianInterval(use[k].t)
	}
	need := max(dcCommonMin, int(math.Ceil(dcCommonFrac*float64(judged))))
	times := make([][]float64, len(use))
	for k, r := range rows {
		for _, i := range r {
			times[k] = append(times[k], use[k].t[i])
		}
	}
	out := make([]int, len(use))
	for k := range use {
		if len(rows[k]) == 0 {
			continue
		}
		drop := make([]bool, len(use[k].t))
		nd := 0
		for c, i := range rows[k] {
			t := times[k][c]
			seen := 1
			for j := range use {
				if j == k || len(times[j]) == 0 {
					continue
				}
				if nearAny(times[j], t, math.Max(dt[k], dt[j])) {
					seen++
				}
			}
			if seen < need {
				drop[i] = true
				nd++
			}
		}
		if nd == 0 {
			continue
		}
		d := &use[k]
		n := len(d.t)
		t := make([]float64, 0, n-nd)
		bx, by, bz := make([]float64, 0, cap(t)), make([]float64, 0, cap(t)), make([]float64, 0, cap(t))
		for i := range n {
			if !drop[i] {
				t, bx, by, bz = append(t, d.t[i]), append(bx, d.bx[i]), append(by, d.by[i]), append(bz, d.bz[i])
			}
		}
		d.t, d.bx, d.by, d.bz = t, bx, by, bz
		out[k] = nd
	}
	return out, -1, nil
}

// nearAny says whether the sorted times ts hold one within tol of t.
func nearAny(ts []float64, t, tol float64) bool {
	i := sort.SearchFloat64s(ts, t)
	if i < len(ts) && ts[i]-t <= tol {
		return true
	}
	return i > 0 && t-ts[i-1] <= tol
}

// medianInterval is the median of the positive intervals between
// successive times (0 when there are none).
func medianInterval(t []float64) float64 {
	var d []float64
	for i := 1; i < len(t); i++ {
		if x := t[i] - t[i-1]; x > 0 {
			d = append(d, x)
		}
	}
	if len(d) == 0 {
		return 0
	}
	sort.Float64s(d)
	return d[len(d)/2]
}

// despikeDC despikes a DC window's usable sensors (despikeDCWindow),
// counting in r.spikes the readings left out per sensor, and returns the
// sensors still usable: one whose filter failed is left out with the
// error in r.missing. It keeps them in r.dc for the window's change test
// (windowChange).
func (p *processor) despikeDC(use []sensorData, r *reduced) []sensorData {
	for {
		cut, bad, err := despikeDCWindow(use)
		if err != nil {
			r.missing[p.asset.Sensors[use[bad].i].Name] = err.Error()
			use = append(use[:bad:bad], use[bad+1:]...)
			continue
		}
		for k, n := range cut {
			if n > 0 {
				if r.spikes == nil {
					r.spikes = map[string]int{}
				}
				r.spikes[p.asset.Sensors[use[k].i].Name] = n
			}
		}
		r.dc = use
		return use
	}
}
