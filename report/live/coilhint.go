package live

import (
	"fmt"
	"math"
	"math/cmplx"
)

// An induction coil's voltage follows Faraday's law, V = -N A mu dB/dt:
// for a field phasor B at angular frequency w its phasor is
// V = -i w N A mu B, the field's turned by 90 degrees and scaled by
// w N A mu (0.045 mV per nT for 144 m^2 at 50 Hz). serve reads every
// sensor's readings as a magnetometer's, in nT: a coil among the
// sensors reads as a sensor whose every axis is the field the others
// imply, times one complex factor of about 90 degrees and a size far
// from 1, and is left out as inconsistent. A sensor turned on its mount
// mixes its axes by a real rotation and keeps the phases; a clock a
// quarter cycle out turns the phase by 90 degrees but keeps the size.

// unitFielder is an Estimator that gives its conductors' fields per unit
// current at a point, nT per A ENU, in conductor order.
type unitFielder interface {
	unitFields(point [3]float64) [][3]float64
}

func (e *inverseEstimator) unitFields(point [3]float64) [][3]float64 {
	out := make([][3]float64, 0, len(e.sources))
	for _, s := range e.sources {
		dst := make([][3]float64, s.NumStrengths())
		s.Basis(point, dst)
		var f [3]float64
		if len(dst) > 0 {
			f = [3]float64{dst[0][0] * 1e9, dst[0][1] * 1e9, dst[0][2] * 1e9}
		}
		out = append(out, f)
	}
	return out
}

// coilLike compares an AC sensor's field phasor m (nT ENU as read) with
// the one the currents of out (solved without it) give at its position,
// p: the complex factor k that best takes p to m, k = sum conj(p) m /
// sum |p|^2, and how much of m it leaves unexplained. It reports k when
// k turns by 90 degrees within coilPhaseTolerance, its size is off 1 by
// over coilSizeFactor either way and k p explains m to within
// coilResidual of its size: a coil's voltages read as nT.
func (p *processor) coilLike(point [3]float64, m [3]complex128, out *SolveOutput) (complex128, bool) {
	uf, ok := p.est.(unitFielder)
	if !ok || out == nil || len(out.Phase) != len(out.Current) {
		return 0, false
	}
	per := uf.unitFields(point)
	if len(per) != len(out.Current) {
		return 0, false
	}
	var pred [3]complex128
	for c := range per {
		I := cmplx.Rect(out.Current[c], out.Phase[c]*math.Pi/180)
		for a := range 3 {
			pred[a] += complex(per[c][a], 0) * I
		}
	}
	var num complex128
	var pp, mm float64
	for a := range 3 {
		num += cmplx.Conj(pred[a]) * m[a]
		pp += real(pred[a])*real(pred[a]) + imag(pred[a])*imag(pred[a])
		mm += real(m[a])*real(m[a]) + imag(m[a])*imag(m[a])
	}
	if !(pp > 0) || !(mm > 0) {
		return 0, false
	}
	k := num / complex(pp, 0)
	var rr float64
	for a := range 3 {
		d := m[a] - k*pred[a]
		rr += real(d)*real(d) + imag(d)*imag(d)
	}
	turn := math.Abs(math.Abs(cmplx.Phase(k))*180/math.Pi - 90)
	size := cmplx.Abs(k)
	if turn <= coilPhaseTolerance && (size > coilSizeFactor || size < 1/coilSizeFactor) && rr <= coilResidual*coilResidual*mm {
		return k, true
	}
	return 0, false
}

const (
	// coilPhaseTolerance, degrees: how far from 90 degrees a coil's
	// factor may turn (a coil's own phase lag at its resonance, the
	// window's noise).
	coilPhaseTolerance = 20
	// coilSizeFactor: a factor within it of 1 is a magnetometer's (a clock
	// a quarter cycle out), not a coil's.
	coilSizeFactor = 3.0
	// coilResidual: the share of the sensor's phasor the factor must
	// explain (a tenth left over, by size).
	coilResidual = 0.1
)

// coilHint is the hint added to an inconsistent sensor's message when
// its readings look like a coil's voltages (coilLike, AC): of r's used
// sensor name, against the solve out without it; "" otherwise.
func (p *processor) coilHint(r *reduced, name string, out *SolveOutput) string {
	if p.asset.Mode != "ac" {
		return ""
	}
	var k complex128
	ok := false
	for j, i := range r.used {
		if p.asset.Sensors[i].Name == name && j < len(r.in.Points) && j < len(r.in.Phasors) {
			k, ok = p.coilLike(r.in.Points[j], r.in.Phasors[j], out)
			break
		}
	}
	if !ok {
		return ""
	}
	return fmt.Sprintf("; a coil's voltages? its readings are the field the other sensors imply turned by %.0f degrees and scaled by %.3g, as an induction coil's voltage is (Faraday's law: V = -N A μ dB/dt, 90 degrees from the field); serve reads every sensor as a magnetometer in nT and has no coil setting: convert the coil's voltages to nT before they are sent, or use a magnetometer", cmplx.Phase(k)*180/math.Pi, cmplx.Abs(k))
}
