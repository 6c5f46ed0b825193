package live

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"github.com/nats-io/nats.go/jetstream"
)

// storedGeometry is a commissioned geometry in uc_state.
type storedGeometry struct {
	Conductors []ConductorConfig `json:"conductors"`
	From       float64           `json:"from"`
	To         float64           `json:"to"`
	Worker     string            `json:"worker"`
	// Uncertainty is the covariance of the geometry's fit, carried into
	// every window's sigmas (absent from geometries stored by earlier
	// versions, whose windows' sigmas leave it out).
	Uncertainty *geometryUncertainty `json:"uncertainty,omitempty"`
	// Inputs are the site file's settings the geometry was commissioned
	// with, and InputsDigest their digest (commissionInputs.digest): a
	// geometry whose settings the site file has changed since is not
	// used. Both are absent from geometries stored by earlier versions.
	Inputs       *commissionInputs `json:"inputs,omitempty"`
	InputsDigest string            `json:"inputs_digest,omitempty"`
}

// commissionInputs are the settings of an asset's site file entry that
// its commissioning used: the conductor entries in their order (names;
// the points and directions given, which name, turn and place the fitted
// lines), the sensors by name (positions, orientations: where the
// readings fitted were taken), the mode and frequency, and the
// commissioning period.
type commissionInputs struct {
	Mode       string           `json:"mode"`
	Frequency  float64          `json:"frequency,omitempty"`
	Commission float64          `json:"commission_s"`
	Sensors    []sensorInput    `json:"sensors"`
	Conductors []conductorInput `json:"conductors"`
}

// sensorInput is one sensor of commissionInputs.
type sensorInput struct {
	Name        string     `json:"name"`
	Position    [3]float64 `json:"position"`
	Orientation [3]float64 `json:"orientation"`
}

// conductorInput is one conductor entry of commissionInputs; Point and
// Direction are nil when the site file does not give them.
type conductorInput struct {
	Name      string      `json:"name"`
	Point     *[3]float64 `json:"point,omitempty"`
	Direction *[3]float64 `json:"direction,omitempty"`
}

// commissionInputsOf returns the commissioning settings of asset a.
func commissionInputsOf(a *AssetConfig) *commissionInputs {
	in := &commissionInputs{Mode: a.Mode, Commission: a.Commission.Seconds(), Sensors: []sensorInput{}, Conductors: []conductorInput{}}
	if a.Mode == "ac" {
		in.Frequency = a.Frequency
	}
	for _, s := range a.Sensors {
		in.Sensors = append(in.Sensors, sensorInput{Name: s.Name, Position: s.Position, Orientation: s.Orientation})
	}
	// The sensors' order does not enter the fit's result, the conductors'
	// does (without points, it names the lines from left to right).
	sort.Slice(in.Sensors, func(i, j int) bool { return in.Sensors[i].Name < in.Sensors[j].Name })
	for _, c := range a.Conductors {
		ci := conductorInput{Name: c.Name}
		if c.pointSet {
			p := c.Point
			ci.Point = &p
		}
		if c.dirSet {
			d := c.Direction
			ci.Direction = &d
		}
		in.Conductors = append(in.Conductors, ci)
	}
	return in
}

// digest is the SHA-256 of the settings' JSON, in hex: the same settings
// give the same digest (encoding/json writes each number so that it reads
// back the same).
func (in *commissionInputs) digest() string {
	data, _ := json.Marshal(in)
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])
}

// inputsDiff says how the commissioning settings site differ from those
// stored with a geometry, naming each change.
func inputsDiff(stored, site *commissionInputs) string {
	if stored == nil {
		return "the settings stored with the geometry are missing"
	}
	var parts []string
	vec := func(v *[3]float64) string {
		if v == nil {
			return "not given"
		}
		return fmt.Sprintf("[%g, %g, %g]", v[0], v[1], v[2])
	}
	if stored.Mode != site.Mode {
		parts = append(parts, fmt.Sprintf("mode %s, now %s", stored.Mode, site.Mode))
	}
	if stored.Frequency != site.Frequency {
		parts = append(parts, fmt.Sprintf("frequency %g Hz, now %g Hz", stored.Frequency, site.Frequency))
	}
	if stored.Commission != site.Commission {
		parts = append(parts, fmt.Sprintf("commission %g s, now %g s", stored.Commission, site.Commission))
	}
	names := func(n int, at func(int) string) []string {
		out := make([]string, n)
		for i := range out {
			out[i] = at(i)
		}
		return out
	}
	sn := names(len(stored.Sensors), func(i int) string { return stored.Sensors[i].Name })
	cn := names(len(site.Sensors), func(i int) string { return site.Sensors[i].Name })
	if strings.Join(sn, "\x00") != strings.Join(cn, "\x00") {
		parts = append(parts, fmt.Sprintf("sensors %s, now %s", strings.Join(sn, ", "), strings.Join(cn, ", ")))
	} else {
		for i, s := range site.Sensors {
			o := stored.Sensors[i]
			if o.Position != s.Position {
				parts = append(parts, fmt.Sprintf("sensor %s position %s, now %s", s.Name, vec(&o.Position), vec(&s.Position)))
			}
			if o.Orientation != s.Orientation {
				parts = append(parts, fmt.Sprintf("sensor %s orientation %s, now %s", s.Name, vec(&o.Orientation), vec(&s.Orientation)))
			}
		}
	}
	sn = names(len(stored.Conductors), func(i int) string { return stored.Conductors[i].Name })
	cn = names(len(site.Conductors), func(i int) string { return site.Conductors[i].Name })
	if strings.Join(sn, "\x00") != strings.Join(cn, "\x00") {
		parts = append(parts, fmt.Sprintf("conductors %s, now %s", strings.Join(sn, ", "), strings.Join(cn, ", ")))
	} else {
		same := func(a, b *[3]float64) bool { return (a == nil) == (b == nil) && (a == nil || *a == *b) }
		for i, c := range site.Conductors {
			o := stored.Conductors[i]
			if !same(o.Point, c.Point) {
				parts = append(parts, fmt.Sprintf("conductor %s point %s, now %s", c.Name, vec(o.Point), vec(c.Point)))
			}
			if !same(o.Direction, c.Direction) {
				parts = append(parts, fmt.Sprintf("conductor %s direction %s, now %s", c.Name, vec(o.Direction), vec(c.Direction)))
			}
		}
	}
	if len(parts) == 0 {
		return "the settings' digest differs"
	}
	return strings.Join(parts, "; ")
}

// loadGeometry sets up the estimator: from the site file for model
// "fixed", from uc_state for "commission" when it was commissioned before
// (by this or another worker).
func (w *assetWorker) loadGeometry(ctx context.Context) error {
	a := w.asset
	conds := a.Conductors
	var unc *geometryUncertainty
	if a.Model == "commission" {
		e, err := w.svc.stores.State.Get(ctx, geometryKey(a.Name))
		if errors.Is(err, jetstream.ErrKeyNotFound) {
			return nil // commission from the data
		}
		if err != nil {
			return fmt.Errorf("live: asset %s: geometry: %w", a.Name, err)
		}
		var g storedGeometry
		if err := json.Unmarshal(e.Value(), &g); err != nil {
			return fmt.Errorf("live: asset %s: stored geometry: %w", a.Name, err)
		}
		if diff := nameDiff(g.Conductors, a.Conductors); diff != "" {
			// The site file's conductors were renamed, added or removed
			// since the asset was commissioned: the stored geometry would
			// name and fit the old ones while the API lists the new.
			w.log.Warn("the stored geometry's conductors differ from the site file's ("+diff+"): it is forgotten and the asset commissioned again from the next windows, as POST /api/v1/assets/"+a.Name+"/recommission does",
				"stored", conductorNames(g.Conductors), "site", conductorNames(a.Conductors))
			if err := w.fenced(); err != nil {
				return err
			}
			if err := w.svc.stores.State.Delete(ctx, geometryKey(a.Name)); err != nil {
				return fmt.Errorf("live: asset %s: forget geometry: %w", a.Name, err)
			}
			return nil
		}
		site := commissionInputsOf(a)
		switch {
		case g.InputsDigest == "":
			w.log.Warn("the stored geometry carries no record of the site file's settings it was commissioned with (an earlier version's): a change of the conductors' points or directions, or of the sensors, is not noticed; recommission the asset to have it")
		case g.InputsDigest != site.digest():
			// The conductors keep their names but the site file moved
			// their points or turned their directions (or moved the
			// sensors, or changed the mode, frequency or commissioning
			// period) since: the geometry was fitted and named from
			// settings that no longer hold.
			diff := inputsDiff(g.Inputs, site)
			w.log.Warn("the site file's settings for commissioning differ from those the stored geometry was commissioned with ("+diff+"): it is forgotten and the asset commissioned again from the next windows, as POST /api/v1/assets/"+a.Name+"/recommission does",
				"changes", diff)
			if err := w.fenced(); err != nil {
				return err
			}
			if err := w.svc.stores.State.Delete(ctx, geometryKey(a.Name)); err != nil {
				return fmt.Errorf("live: asset %s: forget geometry: %w", a.Name, err)
			}
			return nil
		}
		conds, unc = g.Conductors, g.Uncertainty
		if unc == nil {
			w.log.Warn("the stored geometry carries no uncertainty (an earlier version's, or not found when commissioned): the windows' sigmas leave out its error; recommission the asset to have it")
		}
	}
	return w.setGeometry(conds, unc)
}

// setGeometry holds conds for the asset's windows; unc, when not nil, is
// their commissioning fit's covariance, carried into every window's
// sigmas.
func (w *assetWorker) setGeometry(conds []ConductorConfig, unc *geometryUncertainty) error {
	if err := w.proc.hold(w.svc.newEstimator, conds); err != nil {
		return fmt.Errorf("live: asset %s: %w", w.asset.Name, err)
	}
	shifts, err := geometryShifts(w.svc.newEstimator, w.asset.Mode, conds, unc)
	if err != nil {
		w.log.Warn("the commissioned geometry's uncertainty cannot be used: the windows' sigmas leave it out", "err", err)
	}
	w.proc.shifts = shifts
	return nil
}

// hold sets the estimator for the geometry conds (built by newEst) and
// the conductors' names and directions; it clears the geometry's
// uncertainty (shifts).
func (p *processor) hold(newEst NewEstimatorFunc, conds []ConductorConfig) error {
	est, err := newEst(p.asset.Mode, conds)
	if err != nil {
		return err
	}
	p.est, p.shifts = est, nil
	p.names, p.dirs = p.names[:0], p.dirs[:0]
	for _, c := range conds {
		p.names = append(p.names, c.Name)
		p.dirs = append(p.dirs, c.currentDir())
	}
	return nil
}

// commission holds windows until the commissioning period is covered,
// fits the geometry to their mean readings, stores it, then publishes
// every held window with it.
//
// A fit whose conductors' fields the readings do not resolve (the
// currents off, or too small: unresolvedError) is not a geometry: the
// windows are held, the asset's endpoint and the log (once) say it waits
// for current, and the fit is tried again with each window, over the
// last commissionLimit windows, until the current flows; every held
// window is then published with the geometry (reading the currents of
// the time, about none while they were off). Another failure is tried
// again with more data up to commissionLimit windows; then, as a
// failure that only the site file can mend (more readings of a field the
// model does not describe do not mend it), it stops the asset with an
// alarm.
func (w *assetWorker) commission(win *window) error {
	if len(w.pendReds) != len(w.pending) {
		w.pendReds = w.pendReds[:0] // the held windows were dropped (a restart)
		for _, pw := range w.pending {
			w.pendReds = append(w.pendReds, w.proc.reduce(pw))
		}
	}
	w.pending = append(w.pending, win)
	w.pendReds = append(w.pendReds, w.proc.reduce(win))
	// The held window's samples are not read again: its reduced readings
	// are kept (a long wait for current holds many windows).
	win.Sensors = nil
	w.pendDur += win.End - win.Start
	if w.pendDur+1e-9 < w.asset.Commission.Seconds() {
		return nil
	}
	if w.svc.commissioner == nil {
		return fmt.Errorf("live: asset %s: model \"commission\" but no commissioner is configured", w.asset.Name)
	}
	limit := w.commissionLimit()
	reds := w.pendReds
	fitted := reds
	if len(fitted) > limit {
		fitted = fitted[len(fitted)-limit:]
	}
	sum := meanReadings(fitted, len(w.asset.Sensors), w.asset.Mode == "ac")
	conds, err := w.svc.commissioner.Commission(&sum, w.asset.Conductors)
	var site *needsSiteError
	if errors.As(err, &site) {
		// More data would not help (and averaging on could take in a
		// change of the currents): stop until the site file is mended.
		return w.commissionStopped(win, fmt.Errorf("live: asset %s: commissioning: %w", w.asset.Name, err))
	}
	var unres *unresolvedError
	secs := float64(len(fitted)) * w.asset.Window.Seconds()
	if errors.As(err, &unres) && unres.layout {
		// The currents flow but the sensors cannot place the lines: count
		// it as a failure that more readings hardly mend, and stop after
		// commissionLimit of them with an alarm that names the layout.
		w.misfits++
		advice := "more readings of this layout do not place the lines: mend the site file (sensors across the lines, or model = \"fixed\") and restart serve"
		if w.misfits >= limit {
			return w.commissionStopped(win, &needsSiteError{fmt.Errorf("live: asset %s: commissioning failed in each of %d tries, with %g s of readings at the last: %w; "+advice,
				w.asset.Name, w.misfits, secs, err)})
		}
		w.commissionFailing(win, "waiting for a geometry the sensors can fix: "+err.Error(), err, secs, limit, advice)
		return nil
	}
	if errors.As(err, &unres) {
		w.misfits, w.failAlarmed = 0, false
		if v, _ := w.svc.waiting.Load(w.asset.Name); !w.waiting || !strings.HasPrefix(fmt.Sprint(v), "waiting for current") {
			w.log.Warn("commissioning waits for windows in which the conductors' currents flow: the held windows are published once it is commissioned", "err", err, "windows", len(w.pending))
		}
		w.waiting = true
		w.svc.waiting.Store(w.asset.Name, "waiting for current: "+err.Error())
		return nil
	}
	if err != nil {
		w.misfits++
		named := errors.New(w.sensorNames(err.Error()))
		// The likely causes, unless the refusal gave them already.
		causes := " (an extended conductor such as a flat bar close to the sensors, a bend, another source near the sensors, a conductor level with or above the sensors the fit did not reach (give its point), a conducting enclosure or screen (AC), " +
			"or a sensor's position or orientation in the site file wrong)"
		if strings.Contains(err.Error(), "flat bar") {
			causes = ""
		}
		advice := "more readings do not mend a model that misses them" + causes + ": mend the site file (or hold the geometry where the conductors run with model = \"fixed\", " +
			"a bend or finite bars as kind = \"segment\" from and to) and restart serve"
		if w.misfits >= limit {
			err = named
			if name, ok := w.misfitSensor(&sum, fitted); ok {
				err = fmt.Errorf("%w; without sensor %s the readings commission: its orientation or position in the site file is likely wrong, or it was moved or turned", err, name)
			}
			return w.commissionStopped(win, &needsSiteError{fmt.Errorf("live: asset %s: commissioning failed in each of %d tries, with %g s of readings at the last: %w; "+advice,
				w.asset.Name, w.misfits, secs, err)})
		}
		w.commissionFailing(win, "failing: "+named.Error(), named, secs, limit, advice)
		return nil
	}
	if w.waiting {
		w.waiting = false
		w.svc.waiting.Delete(w.asset.Name)
	}
	w.misfits, w.failAlarmed = 0, false
	if len(conds) == len(w.asset.Conductors) && !sameNames(conds, w.asset.Conductors) {
		for i := range conds { // a commissioner that does not name them
			conds[i].Name = w.asset.Conductors[i].Name
		}
	}
	// The geometry's own error, common to every window solved with it.
	unc, uerr := geometryCovariance(&sum, conds)
	if uerr != nil {
		w.log.Warn("the commissioned geometry's uncertainty cannot be found: the windows' sigmas leave it out", "err", uerr)
	}
	in := commissionInputsOf(w.asset)
	g := storedGeometry{Conductors: conds, From: w.pending[0].Start, To: win.End, Worker: w.svc.id, Uncertainty: unc, Inputs: in, InputsDigest: in.digest()}
	data, _ := json.Marshal(g)
	if err := w.fenced(); err != nil {
		return err
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10e9)
	defer cancel()
	if _, err := w.svc.stores.State.Put(ctx, geometryKey(w.asset.Name), data); err != nil {
		return fmt.Errorf("live: asset %s: store geometry: %w", w.asset.Name, err)
	}
	w.log.Info("asset commissioned", "conductors", len(conds), "from", g.From, "to", g.To)
	for i, c := range publishedGeometry(&g, w.asset.Sensors).Conductors {
		args := []any{"name", c.Name, "kind", conds[i].Kind, "point", c.PointM, "direction", c.Direction, "depth_m", c.DepthM, "azimuth_deg", c.AzimuthDeg}
		if c.DepthSigmaM != nil {
			args = append(args, "depth_sigma_m", *c.DepthSigmaM, "azimuth_sigma_deg", *c.AzimuthSigmaDeg)
		}
		w.log.Info("commissioned conductor", args...)
	}
	if far := farFromPoints(conds, w.asset.Conductors, farFromPoint); len(far) > 0 {
		w.log.Warn("commissioned conductors lie far from their points in the site file: check the points, or recommission",
			"conductors", strings.Join(far, ", "), "limit_m", farFromPoint)
	}
	if err := w.setGeometry(conds, unc); err != nil {
		return err
	}
	held := w.pending
	w.pending, w.pendReds, w.pendDur = nil, nil, 0
	for i, pw := range held {
		if err := w.publishWindow(pw, reds[i]); err != nil {
			return err
		}
	}
	return nil
}

// commissionLimit is the most windows the commissioning fit averages,
// and the most tries of a fit that fails (other than for want of
// current) before the asset is stopped: twenty commissioning periods,
// 20 * periodWindows (before, 20 * (C/W + 1) windows: 24 periods for a
// 20 s period of 4 s windows).
func (w *assetWorker) commissionLimit() int {
	return 20 * w.periodWindows()
}

// periodWindows is how many windows one commissioning period holds (the
// first try is made once they are in).
func (w *assetWorker) periodWindows() int {
	return max(1, int(math.Ceil(w.asset.Commission.Seconds()/w.asset.Window.Seconds()-1e-9)))
}

// commissionAlarmAfter is the try of a run of failed commissioning fits
// (other than for want of current) at which the commissioning alarm is
// raised: once the failure has lasted a second commissioning period (the
// fit then averages twice the readings of the first try, which halves
// the noise's share of chi-square: a fit that still misses them misses
// the model), at least the third try. Before, nothing but a WARN per
// window told of it until the asset stopped twenty periods on (43 min
// for a 2 min period of 10 s windows).
func (w *assetWorker) commissionAlarmAfter() int {
	return max(3, w.periodWindows()+1)
}

// commissionFailing records try w.misfits of a commissioning fit that
// failed with err (a misfit, or a layout that does not fix the lines),
// secs of readings fitted: the asset's endpoint shows state with the
// tries (commissioning: "failing: ..."), the first try is logged, and at
// commissionAlarmAfter tries a commissioning alarm is raised, once in the
// run (until a fit commissions, or waits for current), saying the asset
// stops after limit tries and what to mend (advice).
func (w *assetWorker) commissionFailing(win *window, state string, err error, secs float64, limit int, advice string) {
	n := w.misfits
	w.waiting = true
	w.svc.waiting.Store(w.asset.Name, fmt.Sprintf("%s (try %d of at most %d, %g s of readings; the held windows are published once it commissions)", state, n, limit, secs))
	if n == 1 {
		w.log.Warn("commissioning failed; trying again with each window (the asset's endpoint shows the tries)", "err", err, "windows", len(w.pending), "stop_after", limit)
	} else {
		w.log.Debug("commissioning failed again", "err", err, "tries", n)
	}
	if n < w.commissionAlarmAfter() || w.failAlarmed {
		return
	}
	w.failAlarmed = true
	msg := fmt.Sprintf("commissioning has failed in each of %d tries, with %g s of readings at the last: %v; it is tried again with each window and the asset stopped after %d tries (twenty commissioning periods) unless it commissions; %s",
		n, secs, err, limit, advice)
	w.log.Warn("commissioning alarm: "+msg, "tries", n)
	al := w.proc.alarm(win, AlarmCommissioning, "", float64(n), float64(w.commissionAlarmAfter()), msg)
	if perr := w.publishAlarm(al, w.msgID(win.Index)+"/"+al.Kind+"/"); perr != nil {
		w.log.Warn("the commissioning alarm could not be published", "err", perr)
	}
}

// misfitSensor names the one sensor without whose mean reading sum (of
// the windows reds) commissions, when there is exactly one: a sensor
// whose position or orientation the site file gives wrong pulls the fit
// of all towards itself, so that the lines fitted with it do not show
// where the misfit is.
func (w *assetWorker) misfitSensor(sum *SolveInput, reds []*reduced) (string, bool) {
	seen := map[int]bool{}
	for _, r := range reds {
		for _, si := range r.used {
			seen[si] = true
		}
	}
	var names []string
	for si, s := range w.asset.Sensors {
		if seen[si] {
			names = append(names, s.Name)
		}
	}
	if len(names) != len(sum.Points) || len(names) < 3 {
		return "", false
	}
	type cand struct {
		name string
		off  float64 // the largest distance of a line from its site-file point, m
	}
	var found []cand
	for k := range names {
		sub := sum.without(k)
		conds, err := w.svc.commissioner.Commission(&sub, w.asset.Conductors)
		if err != nil {
			continue
		}
		c := cand{name: names[k], off: math.Inf(1)}
		if pointsOff, ok := offPoints(conds, w.asset.Conductors); ok {
			c.off = pointsOff
		}
		found = append(found, c)
	}
	switch {
	case len(found) == 1:
		return found[0].name, true
	case len(found) == 0:
		return "", false
	}
	// Several sensors whose leaving out commissions (with two free lines
	// and four sensors left, the lines can bend to most readings): prefer
	// the one whose lines run where the site file's points put them,
	// clearly nearer than any other's; with no points, none is named.
	sort.Slice(found, func(i, j int) bool { return found[i].off < found[j].off })
	if math.IsInf(found[0].off, 1) || !(found[0].off < 0.5*found[1].off) {
		return "", false
	}
	return found[0].name, true
}

// offPoints is the largest distance of a line of conds from its point in
// the site file's stated conductors; false when a conductor has no point
// or no line of its name.
func offPoints(conds, stated []ConductorConfig) (float64, bool) {
	var most float64
	for _, s := range stated {
		if !s.pointSet {
			return 0, false
		}
		ok := false
		for _, c := range conds {
			if c.Name == s.Name && c.Kind != "segment" {
				most = math.Max(most, norm(perp(sub(s.Point, c.Point), unit(c.Direction))))
				ok = true
			}
		}
		if !ok {
			return 0, false
		}
	}
	return most, len(stated) > 0
}

// sensorNames writes msg's "the sensor at [x, y, z]" as the sensor's name
// in the site file.
func (w *assetWorker) sensorNames(msg string) string {
	for _, s := range w.asset.Sensors {
		p := s.Position
		msg = strings.ReplaceAll(msg, fmt.Sprintf("the sensor at [%g, %g, %g]", p[0], p[1], p[2]), fmt.Sprintf("sensor %s (at [%g, %g, %g])", s.Name, p[0], p[1], p[2]))
	}
	return msg
}

// commissionStopped raises the asset's commissioning alarm for err (a
// needsSiteError) in win, then returns err, with which the worker stops
// the asset (halt).
func (w *assetWorker) commissionStopped(win *window, err error) error {
	if w.waiting {
		w.waiting = false
		w.svc.waiting.Delete(w.asset.Name)
	}
	al := w.proc.alarm(win, AlarmCommissioning, "", 0, 0, "commissioning stopped until the site file is mended and serve restarted: "+err.Error())
	if perr := w.publishAlarm(al, w.msgID(win.Index)+"/"+al.Kind+"/"); perr != nil {
		w.log.Warn("the commissioning alarm could not be published", "err", perr)
	}
	return err
}

// meanReadings averages each of the nsensors sensors' reduced
// readings over the windows reds (phasors for ac, else fields), for the
// commissioning fit.
func meanReadings(reds []*reduced, nsensors int, ac bool) SolveInput {
	var sum SolveInput
	counts := map[int]int{}
	pos := map[int][3]float64{}
	fields := map[int][3]float64{}
	phasors := map[int][3]complex128{}
	variance := map[int]float64{} // sum of the windows' reading variances, nT^2
	// measured sums the variances the windows' own scatter gives
	// (reduced.scatter), for noise = 0; a sensor's is dropped (negative)
	// when a window of it has none.
	measured := map[int]float64{}
	// AC phasors are referred to cos(2 pi f t): when the grid is off the
	// site's frequency their phase turns from window to window, so each
	// window is turned to the phase of the first window's strongest
	// reading before the average (a common turn of all readings leaves
	// the geometry unchanged).
	ref := struct {
		sensor, axis int
		phase        complex128 // unit phasor
	}{sensor: -1}
	for _, r := range reds {
		turn := complex(1, 0)
		if r.in.Phasors != nil {
			if ref.sensor < 0 {
				best := 0.0
				for j, si := range r.used {
					for k := range 3 {
						if a := cmplx.Abs(r.in.Phasors[j][k]); a > best {
							best, ref.sensor, ref.axis = a, si, k
							ref.phase = r.in.Phasors[j][k] / complex(a, 0)
						}
					}
				}
			}
			for j, si := range r.used {
				if z := r.in.Phasors[j][ref.axis]; si == ref.sensor && z != 0 {
					turn = ref.phase / (z / complex(cmplx.Abs(z), 0))
				}
			}
		}
		for j, si := range r.used {
			counts[si]++
			pos[si] = r.in.Points[j]
			sig := r.in.Sigma
			if j < len(r.in.Sigmas) {
				sig = r.in.Sigmas[j]
			}
			variance[si] += sig * sig
			if j < len(r.scatter) && r.scatter[j] > 0 && measured[si] >= 0 {
				measured[si] += r.scatter[j] * r.scatter[j]
			} else {
				measured[si] = -1
			}
			if r.in.Fields != nil {
				f := fields[si]
				for k := range 3 {
					f[k] += r.in.Fields[j][k]
				}
				fields[si] = f
			} else {
				p := phasors[si]
				for k := range 3 {
					p[k] += r.in.Phasors[j][k] * turn
				}
				phasors[si] = p
			}
		}
	}
	// The mean of n readings of sigmas s_k has sigma sqrt(sum s_k^2) / n:
	// the commissioning fit weighs its readings, and tells a resolved
	// line from an unresolved pair, by that, not by one window's noise.
	var perWindow []float64 // each sensor's RMS window noise
	var scattered []float64 // the same from the windows' own scatter
	for si := range nsensors {
		n := counts[si]
		if n == 0 {
			continue
		}
		sum.Points = append(sum.Points, pos[si])
		if v := variance[si]; v > 0 {
			sum.Sigmas = append(sum.Sigmas, math.Sqrt(v)/float64(n))
			perWindow = append(perWindow, math.Sqrt(v/float64(n)))
		}
		if v := measured[si]; v > 0 {
			scattered = append(scattered, math.Sqrt(v/float64(n)))
		}
		if ac {
			p := phasors[si]
			for k := range 3 {
				p[k] /= complex(float64(n), 0)
			}
			sum.Phasors = append(sum.Phasors, p)
		} else {
			f := fields[si]
			for k := range 3 {
				f[k] /= float64(n)
			}
			sum.Fields = append(sum.Fields, f)
		}
	}
	if len(sum.Sigmas) == len(sum.Points) && len(sum.Sigmas) > 0 {
		// One value for the fit: the median sensor's, as reduce does.
		sorted := append([]float64(nil), sum.Sigmas...)
		sort.Float64s(sorted)
		sum.Sigma = sorted[len(sorted)/2]
		sort.Float64s(perWindow)
		sum.WindowSigma = perWindow[len(perWindow)/2]
	} else {
		sum.Sigmas = nil
		if len(scattered) == len(sum.Points) && len(scattered) > 0 {
			// noise = 0: the fit is weighed by its own residuals as
			// before, but its misfit is judged (commissionMisfit)
			// against the noise the windows measured, as each window's
			// fit is (judged); without it lines that miss a flat bar by
			// thousands of times the noise were stored.
			sort.Float64s(scattered)
			sum.WindowSigma = scattered[len(scattered)/2]
		}
	}
	return sum
}

// farFromPoint is the distance (m) across its line from the point the
// site file gives a commissioned conductor beyond which it is warned of:
// a point is where the conductor runs, roughly, and a metre is several
// core spacings and more than a drawing's usual error.
const farFromPoint = 1.0

// sameNames reports whether a and b hold the same conductor names, in any
// order.
func sameNames(a, b []ConductorConfig) bool {
	n := map[string]int{}
	for _, c := range a {
		n[c.Name]++
	}
	for _, c := range b {
		n[c.Name]--
	}
	for _, v := range n {
		if v != 0 {
			return false
		}
	}
	return true
}

// nameDiff says how the conductor names of stored differ from those of
// site ("" when they are the same, in any order): those the site file
// adds and those it no longer has.
func nameDiff(stored, site []ConductorConfig) string {
	if sameNames(stored, site) {
		return ""
	}
	has := func(cs []ConductorConfig, name string) bool {
		for _, c := range cs {
			if c.Name == name {
				return true
			}
		}
		return false
	}
	var added, gone []string
	for _, c := range site {
		if !has(stored, c.Name) {
			added = append(added, c.Name)
		}
	}
	for _, c := range stored {
		if !has(site, c.Name) {
			gone = append(gone, c.Name)
		}
	}
	var parts []string
	if len(added) > 0 {
		parts = append(parts, "the site file adds "+strings.Join(added, ", "))
	}
	if len(gone) > 0 {
		parts = append(parts, "the site file no longer has "+strings.Join(gone, ", "))
	}
	if len(parts) == 0 {
		parts = append(parts, fmt.Sprintf("%d conductors stored, %d in the site file", len(stored), len(site)))
	}
	return strings.Join(parts, "; ")
}

// conductorNames returns the names of cs.
func conductorNames(cs []ConductorConfig) []string {
	out := make([]string, len(cs))
	for i, c := range cs {
		out[i] = c.Name
	}
	return out
}

// CommissionedGeometry is the geometry a commissioned asset holds
// (AssetInfo.Geometry): where commissioning put each conductor, and how
// well, for comparison with a survey of the route.
type CommissionedGeometry struct {
	// From and To are the sensor times (Unix seconds) of the readings it
	// was fitted to; Worker the worker that fitted it.
	From   float64 `json:"from"`
	To     float64 `json:"to"`
	Worker string  `json:"worker,omitempty"`
	// Conductors are the conductors held, in the stored order.
	Conductors []CommissionedConductor `json:"conductors"`
}

// CommissionedConductor is one conductor of a CommissionedGeometry. The
// sigmas are one sigma, propagated (delta method) from the commissioning
// fit's covariance (geometryUncertainty); absent when none was stored (a
// geometry of an earlier version, or one whose covariance could not be
// found).
type CommissionedConductor struct {
	Name string `json:"name"`
	// PointM is where the line passes under the sensors' centroid in plan
	// (east, north, up, m, the site's frame); Direction its unit direction.
	PointM      [3]float64  `json:"point_m"`
	PointSigmaM *[3]float64 `json:"point_sigma_m,omitempty"`
	Direction   [3]float64  `json:"direction"`
	// DepthM is the depth of PointM below the sensors' mean height (m).
	DepthM      float64  `json:"depth_m"`
	DepthSigmaM *float64 `json:"depth_sigma_m,omitempty"`
	// AzimuthDeg is the line's bearing in plan, degrees clockwise from
	// north, 0 to 180.
	AzimuthDeg      float64  `json:"azimuth_deg"`
	AzimuthSigmaDeg *float64 `json:"azimuth_sigma_deg,omitempty"`
}

// conductorPlace returns the published place of a line through p along d
// (CommissionedConductor): the point under centroid c in plan, its depth
// below height zs, and the azimuth (degrees, 0 to 180).
func conductorPlace(p, d, c [3]float64, zs float64) (pt [3]float64, depth, az float64) {
	d = unit(d)
	if h := d[0]*d[0] + d[1]*d[1]; h > 1e-12 {
		t := ((c[0]-p[0])*d[0] + (c[1]-p[1])*d[1]) / h
		pt = add(p, scale(d, t))
	} else {
		pt = p // vertical: no place under the centroid
	}
	az = math.Mod(math.Atan2(d[0], d[1])*180/math.Pi+360, 180)
	return pt, zs - pt[2], az
}

// publishedGeometry returns g as published for sensors (the asset's), the
// sigmas from g's covariance where it carries one.
func publishedGeometry(g *storedGeometry, sensors []SensorConfig) *CommissionedGeometry {
	var c [3]float64
	for _, s := range sensors {
		c = add(c, scale(s.Position, 1/float64(len(sensors))))
	}
	zs := c[2]
	out := &CommissionedGeometry{From: g.From, To: g.To, Worker: g.Worker, Conductors: []CommissionedConductor{}}
	// place is the published quantities of every conductor of conds: per
	// conductor point (3), depth, azimuth.
	place := func(conds []ConductorConfig) []float64 {
		var v []float64
		for _, k := range conds {
			pt, depth, az := conductorPlace(k.Point, k.Direction, c, zs)
			v = append(v, pt[0], pt[1], pt[2], depth, az)
		}
		return v
	}
	v0 := place(g.Conductors)
	for i, k := range g.Conductors {
		out.Conductors = append(out.Conductors, CommissionedConductor{Name: k.Name,
			PointM: [3]float64{v0[5*i], v0[5*i+1], v0[5*i+2]}, Direction: unit(k.Direction),
			DepthM: v0[5*i+3], AzimuthDeg: v0[5*i+4]})
	}
	u := g.Uncertainty
	if u == nil {
		return out
	}
	groups, err := storedGroups(g.Conductors, u)
	if err != nil {
		return out
	}
	base, sign, err := groupGeometry(g.Conductors, groups)
	if err != nil {
		return out
	}
	np := 0
	for _, b := range base {
		np += b.nparam()
	}
	if len(u.Covariance) != np {
		return out
	}
	// J, the derivatives of the published quantities with the fit's
	// parameters (central differences, 1e-6 m and rad, as the covariance
	// was found), then the variances diag(J C J'); C is already scaled by
	// the fit's reduced chi-square (geometryUncertainty.Scale).
	const h = 1e-6
	jac := make([][]float64, np)
	x := make([]float64, np)
	for j := range np {
		x[j] = h
		vp := place(shiftGeometry(g.Conductors, groups, base, sign, x))
		x[j] = -h
		vm := place(shiftGeometry(g.Conductors, groups, base, sign, x))
		x[j] = 0
		jac[j] = make([]float64, len(v0))
		for q := range v0 {
			dv := vp[q] - vm[q]
			if q%5 == 4 { // azimuth: across the wrap at 0/180
				dv = math.Remainder(dv, 180)
			}
			jac[j][q] = dv / (2 * h)
		}
	}
	sig := make([]float64, len(v0))
	for q := range v0 {
		var v float64
		for a := range np {
			for b := range np {
				v += jac[a][q] * u.Covariance[a][b] * jac[b][q]
			}
		}
		sig[q] = math.Sqrt(math.Max(v, 0))
	}
	for i := range out.Conductors {
		cc := &out.Conductors[i]
		ps := [3]float64{sig[5*i], sig[5*i+1], sig[5*i+2]}
		ds, as := sig[5*i+3], sig[5*i+4]
		cc.PointSigmaM, cc.DepthSigmaM, cc.AzimuthSigmaDeg = &ps, &ds, &as
	}
	return out
}

// storedGroups returns the groups conds were fitted in: u's, which the
// geometry stores beside its covariance, when they name every conductor
// once in groups of one or two lines; else those of conds' held pairs
// (conductorGroups). A geometry read back from uc_state has lost its
// conductors' held pairs (ConductorConfig.heldPair is not stored), so
// that a go-and-return pair would be taken for two free lines, whose
// parameter count does not match the covariance's.
func storedGroups(conds []ConductorConfig, u *geometryUncertainty) ([][]int, error) {
	if u != nil && len(u.Groups) > 0 {
		seen := make([]bool, len(conds))
		ok := true
		n := 0
		for _, g := range u.Groups {
			if len(g) != 1 && len(g) != 2 {
				ok = false
				break
			}
			for _, i := range g {
				if i < 0 || i >= len(conds) || seen[i] || (conds[i].Kind != "" && conds[i].Kind != "line") {
					ok = false
					break
				}
				seen[i] = true
				n++
			}
		}
		if ok && n == len(conds) {
			return u.Groups, nil
		}
	}
	return conductorGroups(conds)
}
