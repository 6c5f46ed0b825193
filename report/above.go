package report

import (
	"fmt"
	"math"

	"undercurrent/inverse"
)

// aboveLine is a conductor above the sensors that explains a group's
// readings (aboveFit): the strongest line of the fit of the mirrored
// readings, turned back above them.
type aboveLine struct {
	// Height is its height above the sensors' mean height, m, and
	// HeightSigma its one-sigma; Current and CurrentSigma its current, A
	// (DC signed along Dir, AC RMS); East and North where it passes
	// nearest the readings' middle.
	Height, HeightSigma   float64
	Current, CurrentSigma float64
	East, North           float64
	// RMS is the refit's misfit per real component, nT, and Noise the
	// noise measured apart from the fits it is measured against.
	RMS, Noise float64
}

// aboveMisfit is the most, in multiples of the noise measured apart from
// the fit, a refit with the conductor above the sensors may miss its
// readings by for aboveFit to take it as the explanation: a fit of the
// right model misses by about the noise, 2.3 times it with noise
// correlated from reading to reading (see dcMisfitShare).
const aboveMisfit = 3

// aboveFit refits the readings of f, whose fit misses them by far more
// than noise (the solver keeps every line below the lowest sensor), with
// a conductor allowed above the sensors, and returns it when that
// explains the readings; nil otherwise. The field of a line above the
// sensors is that of its mirror image in the sensors' mean height, read
// at the mirrored points, with the horizontal components negated (a
// magnetic field is a pseudovector: under the reflection z -> -z it
// turns to (-Bx, -By, Bz)); so the mirrored readings are fitted as usual
// and the lines found are mirrored back. In review a 25 A line 2.7 m
// above a walked survey failed every fit at 170 times the noise, and the
// failure told the user to look for an axis's sign reversed; doing so
// (--field-axes w,n,u) fitted its mirror below ground as sound.
func aboveFit(f *Fit, measured float64, ac bool) *aboveLine {
	p := f.Problem
	if p == nil || !(measured > 0) || len(p.Points) == 0 {
		return nil
	}
	z0 := 0.0
	for _, r := range p.Points {
		z0 += r[2]
	}
	z0 /= float64(len(p.Points))
	q := mirrored(p, z0)
	var set inverse.Settings
	if f.Settings != nil {
		set = *f.Settings
	}
	// Depths and covers are not the question here: the mirrored height
	// is measured from z0 directly.
	set.ReferenceZ = nil
	res, err := inverse.FitLines(q, &set)
	if err != nil || res == nil || len(res.Sources) == 0 {
		return nil
	}
	r := res.RMS
	if ac {
		r /= math.Sqrt2
	}
	if r > aboveMisfit*measured {
		return nil
	}
	var s *inverse.SourceEstimate
	for i := range res.Sources {
		c := &res.Sources[i]
		if c.Kind == KindDipole || NoCurrent(c, ac) {
			continue
		}
		if s == nil || math.Abs(c.Current) > math.Abs(s.Current) {
			s = c
		}
	}
	if s == nil {
		return nil
	}
	return &aboveLine{
		Height: z0 - s.Point[2], HeightSigma: s.DepthSigma,
		Current: s.Current, CurrentSigma: s.CurrentSigma,
		East: s.Point[0], North: s.Point[1],
		RMS: r, Noise: measured,
	}
}

// aboveWords names a conductor above the sensors that explains a group's
// readings, for the failure texts that would otherwise send the user to
// the field's axes only. For sensors at one height a line above is a line
// below with Bx, By negated, so a sensor turned half round about its
// vertical fits the same: both are named, the axes first (a regression
// test of a turned sensor, TestNoCurrentNamesAxesMistake, caught the
// axes' advice dropped).
func (a *aboveLine) words(ac bool) string {
	cur := PlusMinus(a.Current, a.CurrentSigma)
	if ac {
		cur = PlusMinus(math.Abs(a.Current), a.CurrentSigma)
	}
	return fmt.Sprintf("a conductor about %.2g m above the sensors explains these readings (an overhead line, a cable tray or cables under a deck or ceiling?): refitted with a line allowed above the sensors, it carries %s A, %s m above the sensors' mean height, passing E %.1f m, N %.1f m, and misses by %.3g nT RMS, %.3g times the noise. A sensor turned half round about its vertical (x and y reversed) over a conductor below gives the same readings, which alone cannot tell the two apart: check the sensor's orientation and the field columns first (a base log beside the survey, --base, names a turned sensor). With the axes right, this group has no estimate of its own (the fit keeps every conductor below the sensors); do not turn an axis to make the readings fit, which would put this conductor's mirror image below ground",
		a.Height, cur, PlusMinus(a.Height, a.HeightSigma), a.East, a.North, a.RMS, a.RMS/a.Noise)
}

// keyedAbove is a conductor above the sensors found at group key.
type keyedAbove struct {
	*aboveLine
	key string
	ac  bool
}

// aboveExplains refits the groups of misses (measuredMisfits) with a
// conductor allowed above the sensors (aboveFit) and returns the first
// group's conductor and how many groups it explains, when over half;
// nil, 0 otherwise. Only misfits of farMisfit times the noise or more are
// tried: a conductor left out by the fit's bound misses by far more.
func aboveExplains(fits []Fit, misses []misfit) (*keyedAbove, int) {
	var first *keyedAbove
	k := 0
	for _, m := range misses {
		if !(m.rms > farMisfit*m.noise) {
			continue
		}
		for i := range fits {
			f := &fits[i]
			if f.Key != m.key || f.Problem == nil {
				continue
			}
			ac := f.Problem.Phasors != nil
			if a := aboveFit(f, m.noise, ac); a != nil {
				k++
				if first == nil {
					first = &keyedAbove{a, m.key, ac}
				}
			}
			break
		}
	}
	if 2*k <= len(misses) {
		return nil, 0
	}
	return first, k
}

// mirrored returns p's readings mirrored in the height z0: the points
// reflected, Bx and By negated (a line above the sensors turned into its
// image below them), the travel's vertical turned.
func mirrored(p *inverse.Problem, z0 float64) *inverse.Problem {
	q := &inverse.Problem{Sigma: p.Sigma, Scale: p.Scale, Times: p.Times}
	for _, r := range p.Points {
		q.Points = append(q.Points, [3]float64{r[0], r[1], 2*z0 - r[2]})
	}
	for _, b := range p.Fields {
		q.Fields = append(q.Fields, [3]float64{-b[0], -b[1], b[2]})
	}
	for _, b := range p.Phasors {
		q.Phasors = append(q.Phasors, [3]complex128{-b[0], -b[1], b[2]})
	}
	for _, t := range p.Travel {
		q.Travel = append(q.Travel, [3]float64{t[0], t[1], -t[2]})
	}
	return q
}
