package live

import (
	"fmt"
	"strconv"
	"time"
)

// outOfOrderRun is a run of one sensor's batches refused as out of order
// (nothing after the sensor's last sample) with none of its batches filed
// in between: a gateway whose clock was set back, or one sending again
// data already had (checkpoint.OutOfOrder, by sensor name). Its times are
// the broker's clock when the batches were stored (Unix s), so that a
// takeover reading them again judges them as this worker did.
type outOfOrderRun struct {
	FirstSeq uint64  `json:"first_seq"`
	From     float64 `json:"from"`
	To       float64 `json:"to"`
	Batches  int     `json:"batches"`
	// Behind is how far the run's last batch ended before the sensor's
	// last sample, s.
	Behind float64 `json:"behind"`
	// DataFrom and DataTo are the earliest start and latest end of the
	// refused batches' samples (sensor clock, s): the data the run holds.
	DataFrom float64 `json:"data_from,omitempty"`
	DataTo   float64 `json:"data_to,omitempty"`
	// Alarmed says the out-of-order alarm was raised for the run; Since
	// is the start of the window it was placed in.
	Alarmed bool    `json:"alarmed,omitempty"`
	Since   float64 `json:"since,omitempty"`
}

// span is the broker's time the run has lasted, s.
func (r *outOfOrderRun) span() float64 { return r.To - r.From }

// note adds a refused batch (sequence seq, stored at stored, Unix s,
// samples from t0 to t1, ending behind s before the sensor's last sample)
// to the run, and reports whether the run has now become one to alarm:
// two batches or more over margin (grace plus a window) of the broker's
// clock, holding margin of the sensor's data or more, as a clock jump is
// confirmed by that much data. A single stray batch, a burst sent again
// at once (a gateway resending its buffer), or one batch sent again now
// and then (a link dropping before the gateway hears its batch was
// stored) does not alarm; a sensor whose data is refused for longer does,
// once.
func (r *outOfOrderRun) note(seq uint64, stored, t0, t1, behind, margin float64) bool {
	if r.Batches == 0 {
		r.FirstSeq, r.From = seq, stored
		r.DataFrom, r.DataTo = t0, t1
	}
	r.To = max(r.To, stored)
	r.DataFrom, r.DataTo = min(r.DataFrom, t0), max(r.DataTo, t1)
	r.Batches++
	r.Behind = behind
	return !r.Alarmed && r.Batches >= 2 && r.span() >= margin && r.DataTo-r.DataFrom >= margin
}

// noteOutOfOrder counts a batch of sensor (sequence seq, stored by the
// broker at stored, samples from first to last) refused as out of order in the
// sensor's run of them, and raises the out-of-order alarm, once per run,
// when the run reaches outOfOrderRun.note's threshold. The alarm goes in
// the window after the last published one (or the asset's earliest
// unpublished one), as clock-jump does, so that the alarm history stays
// in window order. Called only for a message no earlier holder examined
// (the checkpoint's runs count those).
func (w *assetWorker) noteOutOfOrder(sensor string, seq uint64, stored time.Time, first, last float64) error {
	if w.ck.OutOfOrder == nil {
		w.ck.OutOfOrder = map[string]*outOfOrderRun{}
	}
	r := w.ck.OutOfOrder[sensor]
	if r == nil {
		r = &outOfOrderRun{}
		w.ck.OutOfOrder[sensor] = r
	}
	water := w.asm.water[w.sens[sensor]]
	margin := w.asm.aheadMargin()
	if !r.note(seq, unixSeconds(stored), first, last, water-last, margin) {
		return nil
	}
	win := w.eventWindow(water)
	r.Alarmed, r.Since = true, win.Start
	msg := fmt.Sprintf("sensor %s of asset %s sent %d batch(es) over %.3g s of the broker's clock that go back before its last sample (%s), the last one ending %.3g s before it; they were refused (uc.dlq.out-of-order), not processed, and its batches will be until their times pass that sample: check the gateway's clock (set back?) or whether it sends data again; raised once until a batch of the sensor is accepted, which clears it",
		sensor, w.asset.Name, r.Batches, r.span(), unixString(water), r.Behind)
	w.log.Warn("sensor batches out of order", "sensor", sensor, "batches", r.Batches, "span_s", r.span(), "behind_s", r.Behind, "last_sample", unixString(water))
	al := w.proc.alarm(win, AlarmOutOfOrder, sensor, r.span(), margin, msg)
	return w.publishAlarm(al, w.msgID(win.Index)+"/"+al.Kind+"/"+sensor+"/"+strconv.FormatUint(r.FirstSeq, 10))
}

// inOrder ends sensor's run of out-of-order refusals, when it has one, as
// one of its batches was accepted: an alarmed run gets its cleared
// record (not counted in uc_alarms_total), placed as its onset was.
func (w *assetWorker) inOrder(sensor string) error {
	r := w.ck.OutOfOrder[sensor]
	if r == nil {
		return nil
	}
	delete(w.ck.OutOfOrder, sensor)
	if !r.Alarmed {
		return nil
	}
	water := w.asm.water[w.sens[sensor]]
	win := w.eventWindow(water)
	msg := fmt.Sprintf("sensor %s of asset %s sends in order again: its batch ending %s was accepted after %d batch(es) refused as out of order over %.3g s of the broker's clock",
		sensor, w.asset.Name, unixString(water), r.Batches, r.span())
	w.log.Info("sensor batches in order again", "sensor", sensor, "refused", r.Batches, "span_s", r.span())
	al := w.proc.alarm(win, AlarmOutOfOrder, sensor, 0, w.asm.aheadMargin(), msg)
	al.Cleared, al.Since, al.Peak = true, r.Since, r.span()
	return w.publishAlarm(al, w.msgID(win.Index)+"/"+al.Kind+"/"+sensor+"/"+strconv.FormatUint(r.FirstSeq, 10)+"/cleared")
}

// eventWindow is the window an alarm raised outside the windows' own
// processing goes in: the one after the last published window, or,
// before any was published, the asset's earliest unpublished one or
// that of time t, whichever is first.
func (w *assetWorker) eventWindow(t float64) *window {
	L := w.asset.Window.Seconds()
	idx := w.ck.Window + 1
	if w.ck.Done == 0 {
		idx = w.asm.index(t)
		if k, ok := w.firstUnpublished(); ok && k < idx {
			idx = k
		}
	}
	return &window{Index: idx, Start: float64(idx) * L, End: float64(idx+1) * L}
}
