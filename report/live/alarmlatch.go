package live

import (
	"fmt"
	"math"
	"sort"
)

// latchedKinds are the alarm kinds that describe a condition lasting
// from window to window (a conductor over its rating, a go and return
// that do not cancel, a sensor silent, stuck or saturated). Each is
// raised once, in the window where the condition begins for its subject;
// while it holds, later windows raise nothing more for it but list it in
// Estimate.Ongoing with the number of windows it has held, and the first
// window where it no longer holds carries an alarm of the same kind and
// subject marked Cleared, with that window's value (under the threshold)
// and the largest value while it held as Peak. An over-current or
// imbalance that grows while it holds is raised again, marked Worsened,
// in the first window whose value reaches WorsenFactor times the value
// last alarmed. So a condition lasting a day is two alarms, not one per
// window, and cannot bury a new alarm in the listings, while one that
// grows is alarmed again as it grows. Events
// (step, data-lost) and the judgements of a window's fit (degraded,
// implausible, inconsistent) are raised in every window they concern.
var latchedKinds = map[string]bool{AlarmOverCurrent: true, AlarmImbalance: true, AlarmSilent: true, AlarmStuck: true, AlarmSaturated: true}

// WorsenFactor is how much a held over-current or imbalance must grow,
// over the value last alarmed for it, to be raised again (Alarm.Worsened):
// a leak of 20 A is alarmed again at 30 A, then at 45 A, and so on.
const WorsenFactor = 1.5

// worsens reports whether the kind's value measures how bad the
// condition is (a sensor's stuck or clipped reading does not).
func worsens(kind string) bool { return kind == AlarmOverCurrent || kind == AlarmImbalance }

// setLevel records the window's value of a latched kind for subject,
// also when under its threshold (for the Cleared alarm's Value).
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
}

func latchKey(kind, subject string) string { return kind + "/" + subject }

// latch passes the window's alarms through the latched conditions: an
// alarm of a latched kind whose condition already holds is dropped (and
// counted) unless it has worsened (then it is kept, marked Worsened), one
// that begins is kept, and a condition that no longer holds gets a
// Cleared alarm. est.Ongoing is set. A condition that a window
// cannot judge (its currents, in a failed window) is left as it was.
func (p *processor) latch(w *window, est *Estimate, alarms []Alarm) []Alarm {
	if p.active == nil {
		p.active = map[string]*latchedState{}
	}
	seen := map[string]bool{}
	out := alarms[:0:0]
	for _, al := range alarms {
		if !latchedKinds[al.Kind] {
			out = append(out, al)
			continue
		}
		k := latchKey(al.Kind, al.Subject)
		if seen[k] {
			continue
		}
		seen[k] = true
		if st, ok := p.active[k]; ok {
			st.Windows++
			st.Value = al.Value
			if math.Abs(al.Value) > math.Abs(st.Peak) {
				st.Peak = al.Value
			}
			last := st.Last
			if last == 0 {
				last = st.Peak // a checkpoint from before Last was kept
			}
			if worsens(al.Kind) && last != 0 && math.Abs(al.Value) >= WorsenFactor*math.Abs(last) {
				al.Message += fmt.Sprintf("; raised again: it has grown from %.4g, alarmed last, to %.4g since it began in the window starting %s", last, al.Value, unixString(st.Since))
				al.Worsened, al.Previous, al.Since = true, last, st.Since
				st.Last = al.Value
				out = append(out, al)
			}
			continue
		}
		p.active[k] = &latchedState{Kind: al.Kind, Subject: al.Subject, Window: w.Index, Since: w.Start, Windows: 1,
			Peak: al.Value, Last: al.Value, Value: al.Value, Threshold: al.Threshold}
		al.Message += "; raised once while the condition lasts (the estimates list it as ongoing), again if it grows to 1.5 times the value alarmed, and, marked cleared, when it ends"
		out = append(out, al)
	}
	currents := est == nil || est.Quality != "failed"
	keys := make([]string, 0, len(p.active))
	for k := range p.active {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		st := p.active[k]
		if seen[k] {
			if est != nil {
				est.Ongoing = append(est.Ongoing, OngoingAlarm{Kind: st.Kind, Subject: st.Subject, Since: st.Since, Windows: st.Windows, Value: st.Value})
			}
			continue
		}
		if !currents && (st.Kind == AlarmOverCurrent || st.Kind == AlarmImbalance) {
			continue // not judged in a window without currents
		}
		delete(p.active, k)
		what := "the " + st.Kind + " condition"
		if st.Subject != "" {
			what += " of " + st.Subject
		}
		now := p.level[k] // this window's value; 0 for a sensor condition
		vals := ""
		if _, ok := p.level[k]; ok {
			vals = fmt.Sprintf("; %.4g in this window", now)
		}
		if st.Peak != 0 {
			vals += fmt.Sprintf("; largest value %.4g", st.Peak)
		}
		al := p.alarm(w, st.Kind, st.Subject, now, st.Threshold,
			fmt.Sprintf("%s has cleared: it held from the window starting %s for %d window(s), up to this one%s", what, unixString(st.Since), st.Windows, vals))
		al.Cleared, al.Windows, al.Since, al.Peak = true, st.Windows, st.Since, st.Peak
		out = append(out, al)
	}
	clear(p.level)
	return out
}

// alarmID is the message id of alarm al of the window whose id is id.
func alarmID(id string, al Alarm) string {
	s := id + "/" + al.Kind + "/" + al.Subject
	if al.Cleared {
		s += "/cleared"
	}
	return s
}
