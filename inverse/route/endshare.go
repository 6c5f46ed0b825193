package route

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// The stations before a conductor's end, in the step search.
//
// A traverse a little before a named end reads only the share f(d) of the
// line's field that the half-line gives there (endbefore.go), so its
// fitted current falls towards the end although no current leaves: a 10 A
// line 1 m deep ending 2 m past a traverse, under 8 m traverses 4 m apart
// (5 nT; testdata/scenarios/open/end-past-traverse.toml), read 7.8 A on
// that traverse and 9.4-9.5 A on the one before, and "the current falls
// by 1.6-2.0 A" before the end was reported on 10 seeds of 10 (on 8 in the
// last fit's poor-fit finding as the model's error, on 2 as a warning of
// current leaving; found in review).
//
// The end's share is fitted as endBefore fits it (the end's place past the
// last station before it, and the width H), but with H at most
// endShareMaxWidth times the reference depth: the share's width is that
// of the half-line's field across a traverse, a few depths (3.6-4.3 m for
// the line above, 1.3 m below the sensors, under 8 and 16 m traverses), and
// a width free to grow to three station spacings let a real loss 8 m
// before the end pass for the end's share (H 8.5 m), the loss lost and a
// false rise made where the correction stopped. For the steps and the
// between-station scatter every usable station before the end then reads
// its current divided by its share, its sigma widened by the share's own:
// the most the share moves over the grid points inside the fit's profile
// interval and a third of the correction (endShareError), in quadrature.
// Division keeps a loss further up the route: the current that reaches the
// end is the station's own, whatever left before it.
//
// The share is used only when it explains the stations it is fitted to:
// their chi-square about I0 f(d), each sigma widened by a third of its
// correction, must lie within the chi-square distribution's 1-endShareAlpha
// quantile for n-3 degrees of freedom (I0, the end's place and H fitted). A
// loss among those stations misses it by far (3 A lost 8 m before the end
// above: a chi-square of 1170-1310 for 5 stations), and the stations are
// then left as they read, as before. A loss between the last station and
// the end, or one the share's uncertainty can take in (between the last
// two stations, when the end's place within its bracket is unknown), cannot
// be told from the end's own field: the stations do not allow it.
const (
	endShareMaxWidth = 4.0
	endShareAlpha    = 0.001
)

// share returns the end's share of the field at a station d metres before
// the last station before the end (see above), and its sigma.
func (b beforeEnd) share(d float64) (f, sigma float64) {
	at := func(t, h float64) float64 {
		if !(h > 0) {
			return 1
		}
		x := d + t
		return (1 + x/math.Hypot(x, h)) / 2
	}
	f = at(b.t, b.h)
	var spread float64
	for _, w := range b.within {
		spread = math.Max(spread, math.Abs(at(w[0], w[1])-f))
	}
	return f, math.Hypot(spread, endShareError*(1-f))
}

// explains reports whether the share b explains the currents of the clean
// stations before the end it was fitted to (see above): idx in order
// towards the end, idx[start] the first station past it.
func (b beforeEnd) explains(ps []Placed, idx []int, start int, set *Settings) bool {
	if !b.fitted || b.n < 1 || !(b.h > 0) {
		return false
	}
	a := &ps[idx[start-1]]
	var chi2 float64
	n := 0
	for j := start - 1; j >= 0 && n < b.n; j-- {
		p := &ps[idx[j]]
		if !clean(p, set) {
			continue
		}
		f, _ := b.share(math.Abs(a.Chainage - p.Chainage))
		s := math.Hypot(p.CurrentSigma, endShareError*b.current*(1-f))
		r := math.Abs(p.Current) - b.current*f
		chi2 += r * r / (s * s)
		n++
	}
	dof := float64(n - 3)
	if dof < 1 {
		dof = 1
	}
	return chi2 <= distuv.ChiSquared{K: dof}.Quantile(1-endShareAlpha)
}

// markShares sets the end's share b on the usable stations of ps before
// the end whose first station past it is idx[start] (idx in order towards
// the end), when it explains them (see above).
//
// It returns the words the end's finding adds when the share corrects a
// station by endShareNamed or more: a change of current among those
// stations, or between them and the end, cannot be told from the end's
// own field (a loss there is taken in by the share), so the finding says
// so and names the farthest of them; "" when none is corrected that much.
func markShares(ps []Placed, idx []int, start int, set *Settings, b beforeEnd) string {
	if start < 1 || !b.explains(ps, idx, start, set) {
		return ""
	}
	a := &ps[idx[start-1]]
	var far *Placed
	n := 0
	for j := start - 1; j >= 0; j-- {
		p := &ps[idx[j]]
		f, s := b.share(math.Abs(a.Chainage - p.Chainage))
		if !(f > 0) || !(f < 1) || !finite(s) {
			continue
		}
		if p.OK && 1-f >= endShareNamed {
			far = p
			n++
		}
		if p.endShare > 0 {
			// Both ends of a short route: the shares multiply.
			s = math.Hypot(s*p.endShare, f*p.endShareSigma)
			f *= p.endShare
		}
		p.endShare, p.endShareSigma = f, s
	}
	switch {
	case far == nil:
		return ""
	case n == 1:
		return fmt.Sprintf("; %s reads part of the end's field and is corrected for it in the search for changes of current, so a change of current between it and the end cannot be told from the end itself", label(far))
	}
	return fmt.Sprintf("; the stations from %s to %s read part of the end's field and are corrected for it in the search for changes of current, so a change of current among them, or between them and the end, cannot be told from the end itself", label(far), label(a))
}

// endShareNamed is the least correction by the end's share (a fraction of
// the station's current) that the end's finding names: one per cent, a
// tenth of the falls that the share took away in review.
const endShareNamed = 0.01

// endCorrected returns ps with the currents of the stations that read part
// of an end's field divided by their share, their sigmas widened by its
// uncertainty (see above); ps itself when there are none.
func endCorrected(ps []Placed) []Placed {
	var out []Placed
	for i := range ps {
		p := &ps[i]
		if !(p.endShare > 0) {
			continue
		}
		if out == nil {
			out = append([]Placed(nil), ps...)
		}
		q := &out[i]
		f := p.endShare
		q.Current = p.Current / f
		q.CurrentSigma = math.Hypot(p.CurrentSigma/f, math.Abs(p.Current)*p.endShareSigma/(f*f))
	}
	if out == nil {
		return ps
	}
	return out
}
