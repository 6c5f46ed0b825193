package live

import (
	"math"
	"sort"
)

// A sensor is stuck when an axis repeats one value through a window (a
// frozen channel, an output pinned at its rail). But a healthy sensor
// whose noise is below its logger's resolution repeats one value too
// wherever its field is steady: a fluxgate with 0.03 nT of noise written
// at 0.1 nT leaves an axis along a conductor, which sees no change of its
// field, on one value for a whole 2 s window, and such sensors were left
// out as stuck with 42 alarms a minute. So an axis repeating one value is
// stuck only when the sensor's other axes show that it should not: their
// noise, against the readings' resolution, makes so long a run on one
// value improbable (stuckChance). A sensor repeating one reading on every
// axis gives no noise to judge by: it is stuck when it repeats that same
// reading through two windows running.

// stuckChance is the chance below which a run of one value on an axis is
// taken for a stuck channel rather than a steady field read at a coarse
// resolution.
const stuckChance = 1e-6

// stuckAxis returns the first axis of sensor name's window s that is
// stuck, and the value it repeats, or "" when none is. It keeps, per
// sensor, the reading repeated on every axis through the window (if any)
// for the next window's call.
func (p *processor) stuckAxis(name string, s *series) (string, float64) {
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	var flat [3]bool
	nflat := 0
	for k, col := range cols {
		flat[k] = true
		for _, v := range col[1:] {
			if v != col[0] {
				flat[k] = false
				break
			}
		}
		if flat[k] {
			nflat++
		}
	}
	axes := [3]string{"x", "y", "z"}
	if nflat == 3 {
		v := [3]float64{s.Bx[0], s.By[0], s.Bz[0]}
		was, ok := p.frozen[name]
		if p.frozen == nil {
			p.frozen = map[string][3]float64{}
		}
		p.frozen[name] = v
		if ok && was == v {
			return "x, y and z", v[0]
		}
		return "", 0
	}
	delete(p.frozen, name)
	if nflat == 0 {
		return "", 0
	}
	// The readings' resolution: the smallest step between two values of
	// the sensor in the window.
	res := math.Inf(1)
	for _, col := range cols {
		u := append([]float64(nil), col...)
		sort.Float64s(u)
		for i := 1; i < len(u); i++ {
			if d := u[i] - u[i-1]; d > 0 && d < res {
				res = d
			}
		}
	}
	// The noise of one reading on the varying axes, the least of them,
	// from the squares of successive differences, less those beyond five
	// times the larger of a resolution step and their robust spread (a
	// change of the field, not noise), and less the rounding's share
	// (Sheppard's correction: a resolution step res adds res^2/12 to each
	// reading's variance).
	noise := math.Inf(1)
	for k, col := range cols {
		if flat[k] {
			continue
		}
		d := make([]float64, 0, len(col)-1)
		for i := 1; i < len(col); i++ {
			d = append(d, col[i]-col[i-1])
		}
		cut := 5 * math.Max(res, 1.4826*mad(d))
		var ss float64
		m := 0
		for _, x := range d {
			if math.Abs(x) <= cut {
				ss += x * x
				m++
			}
		}
		if m == 0 {
			continue
		}
		v := ss/float64(2*m) - res*res/12
		noise = math.Min(noise, math.Sqrt(math.Max(v, 0)))
	}
	if !(noise > 0) || math.IsInf(noise, 1) {
		return "", 0
	}
	// Gaussian noise of sigma puts a reading in one resolution step with
	// a chance of at most res / (sigma sqrt(2 pi)); n readings in the
	// same one, at most that to the power n - 1.
	per := res / (noise * math.Sqrt(2*math.Pi))
	if per >= 1 || math.Pow(per, float64(len(s.Bx)-1)) >= stuckChance {
		return "", 0
	}
	for k := range cols {
		if flat[k] {
			return axes[k], cols[k][0]
		}
	}
	return "", 0
}
