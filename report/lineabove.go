package report

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"undercurrent/inverse"
)

// LineAbove is a conductor above the sensors (an overhead line, a cable
// tray over a walkway) fitted beside the buried lines of the groups it
// crosses (BuildSettings.LineAbove). It is a source of its own kind: never
// a buried conductor, a route, a cover or a step.
type LineAbove struct {
	// Kind is always "line above the sensors".
	Kind string `json:"kind"`
	// Height is its height above the sensors' mean height, m, with its
	// one-sigma; the weighted mean of the groups' fits.
	Height      float64 `json:"height_above_sensors_m"`
	HeightSigma float64 `json:"height_above_sensors_sigma_m"`
	// Current, A, DC along Azimuth, with its one-sigma.
	Current      float64 `json:"current_a"`
	CurrentSigma float64 `json:"current_sigma_a"`
	// East and North are a point of it in plan, m (the frame's), and
	// Azimuth its direction, degrees from north in [0, 180).
	East         float64 `json:"east_m"`
	North        float64 `json:"north_m"`
	Azimuth      float64 `json:"azimuth_deg"`
	AzimuthSigma float64 `json:"azimuth_sigma_deg"`
	// Groups are the groups whose fits it was fitted in.
	Groups []string `json:"groups"`
}

// LineAboveKind is LineAbove.Kind.
const LineAboveKind = "line above the sensors"

// aboveGroup is one group's refit with a line above (refitAbove).
type aboveGroup struct {
	i          int // index in fits
	up         inverse.SourceEstimate
	height     float64 // above the sensors' mean height
	below      *inverse.Result
	q          *inverse.Problem // the readings less the line above
	rms, noise float64
	bg         [3]float64               // the refit's background, nT
	depth      float64                  // the strongest buried line's depth below the sensors' mean height
	before     []inverse.SourceEstimate // the fit's lines before
}

// refitLinesAbove fits one line above the sensors beside the buried lines
// of the groups whose fits miss their readings by farAnyMisfit times the
// noise or more, and takes it only when the survey agrees:
//   - those groups are at least 2 and over half the groups measured;
//   - each of them, refitted with its lines below plus one line above
//     (inverse.Settings.Above, started from the mirror refit of the fit's
//     residuals and from 3, 8 and 20 m over the readings), meets aboveMisfit
//     times its noise;
//   - a sensor turned half round about its vertical (Bx, By negated) fitted
//     with lines below only does not meet the noise as well in any of them
//     (for sensors at one height a line above is a line below with Bx, By
//     negated: the axes are named first);
//   - the lines above agree, as one line over the survey: height, current
//     and azimuth within 3 sigma (and 5%, 5 degrees) of their weighted
//     means, each passing within that of the mean line in plan;
//   - each group's buried line keeps its azimuth and plan position within
//     3 sigma (and 5 degrees, 0.25 m): only its current and depth change.
//
// When taken, each such fit's Problem becomes its readings less the line
// above's field and its Result the refit of its lines below to them, so
// that everything after sees a buried survey; the line above is returned.
// Otherwise fits are untouched and the returned text, when not empty,
// says why the line above was not taken. DC only.
func refitLinesAbove(fits []Fit, bs *BuildSettings) (*LineAbove, string) {
	n := 0
	var far []int
	for i := range fits {
		f := &fits[i]
		res := f.Result
		if res == nil || len(res.Sources) == 0 || f.Problem == nil {
			continue
		}
		noise := f.MeasuredNoise
		if !(noise > 0) {
			noise = bs.MeasuredNoise
		}
		if !(noise > 0) {
			continue
		}
		n++
		if f.Problem.Fields == nil || f.Problem.Phasors != nil || f.Dipole || res.Residuals == nil {
			continue
		}
		if res.RMS > farAnyMisfit*noise {
			far = append(far, i)
		}
	}
	if len(far) < 2 || 2*len(far) <= n {
		return nil, ""
	}
	var gs []aboveGroup
	var missed []int
	for _, i := range far {
		// The axes first: a sensor turned half round about its vertical
		// over lines below reads as a line above.
		noise := fits[i].MeasuredNoise
		if !(noise > 0) {
			noise = bs.MeasuredNoise
		}
		if r := flipFit(&fits[i]); r <= aboveMisfit*noise {
			return nil, fmt.Sprintf("a line above the sensors (--line-above) was not taken: at %s a sensor turned half round about its vertical (x and y reversed) over lines below fits the readings (%.3g nT RMS, %.3g times the noise); check the sensor's orientation and the field columns first", fits[i].Key, r, r/noise)
		}
		g := refitAbove(&fits[i], noise, bs, nil)
		if g == nil {
			missed = append(missed, i)
			continue
		}
		g.i = i
		if why := turnedWhy(g); why != "" {
			return nil, fmt.Sprintf("a line above the sensors (--line-above) was not taken: at %s %s; check the sensor's orientation and the field columns first", fits[i].Key, why)
		}
		gs = append(gs, *g)
	}
	// A group whose own seeds missed is started again from the other
	// groups' line above: one line over the survey.
	for _, i := range missed {
		var g *aboveGroup
		for _, o := range gs {
			if g = refitAbove(&fits[i], fits[i].MeasuredNoise, bs, &inverse.Line{Point: o.up.Point, Dir: o.up.Dir}); g != nil {
				break
			}
		}
		if g == nil {
			return nil, fmt.Sprintf("a line above the sensors (--line-above) was not taken: group %s's fit with one did not meet its noise", fits[i].Key)
		}
		g.i = i
		if why := turnedWhy(g); why != "" {
			return nil, fmt.Sprintf("a line above the sensors (--line-above) was not taken: at %s %s; check the sensor's orientation and the field columns first", fits[i].Key, why)
		}
		gs = append(gs, *g)
	}
	la, why := agreeAbove(gs, fits)
	if la == nil {
		return nil, "a line above the sensors (--line-above) was not taken: " + why
	}
	// The other groups the line crosses whose fits miss by more than
	// aboveMisfit times their noise (a second line below took up part of
	// its field): refitted alike, and taken when their line above is the
	// survey's and their buried line keeps its plan geometry.
	in := map[int]bool{}
	for _, i := range far {
		in[i] = true
	}
	for i := range fits {
		f := &fits[i]
		if in[i] || f.Result == nil || len(f.Result.Sources) == 0 || f.Problem == nil || f.Problem.Fields == nil || f.Problem.Phasors != nil || f.Dipole || f.Result.Residuals == nil {
			continue
		}
		noise := f.MeasuredNoise
		if !(noise > 0) {
			noise = bs.MeasuredNoise
		}
		if !(noise > 0) || !(f.Result.RMS > aboveMisfit*noise) {
			continue
		}
		if flipFit(f) <= aboveMisfit*noise {
			continue
		}
		g := refitAbove(f, noise, bs, &inverse.Line{Point: gs[0].up.Point, Dir: gs[0].up.Dir})
		if g == nil || turnedWhy(g) != "" {
			continue
		}
		g.i = i
		if one, _ := agreeAbove(append(append([]aboveGroup(nil), gs...), *g), fits); one == nil {
			continue
		}
		gs = append(gs, *g)
	}
	if one, _ := agreeAbove(gs, fits); one != nil {
		la = one
	}
	for _, g := range gs {
		f := &fits[g.i]
		f.Problem = g.q
		f.Result = g.below
		f.Err = nil
	}
	return la, ""
}

// refitAbove refits f with its lines below plus one line above the
// sensors, started from seed (when not nil) too; nil when no such fit meets aboveMisfit times the noise or the
// group's fit holds anything but lines.
func refitAbove(f *Fit, noise float64, bs *BuildSettings, seed *inverse.Line) *aboveGroup {
	if !(noise > 0) {
		noise = bs.MeasuredNoise
	}
	p := f.Problem
	var set inverse.Settings
	if f.Settings != nil {
		set = *f.Settings
	}
	if set.Dipoles > 0 || set.Above != nil {
		return nil
	}
	count := 0
	before := f.Result.Sources
	for _, s := range before {
		if s.Kind != "line" {
			return nil
		}
		count++
	}
	z0, top := 0.0, math.Inf(-1)
	var c [2]float64
	for _, r := range p.Points {
		z0 += r[2]
		c[0] += r[0]
		c[1] += r[1]
		top = math.Max(top, r[2])
	}
	np := float64(len(p.Points))
	z0, c[0], c[1] = z0/np, c[0]/np, c[1]/np

	// Seeds: the mirror refit of the residuals (a line above is its
	// mirror image in the sensors' height with Bx, By negated), and lines
	// 3, 8 and 20 m over the readings along it.
	az := before[0].Dir
	var seeds []inverse.Line
	if seed != nil {
		seeds = append(seeds, *seed)
	}
	rp := &inverse.Problem{Points: p.Points, Fields: f.Result.Residuals, Sigma: p.Sigma, Scale: p.Scale, Times: p.Times, Travel: p.Travel}
	ms := set
	ms.Count, ms.ReferenceZ = 1, nil
	if m := mirrorFit(rp, &ms, z0); m != nil && len(m.Sources) > 0 {
		s := m.Sources[0]
		pt := s.Point
		pt[2] = 2*z0 - pt[2]
		seeds = append(seeds, inverse.Line{Point: pt, Dir: [3]float64{s.Dir[0], s.Dir[1], -s.Dir[2]}})
		az = s.Dir
	}
	for _, h := range []float64{3, 8, 20} {
		seeds = append(seeds, inverse.Line{Point: [3]float64{c[0], c[1], top + h}, Dir: [3]float64{az[0], az[1], 0}})
	}
	var best *inverse.Result
	as := set
	as.Count = count
	for _, sd := range seeds {
		as.Above = []inverse.Line{sd}
		res, err := inverse.FitLines(p, &as)
		if err != nil || res == nil {
			continue
		}
		if best == nil || res.RMS < best.RMS {
			best = res
		}
	}
	if best == nil || best.RMS > aboveMisfit*noise {
		return nil
	}
	g := &aboveGroup{rms: best.RMS, noise: noise, before: before}
	found := false
	// The line above is the best-determined line over the sensors: a
	// line below that dips steeply may pass above them near the readings'
	// centre (inverse.AboveSensorsNote).
	for _, s := range best.Sources {
		if s.Kind != "line" || !(s.Point[2] > top) || slices.Contains(s.Notes, inverse.AboveSensorsNote) {
			continue
		}
		if !found || math.Abs(s.Current)/s.CurrentSigma > math.Abs(g.up.Current)/g.up.CurrentSigma {
			g.up, found = s, true
		}
	}
	if !found || !(math.Abs(g.up.Current) > 3*g.up.CurrentSigma) {
		return nil
	}
	g.height = g.up.Point[2] - z0
	field := inverse.Fields(inverse.Line{Point: g.up.Point, Dir: g.up.Dir}, p.Points, []float64{g.up.Current}, nil)
	q := *p
	q.Fields = make([][3]float64, len(p.Fields))
	for i, b := range p.Fields {
		for k := range 3 {
			q.Fields[i][k] = b[k] - 1e9*field[i][k]
		}
	}
	below, err := inverse.FitLines(&q, &set)
	if err != nil || below == nil || len(below.Sources) == 0 || below.RMS > aboveMisfit*noise {
		return nil
	}
	g.below, g.q = below, &q
	g.bg = best.Background
	g.depth = z0 - below.Sources[0].Point[2]
	return g
}

// flipFit is the misfit, nT RMS, of f's readings with Bx and By negated
// (a sensor turned half round about its vertical) fitted as f was, with
// lines below the sensors only; +Inf when that fit fails.
func flipFit(f *Fit) float64 {
	p := f.Problem
	var set inverse.Settings
	if f.Settings != nil {
		set = *f.Settings
	}
	fp := *p
	fp.Fields = make([][3]float64, len(p.Fields))
	for i, b := range p.Fields {
		fp.Fields[i] = [3]float64{-b[0], -b[1], b[2]}
	}
	fr, err := inverse.FitLines(&fp, &set)
	if err != nil || fr == nil {
		return math.Inf(1)
	}
	return fr.RMS
}

// earthHorizontal is the least horizontal background, nT, taken as the
// Earth's field left in the readings (no base log or detrending took it
// off); its north component then says which way the sensor faces.
const earthHorizontal = 1000

// turnedWhy says why a sensor turned half round about its vertical is
// the likelier reading of g's refit, "" when it is not. For sensors at
// one height, a line above at height h beside a line below at depth d
// gives the readings of a turned sensor over a line below at depth h
// beside one above at height d: the readings alone cannot tell the two
// apart. The Earth's field can, when left in them: its horizontal part
// points north (within the declination, under 90 degrees outside the
// magnetic polar regions), south to a turned sensor. When it was taken
// off, the line above is taken only when it lies higher above the
// sensors than the buried line lies below them (an overhead line or a
// tray over a shallow cable), the other way round being read as a turned
// sensor.
func turnedWhy(g *aboveGroup) string {
	if h := math.Hypot(g.bg[0], g.bg[1]); h > earthHorizontal {
		if g.bg[1] <= 0 {
			return fmt.Sprintf("the Earth's field in the refit points south (E %.0f nT, N %.0f nT), as to a sensor turned half round about its vertical (x and y reversed), which reads a line above beside one below as well", g.bg[0], g.bg[1])
		}
		return ""
	}
	if g.height <= g.depth {
		return fmt.Sprintf("the line above (%.3g m up) is no higher than the buried line is deep (%.3g m), and with the Earth's field taken off the readings a sensor turned half round about its vertical (x and y reversed) reads as well as the two swapped", g.height, g.depth)
	}
	return ""
}

// mirrorFit fits the readings of p mirrored in the height z0 with Bx, By
// negated (a line above the sensors turned into its image below them).
func mirrorFit(p *inverse.Problem, set *inverse.Settings, z0 float64) *inverse.Result {
	q := mirrored(p, z0)
	res, err := inverse.FitLines(q, set)
	if err != nil {
		return nil
	}
	return res
}

// agreeAbove checks that the groups' lines above are one line over the
// survey and that their buried lines kept their plan geometry, and
// returns that line; nil and why not otherwise.
func agreeAbove(gs []aboveGroup, fits []Fit) (*LineAbove, string) {
	deg := 180 / math.Pi
	// One orientation for every line above: azimuth in [0, 180) with the
	// current's sign along it (SourceEstimate already does so).
	wmean := func(v, s []float64) (float64, float64) {
		var sw, sv float64
		for i := range v {
			w := 1 / math.Max(s[i]*s[i], 1e-12)
			sw += w
			sv += w * v[i]
		}
		return sv / sw, math.Sqrt(1 / sw)
	}
	var h, hs, cur, cs, az, azs []float64
	for _, g := range gs {
		h = append(h, g.height)
		hs = append(hs, g.up.DepthSigma)
		cur = append(cur, g.up.Current)
		cs = append(cs, g.up.CurrentSigma)
		a := g.up.Azimuth
		if len(az) > 0 && a-az[0] > 90 {
			a -= 180
		} else if len(az) > 0 && az[0]-a > 90 {
			a += 180
		}
		az = append(az, a)
		azs = append(azs, g.up.AzimuthSigma)
	}
	mh, mhs := wmean(h, hs)
	mc, mcs := wmean(cur, cs)
	ma, mas := wmean(az, azs)
	for k, g := range gs {
		key := fits[g.i].Key
		if math.Abs(h[k]-mh) > 3*math.Hypot(hs[k], mhs)+0.05*math.Abs(mh) {
			return nil, fmt.Sprintf("the groups' lines above do not agree on a height (%s: %.3g m, the survey's %.3g m)", key, h[k], mh)
		}
		if math.Abs(cur[k]-mc) > 3*math.Hypot(cs[k], mcs)+0.05*math.Abs(mc) {
			return nil, fmt.Sprintf("the groups' lines above do not agree on a current (%s: %.4g A, the survey's %.4g A)", key, cur[k], mc)
		}
		if math.Abs(az[k]-ma) > 3*math.Hypot(azs[k], mas)+5 {
			return nil, fmt.Sprintf("the groups' lines above do not agree on a direction (%s: %.3g degrees, the survey's %.3g)", key, az[k], ma)
		}
		if why := keptPlan(g.before, g.below.Sources[0]); why != "" {
			return nil, fmt.Sprintf("at %s the buried line %s when the line above is fitted beside it", key, why)
		}
	}
	// One line in plan: each group's line above passes within 3 sigma
	// (and 5% of its height) of the mean line.
	var pe, pn float64
	for _, g := range gs {
		pe += g.up.Point[0]
		pn += g.up.Point[1]
	}
	pe /= float64(len(gs))
	pn /= float64(len(gs))
	u := [2]float64{math.Sin(ma / deg), math.Cos(ma / deg)}
	for _, g := range gs {
		dx, dy := g.up.Point[0]-pe, g.up.Point[1]-pn
		off := math.Abs(dx*u[1] - dy*u[0])
		if off > 3*g.up.OffsetSigma+0.05*mh+0.5 {
			return nil, fmt.Sprintf("the groups' lines above are not one line in plan (%s passes %.2g m from the survey's)", fits[g.i].Key, off)
		}
	}
	if ma < 0 {
		ma += 180
		mc = -mc
	} else if ma >= 180 {
		ma -= 180
		mc = -mc
	}
	la := &LineAbove{Kind: LineAboveKind, Height: mh, HeightSigma: mhs, Current: mc, CurrentSigma: mcs, East: pe, North: pn, Azimuth: ma, AzimuthSigma: mas}
	for _, g := range gs {
		la.Groups = append(la.Groups, fits[g.i].Key)
	}
	sort.Strings(la.Groups)
	return la, ""
}

// words describes a line above for the document's warnings.
func (la *LineAbove) words() string {
	return fmt.Sprintf("a line above the sensors was fitted beside the buried lines of %d groups (%s): %s A, %s m above the sensors' mean height, through E %.1f m, N %.1f m at azimuth %.0f degrees (an overhead line, a cable tray or cables under a deck?). Its field was taken off those groups' readings before their buried lines were fitted; it is not a buried conductor and has no cover. Check the sensor's orientation first: a sensor turned half round about its vertical was tried and fitted worse",
		len(la.Groups), strings.Join(la.Groups, ", "), PlusMinus(la.Current, la.CurrentSigma), PlusMinus(la.Height, la.HeightSigma), la.East, la.North, la.Azimuth)
}

// lineAboveFeature is la as a GeoJSON LineString along it over the groups
// it was fitted in (5 m past the outermost), at the sensors' mean height
// plus its height; a feature of its own kind, never a route.
func (d *Document) lineAboveFeature(la *LineAbove) feature {
	a := la.Azimuth * math.Pi / 180
	u := [3]float64{math.Sin(a), math.Cos(a), 0}
	lo, hi, z, k := math.Inf(1), math.Inf(-1), 0.0, 0
	for _, g := range d.Groups {
		if !slices.Contains(la.Groups, g.Key) {
			continue
		}
		t := (g.Centroid[0]-la.East)*u[0] + (g.Centroid[1]-la.North)*u[1]
		lo, hi = math.Min(lo, t), math.Max(hi, t)
		z += g.Centroid[2]
		k++
	}
	if k == 0 {
		lo, hi = 0, 0
	} else {
		z /= float64(k)
	}
	p := [3]float64{la.East, la.North, z + la.Height}
	props := map[string]any{
		"feature":                      LineAboveKind,
		"kind":                         LineAboveKind,
		"current_a":                    roundSig(la.Current, la.CurrentSigma, 4),
		"current_sigma_a":              sigNum(la.CurrentSigma),
		"height_above_sensors_m":       roundSig(la.Height, la.HeightSigma, 3),
		"height_above_sensors_sigma_m": sigNum(la.HeightSigma),
		"azimuth_deg":                  roundSig(la.Azimuth, la.AzimuthSigma, 1),
		"groups":                       la.Groups,
		"message":                      "a conductor above the sensors (an overhead line, a cable tray), not a buried conductor: no cover",
	}
	return feature{Type: "Feature", Geometry: d.line([][3]float64{along(p, u, lo-5), along(p, u, hi+5)}), Properties: props}
}

// keptPlan says how the buried line a moved in plan from every line of
// before (its fit without the line above), "" when one of them has its
// azimuth and plan position within 3 sigma (and 5 degrees, 0.25 m): only
// its current and depth may change.
func keptPlan(before []inverse.SourceEstimate, a inverse.SourceEstimate) string {
	why := ""
	for _, b := range before {
		da := math.Abs(b.Azimuth - a.Azimuth)
		da = math.Min(da, 180-da)
		if da > 3*math.Hypot(b.AzimuthSigma, a.AzimuthSigma)+5 {
			if why == "" {
				why = fmt.Sprintf("turns by %.3g degrees", da)
			}
			continue
		}
		r := b.Azimuth * math.Pi / 180
		dx, dy := a.Point[0]-b.Point[0], a.Point[1]-b.Point[1]
		off := math.Abs(dx*math.Cos(r) - dy*math.Sin(r))
		if off > 3*math.Hypot(b.OffsetSigma, a.OffsetSigma)+0.25 {
			if why == "" {
				why = fmt.Sprintf("moves %.2g m in plan", off)
			}
			continue
		}
		return ""
	}
	return why
}

// FindLineAbove runs the line-above search of Build (BuildSettings.LineAbove,
// refitLinesAbove) on a copy of fits, leaving fits and their results as they
// were: the line above Build would take, or nil and why none was taken ("" when
// the fits did not miss by enough to look). A caller that may still change the
// fits' model (cmd's background changing along the traverse) asks first
// whether a line above explains their misfit. DC only.
func FindLineAbove(fits []Fit, bs *BuildSettings) (*LineAbove, string) {
	return refitLinesAbove(append([]Fit(nil), fits...), bs)
}
