package main

import (
	"fmt"
	"math"
	"sort"

	"undercurrent/ingest"
)

// A base record at the wrong time.
//
// A base record that covers the survey's hours but was written in another
// clock's time (a logger on local time with no offset, read as UTC) passes
// every check of its span and is applied: each reading loses the base's
// departure of another hour, which adds drift instead of taking it out.
// Found in review: a 4.5-hour walk against the real Boulder minutes of
// 2014-11-02 (bou20141102vmin.min), the base's times written in UTC+01:00
// without their offset, came out "41 sound" with invented second
// conductors and currents 5-7 sigma off, worse than with no base at all.
//
// The fits show it. Each group's fitted background is the field at its
// traverse with the conductors' field left out: the same for every group
// but for the crust's differences along the survey and the variation the
// correction left in. Corrected with the right record the backgrounds
// agreed to 0.5 nT; with none they scattered 13 nT, with the record an hour
// off 17 nT. The correction is a sum, so the backgrounds the base record
// would have left had it been paired a zone's offset away follow from the
// fitted ones with no fit again: background + departure(lag 0) -
// departure(lag). When one lag leaves them several-fold tighter than the
// times as given, the run is refused, naming the offset (as the span's
// check names it, zoneShiftHint): going on gives results worse than no
// base, and the fix is one offset written into a log. When the correction
// as given leaves them scattered several-fold more than none and no lag
// helps, a warning: the record is not the survey's variation (another
// day, another place), but nothing says what is.

const (
	// baseLagMinGroups is the fewest fitted groups whose backgrounds are
	// compared: fewer leave a lag too many chances to fit them by luck.
	baseLagMinGroups = 6
	// baseLagFold is how many times less scatter another lag must leave
	// than the times as given, and as many times the scatter the fits'
	// own sigmas allow, for the run to be refused: a quiet day's base
	// explains little at any lag and moves the scatter by far less.
	baseLagFold = 4.0
	// baseWorseFold is how many times the scatter with no correction the
	// correction as given must leave for the warning.
	baseWorseFold = 2.0
	// baseLagStamps is how many readings of each group the departures
	// are averaged over (every k-th of a longer group).
	baseLagStamps = 64
)

// baseLagSeries is the base record's finite readings in time order.
type baseLagSeries struct {
	t      []float64
	v      [3][]float64
	maxGap float64 // the longest gap between readings bridged, s
}

func newBaseLagSeries(b *ingest.Samples) *baseLagSeries {
	idx := make([]int, 0, b.Len())
	for i := 0; i < b.Len(); i++ {
		if finite(b.Time[i]) && finite(b.Bx[i]) && finite(b.By[i]) && finite(b.Bz[i]) {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, c int) bool { return b.Time[idx[a]] < b.Time[idx[c]] })
	s := &baseLagSeries{}
	for _, i := range idx {
		if n := len(s.t); n > 0 && b.Time[i] <= s.t[n-1] {
			continue
		}
		s.t = append(s.t, b.Time[i])
		s.v[0], s.v[1], s.v[2] = append(s.v[0], b.Bx[i]), append(s.v[1], b.By[i]), append(s.v[2], b.Bz[i])
	}
	if len(s.t) < 2 {
		return nil
	}
	dt := make([]float64, len(s.t)-1)
	for i := range dt {
		dt[i] = s.t[i+1] - s.t[i]
	}
	// Ten readings' interval, at least the base's default hold (300 s):
	// a longer gap is the base check's business, not this one's.
	s.maxGap = math.Max(10*medianOf(dt), 300)
	return s
}

// at returns the record at time x, linearly between readings and held
// up to maxGap beyond its ends (as the correction holds it); false further
// out or across a gap longer than maxGap.
func (s *baseLagSeries) at(x float64) ([3]float64, bool) {
	n := len(s.t)
	if !(x >= s.t[0]-s.maxGap && x <= s.t[n-1]+s.maxGap) {
		return [3]float64{}, false
	}
	j := sort.SearchFloat64s(s.t, x)
	if j == 0 {
		return [3]float64{s.v[0][0], s.v[1][0], s.v[2][0]}, true
	}
	if j == n {
		return [3]float64{s.v[0][n-1], s.v[1][n-1], s.v[2][n-1]}, true
	}
	if s.t[j]-s.t[j-1] > s.maxGap {
		return [3]float64{}, false
	}
	w := (x - s.t[j-1]) / (s.t[j] - s.t[j-1])
	var v [3]float64
	for c := range 3 {
		v[c] = s.v[c][j-1] + w*(s.v[c][j]-s.v[c][j-1])
	}
	return v, true
}

// baseLagGroup is a fitted group's background and the times of (some of)
// its readings.
type baseLagGroup struct {
	bg, sigma [3]float64
	stamps    []float64
}

// mean returns the base record's mean over the group's readings paired
// lag seconds later (the base's reading at t+lag for the survey's at t).
func (s *baseLagSeries) mean(g *baseLagGroup, lag float64) ([3]float64, bool) {
	var m [3]float64
	for _, t := range g.stamps {
		v, ok := s.at(t + lag)
		if !ok {
			return m, false
		}
		for c := range 3 {
			m[c] += v[c] / float64(len(g.stamps))
		}
	}
	return m, true
}

// scatter returns the sum over groups and axes of the squared residuals
// of v from a straight line in the groups' mean times tm, and each axis's
// rms. A straight line takes out the ground's steady change along a survey
// walked in order (and a day's slow variation, which no lag tells apart),
// leaving the variation of minutes to hours by which a lag is told.
func scatter(v [][3]float64, tm []float64) (sum float64, rms [3]float64) {
	n := float64(len(v))
	var mt, stt float64
	for _, t := range tm {
		mt += t / n
	}
	for _, t := range tm {
		stt += (t - mt) * (t - mt)
	}
	for c := range 3 {
		var m, stv float64
		for i, x := range v {
			m += x[c] / n
			stv += (tm[i] - mt) * x[c]
		}
		b := 0.0
		if stt > 0 {
			b = stv / stt
		}
		var ss float64
		for i, x := range v {
			e := x[c] - m - b*(tm[i]-mt)
			ss += e * e
		}
		sum += ss
		rms[c] = math.Sqrt(ss / n)
	}
	return sum, rms
}

// baseLagCheck compares the groups' fitted backgrounds as corrected with
// those the base record would have left uncorrected and paired at the
// civil offsets (see above). It returns an error when another offset
// leaves them several-fold tighter, and a warning when the correction
// leaves them several-fold looser than none; both empty otherwise (no
// base, an AC survey, too few fitted groups, or no strong evidence).
func baseLagCheck(o *locateOptions, sv *survey) (warning string, err error) {
	if o.base == "" || sv.ac || sv.baseCheck == nil || sv.baseCheck.base == nil || sv.baseRover == nil {
		return "", nil
	}
	bs := newBaseLagSeries(sv.baseCheck.base)
	if bs == nil {
		return "", nil
	}
	var gs []*baseLagGroup
	for _, g := range sv.groups {
		r := g.res
		if r == nil || g.err != nil || len(g.stamps) < 2 {
			continue
		}
		lg := &baseLagGroup{bg: r.Background, sigma: r.BackgroundSigma}
		ok := true
		for c := range 3 {
			ok = ok && finite(r.Background[c]) && finite(r.BackgroundSigma[c])
		}
		step := 1 + len(g.stamps)/baseLagStamps
		for i := 0; i < len(g.stamps) && ok; i += step {
			if !finite(g.stamps[i]) {
				ok = false
			}
			lg.stamps = append(lg.stamps, g.stamps[i])
		}
		if ok {
			gs = append(gs, lg)
		}
	}
	if len(gs) < baseLagMinGroups {
		return "", nil
	}
	// The groups' mean times.
	tm := make([]float64, len(gs))
	for i, g := range gs {
		for _, t := range g.stamps {
			tm[i] += t / float64(len(g.stamps))
		}
	}
	// The scatter the fits' own sigmas allow.
	var allow float64
	for _, g := range gs {
		for c := range 3 {
			allow += g.sigma[c] * g.sigma[c]
		}
	}
	// The departures at lag 0, as applied: the backgrounds uncorrected
	// are the fitted ones plus these.
	d0 := make([][3]float64, len(gs))
	for i, g := range gs {
		var ok bool
		if d0[i], ok = bs.mean(g, 0); !ok {
			return "", nil // not all of it corrected by this record
		}
	}
	at := func(lag float64) (float64, [3]float64, bool) {
		v := make([][3]float64, len(gs))
		for i, g := range gs {
			d := [3]float64{}
			if !math.IsNaN(lag) {
				var ok bool
				if d, ok = bs.mean(g, lag); !ok {
					return 0, [3]float64{}, false
				}
			}
			for c := range 3 {
				v[i][c] = g.bg[c] + d0[i][c] - d[c]
			}
		}
		s, rms := scatter(v, tm)
		return s, rms, true
	}
	s0, rms0, _ := at(0)
	sNone, rmsNone, _ := at(math.NaN())
	best, bestM := math.Inf(1), 0
	var bestRMS [3]float64
	for _, m := range civilShifts() {
		if s, rms, ok := at(60 * float64(m)); ok && s < best {
			best, bestM, bestRMS = s, m, rms
		}
	}
	nt := func(r [3]float64) string { return fmt.Sprintf("%.2g/%.2g/%.2g nT", r[0], r[1], r[2]) }
	spread := fmt.Sprintf("the %d fitted groups' backgrounds (the field at each traverse with the conductors' left out, which the base correction should leave the same but for the ground's own differences) scatter %s (east/north/up rms about a straight line in time) as corrected, against %s with no correction",
		len(gs), nt(rms0), nt(rmsNone))
	// Another lag must beat no correction as well: a record that holds
	// none of the survey's variation (another day's) matches it best
	// paired with a quiet hour, which is no correction at all.
	floor := math.Max(best, allow)
	if s0 >= baseLagFold*floor && sNone >= baseLagFold*floor {
		h := math.Abs(float64(bestM)) / 60
		what := fmt.Sprintf("would explain the survey's own drift far better (its groups' backgrounds scattering %s, the sum of squares %.0f times smaller)", nt(bestRMS), s0/floor)
		hint := zoneWords(sv.baseCheck.base, sv.baseRover, bestM, what)
		if hint == "" {
			dir := "later"
			if bestM < 0 {
				dir = "earlier"
			}
			hint = fmt.Sprintf("the base record %s if each survey reading were paired with the base reading %g h %s: is one log's clock off by that much?", what, h, dir)
		}
		return "", fmt.Errorf("%s: the base record's variation is not paired with the survey's at the right time: %s; %s. Removing the variation of another hour adds drift instead of taking it out, and the fits take it for conductors' field; correct the times, or locate without --base",
			o.base, spread, hint)
	}
	if s0 >= baseWorseFold*math.Max(sNone, allow) {
		return fmt.Sprintf("%s: the base correction leaves the survey's groups' backgrounds scattered more than no correction would (the sum of squares %.0f times larger): %s, and pairing the record at a time zone's offset does no better. The base record does not hold the survey's variation (another day's, another place's, or a clock off by other than a zone's offset), and its correction adds drift the fits take for conductors' field: check its times and place, or locate without --base",
			o.base, s0/math.Max(sNone, allow), spread), nil
	}
	return "", nil
}
