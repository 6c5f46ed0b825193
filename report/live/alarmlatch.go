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
// subject marked Cleared. So a condition lasting a day is two alarms, not
// one per window, and cannot bury a new alarm in the listings. Events
// (step, data-lost) and the judgements of a window's fit (degraded,
// implausible, inconsistent) are raised in every window they concern.
var latchedKinds = map[string]bool{AlarmOverCurrent: true, AlarmImbalance: true, AlarmSilent: true, AlarmStuck: true, AlarmSaturated: true}

// latchedState is an alarm raised at a condition's onset that has held
// since (processor.active, checkpointed as checkpoint.Ongoing).
type latchedState struct {
	Kind    string  `json:"kind"`
	Subject string  `json:"subject,omitempty"`
	Window  int64   `json:"window"` // the window it was raised in
	Since   float64 `json:"since"`  // that window's start, s
	Windows int     `json:"windows"`
	Peak    float64 `json:"peak"` // the value of largest magnitude
}

func latchKey(kind, subject string) string { return kind + "/" + subject }

// latch passes the window's alarms through the latched conditions: an
// alarm of a latched kind whose condition already holds is dropped (and
// counted), one that begins is kept, and a condition that no longer holds
// gets a Cleared alarm. est.Ongoing is set. A condition that a window
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
			if math.Abs(al.Value) > math.Abs(st.Peak) {
				st.Peak = al.Value
			}
			continue
		}
		p.active[k] = &latchedState{Kind: al.Kind, Subject: al.Subject, Window: w.Index, Since: w.Start, Windows: 1, Peak: al.Value}
		al.Message += "; raised once while the condition lasts (the estimates list it as ongoing), and again, marked cleared, when it ends"
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
				est.Ongoing = append(est.Ongoing, OngoingAlarm{Kind: st.Kind, Subject: st.Subject, Since: st.Since, Windows: st.Windows})
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
		peak := ""
		if st.Peak != 0 {
			peak = fmt.Sprintf("; largest value %.4g", st.Peak)
		}
		al := p.alarm(w, st.Kind, st.Subject, st.Peak, 0,
			fmt.Sprintf("%s has cleared: it held from the window starting %s for %d window(s), up to this one%s", what, unixString(st.Since), st.Windows, peak))
		al.Cleared, al.Windows, al.Since = true, st.Windows, st.Since
		out = append(out, al)
	}
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
