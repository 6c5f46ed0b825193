package live

import (
	"fmt"
	"math"
	"time"

	"undercurrent/ingest/broker"
)

// paceLive is the fastest pace, in seconds of data time per second of the
// broker's clock, at which a sensor counts as live. A source running
// faster (a log replayed at --speed 2 or more, or as fast as the broker
// takes it) is ahead of the clock by its own doing, and a gap in it is
// not a clock jump. A live sensor's pace is 1 within its clock's drift;
// 1.1 leaves room for a gateway sending its batches in bursts (the pace
// is measured over paceSpan), and keeps a replay at --speed 1.2 or more
// that stalled before a gap from counting as live (rg17a: false alarms
// at 1.2 and 1.5 with 1.5).
const paceLive = 1.1

// paceCatch is the fastest pace a replay is taken to catch up to its
// schedule at (see clockAhead): a replay at up to this speed that
// stalled is not live by its lead over the clock.
const paceCatch = 1.5

// maxAheadHeld bounds a run of batches held as ahead of the broker's
// clock; a run that long is taken as confirmed (see clockAhead).
const maxAheadHeld = 4096

// paceTrack follows one sensor's data time against the broker's clock
// (both Unix s): the pace is measured from an anchor between one and two
// spans of the clock back (the first batch until then) to the last batch
// filed.
type paceTrack struct {
	d0, w0 float64 // older anchor: last sample time, stored time
	d1, w1 float64 // newer anchor
	d, w   float64 // the last batch filed
	n      int
}

func (p *paceTrack) note(d, w, span float64) {
	switch {
	case p.n == 0:
		p.d0, p.w0, p.d1, p.w1 = d, w, d, w
	case w-p.w1 >= span:
		p.d0, p.w0 = p.d1, p.w1
		p.d1, p.w1 = d, w
	}
	p.d, p.w = d, w
	p.n++
}

// rate is the pace, s of data per s of clock; ok is false until two
// batches stored apart in time were noted.
func (p *paceTrack) rate() (r float64, ok bool) {
	if p.n < 2 || !(p.w > p.w0) {
		return 0, false
	}
	return (p.d - p.d0) / (p.w - p.w0), true
}

// clockJump is what became of a run of one sensor's batches held as
// ahead of the broker's clock: given up (the sensor's data went on from
// before them), filed as dated (confirmed: the sensor kept sending in
// line with them), or filed as the clock reached them.
type clockJump struct {
	sensor    int
	from, to  float64 // first and last sample time of the run
	ahead     float64 // how far the run's first batch was ahead of the broker's clock, s
	batches   int
	given     bool // given up (else filed)
	confirmed bool // filed as dated: the sensor kept to the jumped clock
	along     int  // the sensor whose confirmed run carried this one, or -1
	repeat    bool // given up within paceSpan of the sensor's last run given up: no new alarm
	why       string
}

func unixSeconds(t time.Time) float64 { return float64(t.UnixNano()) / 1e9 }

// aheadMargin is how far a batch may start ahead of the broker's clock,
// and ahead of where its sensor's pace puts it, before clockAhead holds
// it: grace plus a window, as for the other sensors. A held run is
// confirmed once it covers this much data.
func (a *assembler) aheadMargin() float64 { return a.grace + a.L }

// paceSpan is the span of the broker's clock a sensor's pace is measured
// over (between one and two of it).
func (a *assembler) paceSpan() float64 { return 10 * a.aheadMargin() }

// clockAhead holds a batch of sensor s whose clock jumped forward (a
// gateway clock stepped forward, or a batch forged with a future time):
// one from a sensor at a live pace (at most paceLive over its last
// paceSpan) that starts more than aheadMargin after where that pace puts
// it (its last sample plus paceLive times the broker's time since that
// batch was stored) and more than aheadMargin ahead of the broker's
// clock (a.clock). Data resuming after a pause is not ahead of the clock;
// a log replayed faster than real time is not at a live pace; a log
// replayed at up to paceLive with a gap in it stays in line with its
// pace across the gap (replay waits the gap out at its speed). Filed at
// once, such a batch would become the sensor's last sample, and every
// true batch after it would be refused as out of order until the wall
// clock reached it.
//
// What becomes of the held run is decided by the sensor's further data,
// not by the time held: when its next batch goes back before the run, the
// run is given up (takeRejected; a clockJump for the alarm) and that
// batch is filed; when the sensor goes on in line with the run until it
// covers aheadMargin of data in two batches or more (or maxAheadHeld
// batches), the run is filed as dated, and so are the other sensors'
// runs in line with it (a gateway's clock moves all its sensors); when
// the broker's clock, or the wall clock (release), reaches the run, it is
// filed with no alarm. Filed batches whose windows were closed meanwhile
// go to lateHeld, not away. clockAhead reports whether it dealt with b
// (held it, perhaps filing it with its run: res is heldAhead); otherwise
// b (perhaps trimmed) is filed as usual.
//
// A batch marked as replayed (broker.HeaderReplay, a.marked: undercurrent
// replay sets it) never starts a hold: a replay's pace says nothing of a
// live clock (one faster than paceCatch whose pace a long stall pulled
// under paceLive, catching up across a gap, would be held and kept with a
// false clock-jump alarm). The mark turns off this hold and nothing else:
// the max_ahead refusal (checkTimes), the hold for a sensor far ahead of
// every other (addMsg), the out-of-order refusal and its alarm still
// apply, and a run already held goes on as above. So a client that marks
// a jump of every sensor of an asset gets it processed as dated with no
// clock-jump alarm, as a gateway account can already by sending grace
// plus a window of data in line for every sensor (with the alarm); the
// data sent after it is refused as out of order, with an out-of-order
// alarm, up to max_ahead.
func (a *assembler) clockAhead(s int, seq uint64, b *broker.Batch, now time.Time, subj string, data []byte) (*broker.Batch, addResult, bool) {
	if h := a.ahead[s]; len(h) > 0 {
		if b.Time[0] < h[0].b.Time[0] {
			a.giveUpAhead(s, now, fmt.Sprintf("the sensor's next batch, from %v (%s), goes back before them: its clock jumped forward and back", b.Time[0], unixString(b.Time[0])))
			return b, added, false
		}
		last := h[len(h)-1].b
		if end := last.Time[last.Len()-1]; b.Time[0] <= end {
			n := b.Len()
			b = trimBefore(b, end)
			a.overlap += n - b.Len()
			if b.Len() == 0 {
				return b, outOfOrder, true
			}
		}
		var stored float64
		if !a.clock.IsZero() {
			stored = unixSeconds(a.clock)
		}
		h = append(h, heldBatch{seq: seq, b: b, at: now, subj: subj, data: data, clock: true, stored: stored})
		a.ahead[s] = h
		a.seen[s] = now
		switch {
		case !a.clock.IsZero() && b.Time[0] <= stored+a.aheadMargin():
			a.fileAhead(s, now, "the broker's clock reached the sensor's data")
		case len(h) >= 2 && aheadSpan(h) >= a.aheadMargin() || len(h) >= maxAheadHeld:
			if !a.othersMoved(s, now) {
				// The other sensors go on at the broker's clock: the jump
				// is this sensor's alone, and its data is left to the
				// hold for a sensor far ahead of every other (addMsg).
				a.held[s] = append(a.held[s], h...)
				a.ahead[s] = nil
				for i := range a.held[s] {
					a.held[s][i].clock = false
				}
				if n := len(a.held[s]); n > maxHeld {
					a.reject(s, n-maxHeld, fmt.Sprintf("more than %d batches of the sensor were held", maxHeld))
				}
				return b, heldBack, true
			}
			if len(h) >= maxAheadHeld {
				a.confirmAhead(s, now, fmt.Sprintf("the sensor sent %d batches in line with them", len(h)))
			} else {
				a.confirmAhead(s, now, fmt.Sprintf("the sensor went on sending in line with them: %d batches covering %.3g s", len(h), aheadSpan(h)))
			}
		}
		return b, heldAhead, true
	}
	if len(a.held[s]) > 0 {
		return b, added, false // left to the hold for a sensor far ahead of the others
	}
	if a.marked {
		return b, added, false // a replayed log: its pace is not a live one
	}
	p := &a.pace[s]
	if a.clock.IsZero() || math.IsInf(a.water[s], -1) || p.n == 0 {
		return b, added, false
	}
	if r, ok := p.rate(); ok && r > paceLive {
		return b, added, false // replayed faster than real time
	}
	clock := unixSeconds(a.clock)
	if b.Time[0]-a.water[s] <= a.aheadMargin()+paceLive*math.Max(0, clock-p.w) || b.Time[0] <= clock+a.aheadMargin() {
		return b, added, false
	}
	if b.Time[0]-clock <= p.d0-p.w0+(paceCatch-1)*(clock-p.w0)+a.aheadMargin() {
		// Its lead over the clock grew no more since the pace's older
		// anchor than a replay at up to paceCatch would gain: a replay
		// that fell behind its schedule (a stall, a slow broker) and
		// caught up across a gap, as its measured pace then is below it.
		return b, added, false
	}
	if q, k := a.others(now, s); k >= 1 && b.Time[0] <= q+a.aheadMargin() {
		return b, added, false // in line with another sensor of the asset
	}
	a.ahead[s] = []heldBatch{{seq: seq, b: b, at: now, subj: subj, data: data, clock: true, ahead: b.Time[0] - clock, stored: clock}}
	a.seen[s] = now
	return b, heldAhead, true
}

// othersMoved reports whether every other sensor of the asset heard from
// lately moved with sensor s's held run: has a run held as ahead of the
// clock too, or has data within aheadMargin of the run's start. A run
// is confirmed only then (a gateway's clock moves all its sensors);
// one sensor jumping alone while the others go on at the broker's clock
// is far ahead of them, and filing its run would open windows far in
// the future that the others never reach.
func (a *assembler) othersMoved(s int, now time.Time) bool {
	start := a.ahead[s][0].b.Time[0]
	for o := range a.water {
		if o == s || !a.heard(o, now) || len(a.ahead[o]) > 0 {
			continue
		}
		if a.water[o] < start-a.aheadMargin() {
			return false
		}
	}
	return true
}

// aheadSpan is the sample time a held run covers, s.
func aheadSpan(h []heldBatch) float64 {
	last := h[len(h)-1].b
	return last.Time[last.Len()-1] - h[0].b.Time[0]
}

// releaseAhead files the runs held as ahead of the clock that the wall
// clock has reached, or that another sensor's data has reached (the run
// is in line with the asset), before any window they fall in can close.
func (a *assembler) releaseAhead(now time.Time) {
	t := unixSeconds(now)
	for s, h := range a.ahead {
		if len(h) == 0 {
			continue
		}
		start := h[0].b.Time[0]
		if start <= t+a.aheadMargin() {
			a.fileAhead(s, now, "the wall clock reached it")
			continue
		}
		for o, w := range a.water {
			if o != s && w >= start && a.heard(o, now) {
				a.fileAhead(s, now, "another sensor's data reached it")
				break
			}
		}
	}
}

// giveUpAhead gives up sensor s's run held as ahead of the clock. A
// run given up within paceSpan of the sensor's last one given up is a
// repeat of the same episode (a clock flipping back and forth): its
// clockJump says so, for the caller to log rather than alarm.
func (a *assembler) giveUpAhead(s int, now time.Time, why string) {
	h := a.ahead[s]
	a.ahead[s] = nil
	for i := range h {
		h[i].why = why
	}
	a.rejected = append(a.rejected, h...)
	j := a.jump(s, h, why)
	j.repeat = !a.gaveUp[s].IsZero() && now.Sub(a.gaveUp[s]).Seconds() < a.paceSpan()
	a.gaveUp[s] = now
	a.jumps = append(a.jumps, j)
}

// fileAhead files sensor s's held run, in order, when the clock reached
// it: it was not a jump.
func (a *assembler) fileAhead(s int, now time.Time, why string) {
	h := a.ahead[s]
	a.ahead[s] = nil
	for _, x := range h {
		a.fileHeld(s, x, now, "it was held as ahead of the broker's clock and filed when "+why)
		if x.stored > 0 {
			a.pace[s].note(x.b.Time[x.b.Len()-1], x.stored, a.paceSpan())
		}
	}
	j := a.jump(s, h, why)
	j.given = false
	a.jumps = append(a.jumps, j)
}

// confirmAhead files sensor s's held run as dated (its clock did jump
// and stays there), and with it every other sensor's run in line with it.
func (a *assembler) confirmAhead(s int, now time.Time, why string) {
	a.keepAhead(s, now, why, -1)
	for o, h := range a.ahead {
		if len(h) > 0 && h[0].b.Time[0] <= a.water[s]+a.aheadMargin() {
			a.keepAhead(o, now, "it is in line with the data of a sensor whose jump was confirmed", s)
		}
	}
}

func (a *assembler) keepAhead(s int, now time.Time, why string, along int) {
	h := a.ahead[s]
	a.ahead[s] = nil
	for _, x := range h {
		a.fileHeld(s, x, now, "it was held as ahead of the broker's clock, and its sensor's windows were closed before the jump was confirmed")
	}
	// The sensor's pace starts again from the run.
	a.pace[s] = paceTrack{}
	for _, x := range []heldBatch{h[0], h[len(h)-1]} {
		if x.stored > 0 {
			a.pace[s].note(x.b.Time[x.b.Len()-1], x.stored, a.paceSpan())
		}
	}
	j := a.jump(s, h, why)
	j.given, j.confirmed, j.along = false, true, along
	a.jumps = append(a.jumps, j)
}

// fileHeld files a held batch of sensor s; one whose every sample falls
// in a closed window goes to lateHeld, saying why it was held.
func (a *assembler) fileHeld(s int, x heldBatch, now time.Time, lateWhy string) {
	res, dropped := a.accept(s, x.seq, x.b, now)
	if res == late {
		x.why = lateWhy
		a.lateHeld = append(a.lateHeld, x)
		return
	}
	a.filed += x.b.Len() - dropped
}

func (a *assembler) jump(s int, h []heldBatch, why string) clockJump {
	return clockJump{sensor: s, from: h[0].b.Time[0], to: h[len(h)-1].b.Time[h[len(h)-1].b.Len()-1], ahead: h[0].ahead,
		batches: len(h), given: true, along: -1, why: why}
}

// takeJumps returns and forgets the clockJumps since the last call.
func (a *assembler) takeJumps() []clockJump {
	j := a.jumps
	a.jumps = nil
	return j
}

// takeFiled returns and forgets the held batches filed late, and the
// samples of held batches filed, since the last call.
func (a *assembler) takeFiled() (lateHeld []heldBatch, samples int) {
	lateHeld, samples = a.lateHeld, a.filed
	a.lateHeld, a.filed = nil, 0
	return lateHeld, samples
}
