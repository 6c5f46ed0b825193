package main

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
)

// Checks of a survey that catch a confident wrong answer: a whole route
// fitted as one straight line because --group-by was left out, and spikes
// left in the readings because --despike was.

// spikeSigmas is how far, in robust standard deviations, a reading must
// depart from the local trend of its neighbours to count as a spike
// for the warning. It is twice calibrate.Despike's default cut-off, so
// that the warning does not fire on noise: for Gaussian noise a departure
// of 10 sigma has a probability of about 1.5e-23 (the normal tail,
// erfc(10/sqrt 2)), and even with the window's noisy scale estimate at
// most one clean simulated survey in a hundred warns, at the ends of its
// traverses and on short traverses too (TestSpikeWarningCleanSurveys).
const spikeSigmas = 10

// spikeFraction is the share of readings that must be spikes for the
// warning: one spike in a thousand readings. A few spikes among thousands
// of readings barely move a least-squares fit; 1% of readings a thousand
// times the noise can move it by more than the signal (a 2% share in the
// Kestrel Moor survey takes its current from 1.8 A to 0.17 A).
const spikeFraction = 1e-3

// spikeWarning runs the spike filter that --despike uses (each reading
// against the local trend of its neighbours; calibrate.FindSpikes), with
// the stricter spikeSigmas cut-off, over each run of rows of one group (or
// the whole log), and returns a warning when at least spikeFraction of
// the readings (and at least one) are spikes; "" otherwise. A single
// spike in a traverse of a few hundred readings, 800 nT beside a 1333 nT
// anomaly, pulled the depth 2.8 sigma off. ac says the log is an AC
// waveform (calibrate.DespikeSettings.AC).
func spikeWarning(path string, s *ingest.Samples, ac bool) (string, error) {
	n := s.Len()
	if n == 0 {
		return "", nil
	}
	set := &calibrate.DespikeSettings{Threshold: spikeSigmas, AC: ac}
	spikes := 0
	for lo := 0; lo < n; {
		hi := lo + 1
		for s.Group != nil && hi < n && s.Group[hi] == s.Group[lo] {
			hi++
		}
		if s.Group == nil {
			hi = n
		}
		flag, _, _, err := calibrate.FindSpikes([][]float64{s.Bx[lo:hi], s.By[lo:hi], s.Bz[lo:hi]}, set)
		if err != nil {
			return "", err
		}
		for i, f := range flag {
			// Missing values are not spikes (FindSpikes marks them too).
			if f && !math.IsNaN(s.Bx[lo+i]) && !math.IsNaN(s.By[lo+i]) && !math.IsNaN(s.Bz[lo+i]) {
				spikes++
			}
		}
		lo = hi
	}
	if spikes == 0 || float64(spikes) < spikeFraction*float64(n) {
		return "", nil
	}
	return fmt.Sprintf("%s: spikes in %s of readings (%d of %d depart from the local trend of their neighbours by more than %d robust standard deviations): they can pull the fit far off; rerun with --despike",
		path, percent(spikes, n), spikes, n, spikeSigmas), nil
}

// percent words k of n as a percentage to two significant digits.
func percent(k, n int) string {
	p := 100 * float64(k) / float64(n)
	if p >= 10 {
		return fmt.Sprintf("%.0f%%", p)
	}
	return fmt.Sprintf("%.2g%%", p)
}

// groupColumnWarning returns a warning when a log has a group column whose
// values are traverses (at least two groups whose readings move), but
// --group-by was not given, so that every reading was fitted as one straight
// conductor with one current; "" otherwise. name is the group column's
// name in the file.
func groupColumnWarning(path, name string, s *ingest.Samples) string {
	if s.Group == nil || s.X == nil {
		return ""
	}
	type extent struct{ lo, hi [3]float64 }
	ext := map[string]*extent{}
	var order []string
	for i, g := range s.Group {
		if g == "" {
			continue // no group: not one of the column's values
		}
		p := [3]float64{s.X[i], s.Y[i], s.Z[i]}
		e := ext[g]
		if e == nil {
			e = &extent{lo: p, hi: p}
			ext[g] = e
			order = append(order, g)
		}
		for k := range 3 {
			e.lo[k], e.hi[k] = math.Min(e.lo[k], p[k]), math.Max(e.hi[k], p[k])
		}
	}
	moving := 0
	for _, e := range ext {
		if math.Hypot(e.hi[0]-e.lo[0], e.hi[1]-e.lo[1]) > 0.01 {
			moving++
		}
	}
	if len(order) < 2 || moving < 2 {
		return ""
	}
	values := groupValues(order)
	if why := alongTracks(s); why != "" {
		// Sensors of one cart, or tracks along the walk: grouping by
		// them fits each track alone, which cannot see a conductor
		// along it (found in review: -325 A at 11 m and a false change
		// of sign of 645 A from a 20 A cable).
		return fmt.Sprintf("%s: the log's column %q holds %d values (%s) that are %s, not traverses across the route: do not fit them one by one (--group-by %s), since a track running along a conductor cannot see it on its own (its field is the same at every reading of a track parallel to it, and the background takes it); here every reading was fitted as one straight conductor with one current, which a route that bends, changes depth or loses current does not fit: for a walk along the conductor, fit the readings in windows along the route (--along-window M, which the run uses by itself when the one fit misses a narrow swath), or walk traverses across it",
			path, name, len(order), values, why, name)
	}
	return fmt.Sprintf("%s: the log has a group column %q with %d values (%s), but without --group-by every reading was fitted as one straight conductor with one current, which a route that bends, changes depth or loses current does not fit: fit each traverse with --group-by %s",
		path, name, len(order), values, name)
}

// groupValues words a group column's values, in order of first
// appearance: the first two, and the third or the last.
func groupValues(order []string) string {
	values := order[0] + ", " + order[1]
	switch len(order) {
	case 2:
	case 3:
		values += ", " + order[2]
	default:
		values += " ... " + order[len(order)-1]
	}
	return values
}

// trackAngle is the largest angle, degrees, between a group's straight
// track and the direction of the whole walk (the principal direction of
// every reading in plan) for which the group is taken as a track along
// the walk, and so along a conductor the walk follows.
const trackAngle = 20

// elongatedRatio is the largest ratio of a walk's RMS spread across its
// principal direction to its spread along it for which it has a direction
// (a route followed), for the test of tracks along it.
const elongatedRatio = 0.3

// alongTracks says what the groups of s are when they are tracks along the
// walk that cannot each see a conductor along it: "sensors logged together
// side by side along the walk" when their readings overlap in time and
// their tracks run side by side along the walk's direction (within
// trackAngle), "tracks running along the walk" when they follow one
// another so; "" otherwise (traverses across it, a walk with no one
// direction, groups that are not straight tracks).
func alongTracks(s *ingest.Samples) string {
	dirs := groupDirections(s)
	if len(dirs) < 2 {
		return ""
	}
	f := footprintOf(s.X, s.Y)
	if f.n == 0 || !(f.across < elongatedRatio*f.along) {
		return ""
	}
	cosMin := math.Cos(trackAngle * math.Pi / 180)
	for _, d := range dirs {
		if math.Abs(d[0]*f.t[0]+d[1]*f.t[1]) < cosMin {
			return ""
		}
	}
	if loggedTogether(s) {
		return "sensors logged together, side by side along the walk"
	}
	return "tracks running along the walk"
}

// loggedTogether reports whether the groups of s are sensors logged at
// the same time: every group's span of time overlaps another's by more
// than half the shorter span.
func loggedTogether(s *ingest.Samples) bool {
	if s.Group == nil || s.NoTime {
		return false
	}
	type span struct{ lo, hi float64 }
	by := map[string]*span{}
	var order []string
	for i, g := range s.Group {
		t := s.Time[i]
		if g == "" || math.IsNaN(t) {
			continue
		}
		sp := by[g]
		if sp == nil {
			sp = &span{t, t}
			by[g] = sp
			order = append(order, g)
		}
		sp.lo, sp.hi = math.Min(sp.lo, t), math.Max(sp.hi, t)
	}
	if len(order) < 2 {
		return false
	}
	for _, a := range order {
		ok := false
		for _, b := range order {
			if a == b {
				continue
			}
			p, q := by[a], by[b]
			over := math.Min(p.hi, q.hi) - math.Max(p.lo, q.lo)
			if over > 0.5*math.Min(p.hi-p.lo, q.hi-q.lo) {
				ok = true
				break
			}
		}
		if !ok {
			return false
		}
	}
	return true
}

// alongTracksWarning returns, for a run with --group-by whose groups are
// straight tracks side by side along the walk (within trackAngle of the
// walk's direction, itself elongated) and at least one of whose fits
// failed, finds no current 3 sigma from zero, or misses its readings by
// more than alongMisfit times their noise (a cart pushed across a cable
// fits each sensor's track soundly), the warning that such tracks cannot each see a conductor along
// them; "" otherwise. name is the file's name of the group column. The
// fits of a cart's four sensors grouped by the sensor column turned off
// the tracks (-325 A at 11 m, a false change of sign of 645 A), so the
// per-group "cannot be seen from it" note never came (found in review).
func alongTracksWarning(o *locateOptions, sv *survey, name string) string {
	if o.groupBy == "" || len(sv.groups) < 2 || sv.ac {
		return ""
	}
	var x, y []float64
	bad := 0
	var dirs [][2]float64
	for _, g := range sv.groups {
		gx, gy := make([]float64, len(g.points)), make([]float64, len(g.points))
		for i, p := range g.points {
			gx[i], gy[i] = p[0], p[1]
		}
		x, y = append(x, gx...), append(y, gy...)
		f := footprintOf(gx, gy)
		if f.n == 0 || !(f.along > 0) || !(f.across < straightRatio*f.along) {
			return "" // not a straight track
		}
		dirs = append(dirs, f.t)
		noise := g.measuredNoise(false)
		if g.err != nil || g.res == nil || len(g.res.Sources) == 0 || noise > 0 && g.res.RMS > alongMisfit*noise ||
			!(math.Abs(g.res.Sources[0].Current) > 3*g.res.Sources[0].CurrentSigma) {
			bad++
		}
	}
	f := footprintOf(x, y)
	if bad == 0 || f.n == 0 || !(f.across < elongatedRatio*f.along) {
		return ""
	}
	cosMin := math.Cos(trackAngle * math.Pi / 180)
	for _, d := range dirs {
		if math.Abs(d[0]*f.t[0]+d[1]*f.t[1]) < cosMin {
			return ""
		}
	}
	keys := make([]string, len(sv.groups))
	for i, g := range sv.groups {
		keys[i] = g.key
	}
	return fmt.Sprintf("the %d groups of column %q (%s) are straight tracks running side by side along the walk (each within %d° of its direction), as the sensors of a cart pushed along a conductor: a track running along a conductor cannot see it on its own (its field is the same at every reading of a track parallel to it, and the background takes it), so these fits' currents, depths and any change between them mean nothing (%d of them find no current or miss their readings by more than %g times the noise); fit the readings without --group-by, in windows along the route (--along-window M, or by itself when the one fit misses), or walk traverses across the conductor",
		len(sv.groups), name, groupValues(keys), trackAngle, bad, alongMisfit)
}

// groupLines is a log whose group column drew groupColumnWarning: the
// warning, and the directions of travel of its groups (groupDirections).
type groupLines struct {
	warning, path, name string
	dirs                [][2]float64
}

// straightRatio is the largest ratio of the spread of a group's readings
// across their direction of travel to their spread along it (RMS about the
// mean, on the ground) for which the group is taken as one straight line
// of readings.
const straightRatio = 0.1

// groupDirections returns the direction of travel (a horizontal unit
// vector, east and north) of each group of s whose readings lie along one
// straight line (straightRatio), or nil when any group with readings that
// move does not.
func groupDirections(s *ingest.Samples) [][2]float64 {
	if s.Group == nil || s.X == nil {
		return nil
	}
	type sums struct{ n, x, y, xx, yy, xy float64 }
	by := map[string]*sums{}
	var order []string
	for i, g := range s.Group {
		if g == "" || math.IsNaN(s.X[i]) || math.IsNaN(s.Y[i]) {
			continue
		}
		e := by[g]
		if e == nil {
			e = &sums{}
			by[g] = e
			order = append(order, g)
		}
		x, y := s.X[i], s.Y[i]
		e.n++
		e.x += x
		e.y += y
		e.xx += x * x
		e.yy += y * y
		e.xy += x * y
	}
	var dirs [][2]float64
	for _, g := range order {
		e := by[g]
		mx, my := e.x/e.n, e.y/e.n
		sxx, syy, sxy := e.xx/e.n-mx*mx, e.yy/e.n-my*my, e.xy/e.n-mx*my
		major, minor, a := inverse.PlanPrincipal(sxx, syy, sxy)
		if !(major > 1e-4) {
			continue // a fixed sensor: no direction of travel
		}
		if math.Sqrt(minor/major) > straightRatio {
			return nil
		}
		dirs = append(dirs, [2]float64{math.Cos(a), math.Sin(a)})
	}
	return dirs
}

// alongAngle is the largest angle, degrees, between a group's direction of
// travel and the one line fitted to every reading for which the group is
// taken as walked along that line.
const alongAngle = 15

// alongGroupsWarning returns the warning that replaces gl's when the run's
// one fit (of every reading, no --group-by) is a line that every group of
// the log runs along (within alongAngle): fitted one by one, such groups
// see nothing of it (the field of a long straight conductor is the same at
// every point of a line parallel to it, and the background takes it), so
// --group-by is no cure; "" otherwise, and "" when the readings were
// walked as traverses across the walk (walkedAcross). Seven lines walked along a 10 A
// cable, told to use --group-by, each then read "no conductor is detected"
// (found in review).
func alongGroupsWarning(sv *survey, gl groupLines) string {
	if len(sv.groups) != 1 || len(gl.dirs) < 2 {
		return ""
	}
	res := sv.groups[0].res
	if res == nil || len(res.Sources) == 0 || res.Sources[0].Kind != "line" {
		return ""
	}
	d := res.Sources[0].Dir
	h := math.Hypot(d[0], d[1])
	if !(h > 0) {
		return ""
	}
	// Short traverses one after another along a route, each across the
	// walk: the one fit of them all may lay its line along the traverses
	// (21 traverses of 3 m: a line 0.05 m below the sensors), but they are
	// traverses, which --group-by fits (walkedAcross).
	x, y := make([]float64, len(sv.groups[0].points)), make([]float64, len(sv.groups[0].points))
	for i, p := range sv.groups[0].points {
		x[i], y[i] = p[0], p[1]
	}
	if walkedAcross(x, y, footprintOf(x, y)) {
		return ""
	}
	cosMin := math.Cos(alongAngle * math.Pi / 180)
	for _, g := range gl.dirs {
		if math.Abs(g[0]*d[0]+g[1]*d[1])/h < cosMin {
			return ""
		}
	}
	return fmt.Sprintf("%s: the log has a group column %q with %d groups, each a line of readings running along the one conductor fitted to every reading (within %d°): fitted one by one (--group-by %s) they would see nothing of it, since its field is the same at every reading of a line parallel to it; the fit here is of every reading as one straight conductor with one current, which a route that bends, changes depth or loses current does not fit: walk traverses across the conductor to follow it",
		gl.path, gl.name, len(gl.dirs), alongAngle, gl.name)
}

// spanRatio is how many times its distance below the sensors a fitted line
// may run along the readings before a fit without --group-by is
// suspect: a traverse across a conductor reaches a few times the depth to
// either side (the field of a line falls to a tenth at three times its
// distance), not twenty.
const spanRatio = 20

// spanWarning returns a warning when locate ran without --group-by and
// the readings run along the fitted line for more than spanRatio times the
// line's distance below the sensors: a route surveyed along its length,
// fitted as one straight line; "" otherwise.
func spanWarning(sv *survey) string {
	if len(sv.groups) != 1 {
		return ""
	}
	g := sv.groups[0]
	if g.res == nil || len(g.res.Sources) == 0 || len(g.points) == 0 {
		return ""
	}
	src := g.res.Sources[0]
	if src.Kind != "line" {
		return ""
	}
	lo, hi, zm := math.Inf(1), math.Inf(-1), 0.0
	for _, p := range g.points {
		a := (p[0]-src.Point[0])*src.Dir[0] + (p[1]-src.Point[1])*src.Dir[1] + (p[2]-src.Point[2])*src.Dir[2]
		lo, hi = math.Min(lo, a), math.Max(hi, a)
		zm += p[2]
	}
	zm /= float64(len(g.points))
	h := math.Max(zm-src.Point[2], 0.05)
	span := hi - lo
	if span <= spanRatio*h {
		return ""
	}
	return fmt.Sprintf("the readings run %.0f m along the fitted line, %.0f times its distance of %.2f m below the sensors: every reading was fitted as one straight conductor with one current, which a route that bends, changes depth or loses current does not fit; if the log holds several traverses, give the column that tells them apart with --group-by",
		span, span/h, h)
}

// groupColumnName is the file's name of the group column: the one mapped
// with --column group=NAME, else "group".
func groupColumnName(o *locateOptions) string {
	for _, c := range append(append([]string(nil), o.read.columns...), o.read.columnsOld...) {
		for _, p := range strings.Split(c, ",") {
			if k, v, ok := strings.Cut(p, "="); ok && strings.EqualFold(strings.TrimSpace(k), ingest.ColGroup) {
				return strings.TrimSpace(v)
			}
		}
	}
	return ingest.ColGroup
}

// leadWarnings puts the warnings that say the answer may be wrong (alerts)
// before the others.
func leadWarnings(alerts, rest []string) []string {
	out := append([]string(nil), alerts...)
	return append(out, rest...)
}

// alertsFirst returns warnings with those that are among alerts moved to
// the front, each part in its own order.
func alertsFirst(warnings, alerts []string) []string {
	is := make(map[string]bool, len(alerts))
	for _, a := range alerts {
		is[a] = true
	}
	var lead, rest []string
	for _, w := range warnings {
		if is[w] {
			lead = append(lead, w)
		} else {
			rest = append(rest, w)
		}
	}
	return leadWarnings(lead, rest)
}

// unreadColumns are a log's columns that fed nothing (ingest.Samples.Unread).
type unreadColumns struct {
	path  string
	names []string
}

// maxGroupCandidates is how many unread columns of a log groupColumnHint
// reads again to look at their values: each is a read of the whole log,
// made only on the span warning's path.
const maxGroupCandidates = 4

// groupColumnHint returns, for the span warning (a run without --group-by
// whose readings run along the fitted line), the text that names the
// column --group-by should have given: a column of the logs that fed
// nothing and whose values come in blocks, as the names of traverses
// walked one after another do (looksLikeGroups); "" when none does. The
// warning's "give the column that tells them apart with --group-by" left a
// user whose traverses were named in a column "Line" to find it (found in
// review).
func groupColumnHint(o *locateOptions, sv *survey) string {
	opts := append(append([]ingest.Option(nil), o.readOpts...), o.coil.readOptions()...)
	for _, u := range sv.unread {
		tried := 0
		for _, name := range u.names {
			if tried == maxGroupCandidates {
				break
			}
			if strings.ContainsAny(name, ",=") || strings.TrimSpace(name) == "" {
				continue // not expressible as a mapping
			}
			tried++
			s, err := ingest.ReadSamples(u.path, append(opts[:len(opts):len(opts)], ingest.WithColumns(ingest.ColGroup+"="+name))...)
			if err != nil || !looksLikeGroups(s.Group) {
				continue
			}
			arg := name
			if strings.ContainsAny(name, " \t\"'") {
				arg = "\"" + name + "\""
			}
			return fmt.Sprintf(" (the column %q of %s, not read, holds values in blocks as the names of traverses walked one after another do: try --group-by %s)", name, u.path, arg)
		}
	}
	return ""
}

// looksLikeGroups reports whether a column's values look like the names
// of traverses or sensors logged one after another: at least two values,
// at least 10 readings a value on average, and each value in one block or
// two (the runs at most twice the values), not a value that changes from
// reading to reading or flickers (a GPS fix quality).
func looksLikeGroups(g []string) bool {
	if len(g) == 0 {
		return false
	}
	seen := map[string]bool{}
	runs := 0
	for i, v := range g {
		if v == "" {
			return false
		}
		seen[v] = true
		if i == 0 || v != g[i-1] {
			runs++
		}
	}
	return len(seen) >= 2 && len(seen)*10 <= len(g) && runs <= 2*len(seen)
}

// noGroupColumnError is locate's error for --group-by NAME when the log
// has no column NAME: it lists the log's columns, as the error for a
// missing field column does, so that the right name can be given at once.
func noGroupColumnError(path, name string, s *ingest.Samples) error {
	if len(s.Columns) == 0 {
		return fmt.Errorf("%s has no column %q to group by (see \"undercurrent inspect %s\" for its columns)", path, name, path)
	}
	msg := fmt.Sprintf("%s has no column %q to group by (columns found: %s", path, name, strings.Join(s.Columns, ", "))
	if len(s.Unread) > 0 {
		msg += fmt.Sprintf("; not read for anything else: %s", strings.Join(s.Unread, ", "))
	}
	return fmt.Errorf("%s); give the one that names the traverses, sensors or time windows with --group-by NAME", msg)
}
