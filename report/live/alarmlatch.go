package live

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// latchedKinds are the alarm kinds that describe a condition lasting
// from window to window (a conductor over its rating, a go and return
// that do not cancel, a sensor silent, stuck, saturated or inconsistent
// with the others, a fit that misses the readings or fails, readings
// that do not look like nanotesla). Each is raised once, in the window
// where the condition begins for its subject; while it holds, later
// windows raise nothing more for it but list it in Estimate.Ongoing with
// the number of windows it has held, and the first window where it no
// longer holds carries an alarm of the same kind and subject marked
// Cleared, with that window's value (under the threshold) and the
// largest value while it held as Peak. A condition whose value measures
// how bad it is (see worsened) is raised again, marked Worsened, in the
// first window where it has grown by WorsenFactor over the value last
// alarmed. So a condition lasting a day is two alarms, not one per
// window, and cannot bury a new alarm in the listings, while one that
// grows is alarmed again as it grows. A gap in the data of the service's
// silent_after or more ends the hold: a condition that holds again after
// it is raised anew (Alarm.AfterGap). Events (step, data-lost) are
// raised in every window they concern.
//
// A degraded alarm of a window that could not be solved (quality
// "failed") is a condition of its own, apart from a fit that misses the
// readings (latchedState.Failed): a failed window can judge neither the
// misfit nor the readings, so it leaves the fit's conditions (degraded,
// implausible, inconsistent) and the currents' (over-current, imbalance)
// as they were, and the first solved window clears the failures.
var latchedKinds = map[string]bool{AlarmOverCurrent: true, AlarmImbalance: true, AlarmSilent: true, AlarmStuck: true, AlarmSaturated: true,
	AlarmDegraded: true, AlarmImplausible: true, AlarmInconsistent: true, AlarmShare: true, AlarmLowShare: true}

// WorsenFactor is how much a held condition must grow, over the value
// last alarmed for it, to be raised again (Alarm.Worsened): a leak of
// 20 A is alarmed again at 30 A, then at 45 A, and so on; a degraded fit
// or an inconsistent sensor when its misfit (the square root of the
// reduced chi-square: how many times the noise the readings are missed
// by) has grown by it, that is when the reduced chi-square reaches
// WorsenFactor^2 = 2.25 times the one last alarmed.
const WorsenFactor = 1.5

// worsened reports whether a held condition's value v has grown enough
// over last, the value last alarmed, to be raised again. Over-current
// and imbalance are currents, compared as they are, and so is a share;
// a low share worsens as it falls, to 1/WorsenFactor of the share last
// alarmed (0.4 again at 0.267); degraded and inconsistent are reduced
// chi-squares, compared by their square roots.
// The other kinds do not worsen: a sensor's stuck or clipped reading, a
// silence, a failed fit and an implausible check (the Earth's field out
// of range or a chi-square far below its degrees of freedom: readings in
// the wrong unit, which do not grow) carry no measure of how bad.
func worsened(kind string, failed bool, v, last float64) bool {
	if last == 0 || failed {
		return false
	}
	switch kind {
	case AlarmOverCurrent, AlarmImbalance, AlarmShare:
		return math.Abs(v) >= WorsenFactor*math.Abs(last)
	case AlarmLowShare:
		return WorsenFactor*math.Abs(v) <= math.Abs(last)
	case AlarmDegraded, AlarmInconsistent:
		return v >= WorsenFactor*WorsenFactor*last
	}
	return false
}

// judgedByFit reports whether kind is a judgement that only a solved
// window makes (its currents or its fit): a failed window leaves it as it
// was.
func judgedByFit(kind string) bool {
	switch kind {
	case AlarmOverCurrent, AlarmImbalance, AlarmDegraded, AlarmImplausible, AlarmInconsistent, AlarmShare, AlarmLowShare:
		return true
	}
	return false
}

// clearAfter: a degraded fit, once raised, is cleared only when its
// misfit has fallen WorsenFactor times under the largest max_chi2 allows
// (its reduced chi-square under max_chi2 / WorsenFactor^2, 11.1 for the
// default 25) in clearAfter windows in a row. A window's reduced
// chi-square scatters by sqrt(2/dof) of itself (a third with 20 degrees
// of freedom), so a fit that misses the readings by about max_chi2
// crosses it back and forth: without the deadband it was raised and
// cleared again every few windows (447 of 1000 windows degraded gave 260
// onsets and as many clearings; measured with synthWindow's harrow-fen
// windows, 10 nT of noise stated as 2 nT; with the deadband alone 19
// onsets, with the three windows 1), and one that seldom crosses it was
// raised and cleared at each crossing (48 of 1000 windows at 8 nT: 37
// onsets and clearings with the deadband alone, 5 with the three
// windows). The windows held so list it in ongoing (their quality is not
// "degraded"). An inconsistent sensor has a deadband of its own
// (inconsistentDeadband): it is held in a window that keeps it while the
// sensor would still be blamed but for max_chi2.
const clearAfter = 3

// needsLevel reports whether kind is cleared only by a window that
// recorded its value (setLevel): a window that could not judge it (a
// reduced chi-square not known, an Earth's field not seen) leaves it as
// it was.
//
// A share (AlarmShare, AlarmLowShare) is judged only in a window whose
// denominator is above its floor (shareAlarms): between trams, with the
// return current near zero, a held share is neither continued nor
// cleared.
func needsLevel(kind string) bool {
	return kind == AlarmDegraded || kind == AlarmImplausible || isShare(kind)
}

// isShare reports whether kind is a share's condition, above max_share
// or below min_share.
func isShare(kind string) bool { return kind == AlarmShare || kind == AlarmLowShare }

// setLevel records the window's value of a latched kind for subject,
// also when under its threshold (for the Cleared alarm's Value), and so
// that it was judged in the window (needsLevel).
func (p *processor) setLevel(kind, subject string, v float64) {
	if p.level == nil {
		p.level = map[string]float64{}
	}
	p.level[latchKey(kind, subject)] = v
}

// latchedState is an alarm raised at a condition's onset that has held
// since (processor.active, checkpointed as checkpoint.Ongoing).
type latchedState struct {
	Kind    string  `json:"kind"`
	Subject string  `json:"subject,omitempty"`
	Window  int64   `json:"window"` // the window it was raised in
	Since   float64 `json:"since"`  // that window's start, s
	Windows int     `json:"windows"`
	Peak    float64 `json:"peak"` // the value of largest magnitude
	// Last is the value last alarmed (at the onset or a worsening; a
	// checkpoint without it is read as Peak), Value this window's, and
	// Threshold the onset alarm's.
	Last      float64 `json:"last,omitempty"`
	Value     float64 `json:"value,omitempty"`
	Threshold float64 `json:"threshold,omitempty"`
	// Failed marks the degraded condition of windows that could not be
	// solved, held apart from a degraded fit (see latchedKinds).
	Failed bool `json:"failed,omitempty"`
	// At is the end of the last window the latch passed while the
	// condition was held (0 in a checkpoint from before it was kept: no
	// gap is seen), and Gap, s, a gap in the data of at least
	// processor.gapAfter met since, before the condition was judged again.
	At  float64 `json:"at,omitempty"`
	Gap float64 `json:"gap,omitempty"`
	// Quiet counts the windows in a row, up to this one, in which a held
	// degraded fit has been under its deadband (see clearAfter).
	Quiet int `json:"quiet,omitempty"`
}

func latchKey(kind, subject string) string { return kind + "/" + subject }

// latchKeyOf is the latch key of al: its kind and subject, and for the
// degraded alarm of a failed window, a key of its own.
func latchKeyOf(al Alarm) string {
	if al.fitFailed {
		return latchKey(al.Kind, al.Subject) + "/failed"
	}
	return latchKey(al.Kind, al.Subject)
}

// latch passes the window's alarms through the latched conditions: an
// alarm of a latched kind whose condition already holds is dropped (and
// counted) unless it has worsened (then it is kept, marked Worsened), one
// that begins is kept, and a condition that no longer holds gets a
// Cleared alarm. est.Ongoing is set. A condition that a window
// cannot judge (the currents and the fit's judgements, in a failed
// window; a degraded fit or an implausible check whose value the window
// did not give) is left as it was.
func (p *processor) latch(w *window, est *Estimate, alarms []Alarm) []Alarm {
	if p.active == nil {
		p.active = map[string]*latchedState{}
	}
	// A condition held before a gap in the data of gapAfter or more (no
	// data from any sensor: what the asset's silent alarm tells) was not
	// seen through the gap: when it holds after it, it is raised anew,
	// and when it does not, its clearing gives the gap.
	for _, st := range p.active {
		if g := w.Start - st.At; st.At > 0 && p.gapAfter > 0 && g >= p.gapAfter && g > st.Gap {
			st.Gap = g
		}
	}
	seen := map[string]bool{}
	out := alarms[:0:0]
	for _, al := range alarms {
		if !latchedKinds[al.Kind] {
			out = append(out, al)
			continue
		}
		k := latchKeyOf(al)
		if seen[k] {
			continue
		}
		seen[k] = true
		gap := 0.0
		if st, ok := p.active[k]; ok && st.Gap > 0 {
			gap = st.Gap
			delete(p.active, k)
			al.AfterGap = gap
			al.Message += fmt.Sprintf("; it held before a gap of %.4g s in the data (alarmed since the window starting %s, %d window(s)) and holds again after it: raised anew", gap, unixString(st.Since), st.Windows)
		}
		if st, ok := p.active[k]; ok {
			st.Windows++
			st.Value = al.Value
			st.Quiet = 0
			if worse(al.Kind, al.Value, st.Peak, st.Threshold) {
				st.Peak = al.Value
			}
			last := st.Last
			if last == 0 {
				last = st.Peak // a checkpoint from before Last was kept
			}
			if worsened(al.Kind, st.Failed, al.Value, last) {
				grown := "grown"
				if al.Kind == AlarmLowShare {
					grown = "fallen"
				}
				al.Message += fmt.Sprintf("; raised again: it has %s from %.4g, alarmed last, to %.4g since it began in the window starting %s", grown, last, al.Value, unixString(st.Since))
				al.Worsened, al.Previous, al.Since = true, last, st.Since
				st.Last = al.Value
				out = append(out, al)
			}
			continue
		}
		p.active[k] = &latchedState{Kind: al.Kind, Subject: al.Subject, Window: w.Index, Since: w.Start, Windows: 1,
			Peak: al.Value, Last: al.Value, Value: al.Value, Threshold: al.Threshold, Failed: al.fitFailed, At: w.End}
		switch {
		case al.Kind == AlarmDegraded && !al.fitFailed || al.Kind == AlarmInconsistent:
			al.Message += "; raised once while the condition lasts (the estimates list it as ongoing), again if its misfit grows to 1.5 times the one alarmed (the reduced chi-square to 2.25 times), and, marked cleared, when it ends"
		case al.Kind == AlarmOverCurrent || al.Kind == AlarmImbalance || al.Kind == AlarmShare:
			al.Message += "; raised once while the condition lasts (the estimates list it as ongoing), again if it grows to 1.5 times the value alarmed, and, marked cleared, when it ends"
		case al.Kind == AlarmLowShare:
			al.Message += "; raised once while the condition lasts (the estimates list it as ongoing), again if it falls to two thirds of the value alarmed, and, marked cleared, when it ends"
		default:
			al.Message += "; raised once while the condition lasts (the estimates list it as ongoing) and, marked cleared, when it ends"
		}
		out = append(out, al)
	}
	solved := est == nil || est.Quality != "failed"
	keys := make([]string, 0, len(p.active))
	for k := range p.active {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		st := p.active[k]
		st.At = w.End
		if seen[k] {
			if est != nil {
				est.Ongoing = append(est.Ongoing, OngoingAlarm{Kind: st.Kind, Subject: st.Subject, Since: st.Since, Windows: st.Windows, Value: st.Value})
			}
			continue
		}
		if !st.Failed {
			if !solved && judgedByFit(st.Kind) {
				continue // not judged in a window without currents or fit
			}
			if _, ok := p.level[k]; !ok && needsLevel(st.Kind) {
				// Not judged in this window. A share is still listed as
				// ongoing, with its last value and its count of judged
				// windows: between trams (most windows at a quiet
				// depot) the condition is held, not gone.
				if isShare(st.Kind) && est != nil {
					est.Ongoing = append(est.Ongoing, OngoingAlarm{Kind: st.Kind, Subject: st.Subject, Since: st.Since, Windows: st.Windows, Value: st.Value})
				}
				continue
			}
			if v, ok := p.level[k]; ok && (st.Kind == AlarmDegraded || st.Kind == AlarmInconsistent || isShare(st.Kind)) {
				// Within the deadband, or under it for fewer than
				// clearAfter windows: still held.
				hold := true
				var quiet bool
				switch st.Kind {
				case AlarmDegraded:
					limit := st.Threshold
					if now, _, ok := p.limitNow(st.Kind, st.Subject); ok && now > 0 {
						limit = now // max_chi2 changed since it was raised
					}
					quiet = v <= limit/(WorsenFactor*WorsenFactor)
				case AlarmShare, AlarmLowShare:
					quiet = p.shareQuiet[k] // past its deadband (shareAlarms)
				}
				if st.Kind == AlarmDegraded || isShare(st.Kind) {
					if !quiet {
						st.Quiet = 0
					} else {
						st.Quiet++
						hold = st.Quiet < clearAfter
					}
				}
				if hold {
					st.Windows++
					st.Value = v
					if est != nil {
						est.Ongoing = append(est.Ongoing, OngoingAlarm{Kind: st.Kind, Subject: st.Subject, Since: st.Since, Windows: st.Windows, Value: st.Value})
					}
					continue
				}
			}
		}
		delete(p.active, k)
		what := "the " + st.Kind + " condition"
		if st.Subject != "" {
			what += " of " + st.Subject
		}
		if st.Failed {
			what = "the failed windows (no estimate, alarmed degraded)"
		}
		now := p.level[k] // this window's value; 0 for a sensor condition
		vals := ""
		if _, ok := p.level[k]; ok {
			vals = fmt.Sprintf("; %.4g in this window", now)
		}
		if st.Peak != 0 {
			vals += fmt.Sprintf("; largest value %.4g", st.Peak)
			switch st.Kind {
			case AlarmImplausible:
				vals = strings.Replace(vals, "largest value", "value furthest from the threshold", 1)
			case AlarmLowShare:
				vals = strings.Replace(vals, "largest value", "smallest share", 1)
			}
		}
		upTo := "up to this one"
		if st.Gap > 0 {
			upTo = fmt.Sprintf("up to a gap of %.4g s in the data before this one (it may have ended in the gap)", st.Gap)
		}
		threshold, lead, changed := st.Threshold, "has cleared", ""
		if limit, key, ok := p.limitNow(st.Kind, st.Subject); ok && !st.Failed && limit != st.Threshold {
			// The site file in force now gives another limit than the one
			// the condition was raised against (a restart, or a takeover
			// by a worker with another site file): the clearing gives the
			// new one, and says when the value is still past the old.
			threshold = limit
			_, judged := p.level[k]
			if judged && pastLimit(st.Kind, now, st.Threshold) {
				lead = "is no longer held"
				changed = fmt.Sprintf("; the limit changed from %.4g to %.4g: no longer judged a condition (%s in the site file in force now; %.4g in this window is still past the former limit, so the condition itself has not ended)",
					st.Threshold, limit, key, now)
			} else {
				changed = fmt.Sprintf("; the limit also changed from %.4g to %.4g since it was raised (%s in the site file in force now)", st.Threshold, limit, key)
			}
			if limit == 0 {
				changed += "; 0 turns the alarm off"
			}
		}
		al := p.alarm(w, st.Kind, st.Subject, now, threshold,
			fmt.Sprintf("%s %s: it held from the window starting %s for %d window(s), %s%s%s", what, lead, unixString(st.Since), st.Windows, upTo, vals, changed))
		al.Cleared, al.Windows, al.Since, al.Peak, al.fitFailed, al.AfterGap = true, st.Windows, st.Since, st.Peak, st.Failed, st.Gap
		if threshold != st.Threshold {
			al.FormerThreshold = st.Threshold
		}
		out = append(out, al)
	}
	clear(p.level)
	clear(p.shareQuiet)
	return out
}

// limitNow is the threshold the asset's settings give now for a held
// condition of kind and subject, with the site-file key it comes from
// (and its unit); ok is false for the kinds whose threshold the site
// file does not give as one value (silent, stuck, saturated,
// implausible).
func (p *processor) limitNow(kind, subject string) (limit float64, key string, ok bool) {
	a := p.asset
	if a == nil {
		return 0, "", false
	}
	switch kind {
	case AlarmOverCurrent:
		v, own := a.conductorLimit(subject, "max_current")
		if own {
			return v, "conductor " + subject + " max_current, A", true
		}
		return v, "[asset.alarms] max_current, A", true
	case AlarmImbalance:
		return a.Alarms.MaxImbalance, "[asset.alarms] max_imbalance, A", true
	case AlarmDegraded, AlarmInconsistent:
		return a.Alarms.MaxChi2, "[asset.alarms] max_chi2", true
	case AlarmShare, AlarmLowShare:
		for i := range a.Conductors {
			c := &a.Conductors[i]
			if c.Name != subject {
				continue
			}
			if kind == AlarmShare {
				if c.MaxShare == nil {
					return 0, "conductor " + subject + " max_share", true
				}
				return *c.MaxShare, "conductor " + subject + " max_share", true
			}
			if c.MinShare == nil {
				return 0, "conductor " + subject + " min_share", true
			}
			return *c.MinShare, "conductor " + subject + " min_share", true
		}
	}
	return 0, "", false
}

// pastLimit reports whether v is past limit in the direction that raises
// an alarm of kind (below it for a low share, above it for the others).
func pastLimit(kind string, v, limit float64) bool {
	if kind == AlarmLowShare {
		return v < limit
	}
	return math.Abs(v) > limit
}

// worse reports whether v is a worse value of a held condition of kind
// than peak, the worst so far: for an implausible check the one further
// from the threshold (a field far below the range, a chi-square nearer 0),
// for a low share the smaller, for the others the one of larger
// magnitude.
func worse(kind string, v, peak, threshold float64) bool {
	switch kind {
	case AlarmImplausible:
		return math.Abs(v-threshold) > math.Abs(peak-threshold)
	case AlarmLowShare:
		return v < peak
	}
	return math.Abs(v) > math.Abs(peak)
}

// alarmID is the message id of alarm al of the window whose id is id.
func alarmID(id string, al Alarm) string {
	s := id + "/" + al.Kind + "/" + al.Subject
	if al.Cleared {
		s += "/cleared"
		if al.fitFailed {
			s += "/failed" // a failure and a degraded fit may clear together
		}
	}
	return s
}
