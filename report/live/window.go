package live

import (
	"fmt"
	"math"
	"sort"
	"time"

	"undercurrent/ingest/broker"
)

// series holds one sensor's samples within one window.
type series struct {
	T, Bx, By, Bz []float64
}

func (s *series) len() int { return len(s.T) }

// window is one closed window of an asset: per-sensor samples in
// [Start, End), indexed like the asset's sensors.
type window struct {
	Index      int64 // Start = Index * window length
	Start, End float64
	Sensors    []series
	// Closed is the wall-clock time the window was closed (for latency).
	Closed time.Time
	// Reason says why it closed: "complete", "grace" (a sensor lagged) or
	// "idle" (no data for a while).
	Reason string
	// minSeq is the oldest stream sequence that fed the window.
	minSeq uint64
	// Expected is, per sensor, the samples its sample interval puts in a
	// window (0 when the interval is not known yet).
	Expected []int
}

// openWindow is a window still collecting samples.
type openWindow struct {
	idx     int64
	sensors []series
	minSeq  uint64
}

// assembler builds windows per asset in time order across its sensors.
//
// A sample at time t belongs to window k = floor(t/L + eps) (eps absorbs
// rounding of times on a boundary). Window k closes when every sensor's
// next expected sample (last time + its sample interval) falls in a later
// window, when the quorum time (see quorum) is Grace past the window's
// end, or when no data has arrived for Idle of wall time. Until a message
// stored after backlog arrives, Idle is at least resumeIdle: data that was
// already in the broker when the worker took the asset says nothing about
// whether its publisher is still sending.
//
// The quorum time is the latest time that a strict majority of the
// sensors heard from lately (within stale of wall time) have reached, not
// the furthest sensor's: one sensor whose clock jumps ahead cannot close
// the other sensors' windows. A batch that starts more than Grace plus a
// window ahead of every other sensor heard from lately (at least two,
// each taken as far as the wall time since it was heard from carries it)
// is held back: it is filed when another sensor catches up with it (all
// sensors resuming after a gap), and given up (takeRejected) when its
// sensor sends in line with the others again (a clock jump), when it has
// been held for stale, or when more than maxHeld pile up.
type assembler struct {
	L, grace float64
	n        int
	water    []float64   // last sample time per sensor
	dt       []float64   // sample interval per sensor (0 = unknown)
	dtN      []int       // how many intervals dt was measured over
	seen     []time.Time // wall time of each sensor's last batch in order
	held     [][]heldBatch
	rejected []heldBatch
	// ahead holds, per sensor, a run of batches that jumped ahead of the
	// sensor's own pace and of the broker's clock (see clockAhead); jumps
	// lists what became of such runs, for the caller to alarm.
	ahead [][]heldBatch
	jumps []clockJump
	// gaveUp is, per sensor, when a run held as ahead of the clock was
	// last given up (see giveUpAhead).
	gaveUp []time.Time
	// pace follows each sensor's data time against the broker's clock.
	pace []paceTrack
	// clock is the broker's clock when the batch being added was stored;
	// zero leaves the clock-jump check out. marked says that the batch
	// being added came marked as replayed (broker.HeaderReplay): its
	// pace is not taken for a live one (see clockAhead).
	clock  time.Time
	marked bool
	// lateHeld lists held batches that were filed after every window they
	// fall in was closed, for the caller to refuse as late; filed counts
	// the samples of held batches filed (for the samples counter).
	lateHeld []heldBatch
	filed    int
	// stale is how long (wall time) a sensor that sent nothing still counts
	// in the quorum; 0 counts every sensor ever heard from.
	stale   time.Duration
	open    []*openWindow
	done    float64 // end of the last closed window; earlier samples are late
	lastSeq uint64
	arrival time.Time
	// backlog is the last stream sequence stored before the worker began
	// reading; fresh says a later message has arrived since.
	backlog    uint64
	fresh      bool
	resumeIdle time.Duration
	// overlap is how many samples at or before its sensor's last sample
	// addMsg dropped from the batch it was given last (data sent again).
	overlap int
}

const boundaryEps = 1e-7

func newAssembler(window, grace time.Duration, sensors int) *assembler {
	a := &assembler{L: window.Seconds(), grace: grace.Seconds(), n: sensors, done: math.Inf(-1)}
	if a.grace <= 0 {
		a.grace = 2 * a.L
	}
	a.water = make([]float64, sensors)
	a.dt = make([]float64, sensors)
	a.dtN = make([]int, sensors)
	a.seen = make([]time.Time, sensors)
	a.held = make([][]heldBatch, sensors)
	a.ahead = make([][]heldBatch, sensors)
	a.pace = make([]paceTrack, sensors)
	a.gaveUp = make([]time.Time, sensors)
	for i := range a.water {
		a.water[i] = math.Inf(-1)
	}
	return a
}

func (a *assembler) index(t float64) int64 { return int64(math.Floor(t/a.L + boundaryEps)) }

// addResult says what happened to a batch.
type addResult int

const (
	added      addResult = iota
	outOfOrder           // no sample after the sensor's last one
	late                 // every sample falls in a closed window
	outOfRange           // a time too large for a window index
	heldBack             // far ahead of the other sensors: held (see assembler)
	heldAhead            // jumped ahead of its own pace and the broker's clock: held (see clockAhead)
)

// maxWindowIndex bounds |t/L|: window indices and the times computed
// from them stay exact integers in a float64, far from int64 overflow.
const maxWindowIndex = 1 << 52

// heldBatch is a batch held back because it starts far ahead of every
// other sensor (see assembler).
type heldBatch struct {
	seq  uint64
	b    *broker.Batch
	at   time.Time // wall time it was held
	subj string    // message subject and payload, for a dead letter
	data []byte
	why  string // why it was given up
	// clock marks a batch held as ahead of the broker's clock (see
	// clockAhead); ahead is how far ahead of it the run started, s, and
	// stored the broker's clock when it was stored (Unix s).
	clock  bool
	ahead  float64
	stored float64
}

// maxHeld bounds the batches held per sensor; older ones are given up.
const maxHeld = 16

// add files the samples of b (sensor index s, stream sequence seq).
// A batch none of whose samples is after the sensor's last one is
// outOfOrder; one that straddles it loses the samples at or before it
// (a.overlap says how many) and files the rest. Samples before the end
// of the last closed window are dropped; dropped reports how many.
func (a *assembler) add(s int, seq uint64, b *broker.Batch, now time.Time) (res addResult, dropped int) {
	return a.addMsg(s, seq, b, now, "", nil)
}

// addMsg is add for a message with its subject and payload, which are
// kept with the batch if it is held (see rejected).
func (a *assembler) addMsg(s int, seq uint64, b *broker.Batch, now time.Time, subj string, data []byte) (res addResult, dropped int) {
	if seq > a.lastSeq {
		a.lastSeq = seq
	}
	n := b.Len()
	if !(math.Abs(b.Time[0]/a.L) < maxWindowIndex && math.Abs(b.Time[n-1]/a.L) < maxWindowIndex) {
		return outOfRange, 0 // checked before any state changes
	}
	a.arrival = now
	if seq > a.backlog {
		a.fresh = true
	}
	a.overlap = 0
	if b.Time[n-1] <= a.water[s] {
		return outOfOrder, 0
	}
	if b.Time[0] <= a.water[s] {
		// Straddles the sensor's last sample: data sent again (a gateway
		// resending its buffer, a replay run again with other batch
		// edges). The samples already had are dropped, the new ones kept.
		b = trimBefore(b, a.water[s])
		a.overlap = n - b.Len()
	}
	var held bool
	if b, res, held = a.clockAhead(s, seq, b, now, subj, data); held {
		return res, 0
	}
	if q, k := a.others(now, s); k >= 2 && b.Time[0] > q+a.grace+a.L {
		// Far ahead of every other sensor: either this sensor's clock
		// jumped or all sensors resumed after a gap and this one came
		// first. Held until the others catch up (released) or this sensor
		// sends in line with them again (given up).
		h := a.held[s]
		if len(h) > 0 && b.Time[0] <= h[len(h)-1].b.Time[h[len(h)-1].b.Len()-1] {
			a.reject(s, len(h), "a later batch of the sensor went back before it")
			h = nil
		}
		h = append(h, heldBatch{seq: seq, b: b, at: now, subj: subj, data: data})
		a.held[s] = h
		if len(h) > maxHeld {
			a.reject(s, len(h)-maxHeld, fmt.Sprintf("more than %d batches of the sensor were held", maxHeld))
		}
		a.seen[s] = now
		return heldBack, 0
	}
	if h := a.held[s]; len(h) > 0 {
		// Back in line with the other sensors: the held batches were a
		// clock jump.
		a.reject(s, len(h), fmt.Sprintf("the sensor's next batch, from %v, is in line with the other sensors: its clock jumped", b.Time[0]))
	}
	res, dropped = a.accept(s, seq, b, now)
	if !a.clock.IsZero() {
		a.pace[s].note(b.Time[b.Len()-1], unixSeconds(a.clock), a.paceSpan())
	}
	a.release(now)
	return res, dropped
}

// trimBefore returns b without its samples at or before t (times
// increase); the columns share b's arrays.
func trimBefore(b *broker.Batch, t float64) *broker.Batch {
	k := sort.Search(b.Len(), func(i int) bool { return b.Time[i] > t })
	c := *b
	c.Time, c.Bx, c.By, c.Bz = b.Time[k:], b.Bx[k:], b.By[k:], b.Bz[k:]
	if b.Temp != nil {
		c.Temp = b.Temp[k:]
	}
	return &c
}

// reject gives up the first k held batches of sensor s (see
// takeRejected), saying why.
func (a *assembler) reject(s, k int, why string) {
	for i := range k {
		a.held[s][i].why = why
	}
	a.rejected = append(a.rejected, a.held[s][:k]...)
	a.held[s] = append([]heldBatch(nil), a.held[s][k:]...)
}

// takeRejected returns and forgets the held batches given up since the last
// call, for the caller to refuse.
func (a *assembler) takeRejected() []heldBatch {
	r := a.rejected
	a.rejected = nil
	return r
}

// release files the held batches that are no longer ahead of the other
// sensors, and gives up those held for longer than stale.
func (a *assembler) release(now time.Time) {
	a.releaseAhead(now)
	for again := true; again; {
		again = false
		for s, h := range a.held {
			if len(h) == 0 {
				continue
			}
			if q, k := a.others(now, s); k >= 2 && h[0].b.Time[0] > q+a.grace+a.L {
				if a.stale > 0 && now.Sub(h[0].at) >= a.stale {
					a.reject(s, len(h), fmt.Sprintf("no other sensor caught up with it within %v", a.stale))
				}
				continue
			}
			a.held[s] = nil
			for _, x := range h {
				a.fileHeld(s, x, now, "it was held as far ahead of every other sensor, and the other sensors caught up with it")
			}
			again = true
		}
	}
}

// accept files a batch in order for sensor s.
func (a *assembler) accept(s int, seq uint64, b *broker.Batch, now time.Time) (res addResult, dropped int) {
	n := b.Len()
	a.seen[s] = now
	if n > 1 {
		a.dt[s], a.dtN[s] = (b.Time[n-1]-b.Time[0])/float64(n-1), n-1
	} else if d := b.Time[0] - a.water[s]; !math.IsInf(a.water[s], -1) && (a.dt[s] == 0 || a.dtN[s] <= 1 && d < a.dt[s]) {
		// One sample per batch: the interval from the previous sample,
		// the shortest seen (a pause only lengthens it).
		a.dt[s], a.dtN[s] = d, 1
	}
	a.water[s] = b.Time[n-1]
	i0 := 0
	for i0 < n && b.Time[i0] < a.done-boundaryEps*a.L {
		i0++
	}
	if i0 == n {
		return late, n
	}
	var w *openWindow
	for i := i0; i < n; i++ {
		k := a.index(b.Time[i])
		if w == nil || w.idx != k {
			w = a.window(k, seq)
		}
		sr := &w.sensors[s]
		sr.T = append(sr.T, b.Time[i])
		sr.Bx = append(sr.Bx, b.Bx[i])
		sr.By = append(sr.By, b.By[i])
		sr.Bz = append(sr.Bz, b.Bz[i])
	}
	return added, i0
}

// window returns the open window k, creating it in order.
func (a *assembler) window(k int64, seq uint64) *openWindow {
	i := sort.Search(len(a.open), func(i int) bool { return a.open[i].idx >= k })
	if i < len(a.open) && a.open[i].idx == k {
		if seq < a.open[i].minSeq {
			a.open[i].minSeq = seq
		}
		return a.open[i]
	}
	w := &openWindow{idx: k, sensors: make([]series, a.n), minSeq: seq}
	a.open = append(a.open, nil)
	copy(a.open[i+1:], a.open[i:])
	a.open[i] = w
	return w
}

// ready closes and returns the windows that can be closed, oldest first.
// idle > 0 closes everything open once no data arrived for that long.
func (a *assembler) ready(now time.Time, idle time.Duration) []*window {
	var out []*window
	a.release(now)
	qWater := a.quorum(now)
	idleNow := a.idleDue(now, idle)
	for len(a.open) > 0 {
		w := a.open[0]
		end := float64(w.idx+1) * a.L
		reason := ""
		switch {
		case a.complete(w.idx):
			reason = "complete"
		case qWater >= end+a.grace:
			reason = "grace"
		case idleNow:
			reason = "idle"
		}
		if reason == "" {
			break
		}
		a.open = a.open[1:]
		a.done = end
		out = append(out, &window{Index: w.idx, Start: float64(w.idx) * a.L, End: end, Sensors: w.sensors, Closed: now, Reason: reason, minSeq: w.minSeq, Expected: a.expected()})
	}
	return out
}

// idleDue reports whether ready(now, idle) would close the open windows
// for want of data: idle > 0 (at least resumeIdle until a message stored
// after backlog arrives) has passed since the last message arrived.
func (a *assembler) idleDue(now time.Time, idle time.Duration) bool {
	if idle > 0 && !a.fresh && a.resumeIdle > idle {
		idle = a.resumeIdle
	}
	return idle > 0 && len(a.open) > 0 && !a.arrival.IsZero() && now.Sub(a.arrival) >= idle
}

// heard reports whether sensor s has sent a batch within stale of now.
func (a *assembler) heard(s int, now time.Time) bool {
	return !math.IsInf(a.water[s], -1) && (a.stale <= 0 || now.Sub(a.seen[s]) < a.stale)
}

// others returns the latest time any sensor other than s heard from
// lately can have reached by now (its last sample time, held batches
// included, plus the wall time since it was heard from), and how many
// such sensors there are.
func (a *assembler) others(now time.Time, s int) (float64, int) {
	lead, k := math.Inf(-1), 0
	for o, w := range a.water {
		if o == s || !a.heard(o, now) {
			continue
		}
		k++
		if h := a.held[o]; len(h) > 0 {
			last := h[len(h)-1].b
			w = math.Max(w, last.Time[last.Len()-1])
		}
		lead = math.Max(lead, w+math.Max(0, now.Sub(a.seen[o]).Seconds()))
	}
	return lead, k
}

// quorum returns the quorum time of the sensors heard from within stale
// of now: the time that a strict majority of them have reached (with five
// sensors the third latest, the median; with two the earlier). It is -Inf
// when none was heard from.
func (a *assembler) quorum(now time.Time) float64 {
	var buf [16]float64
	ws := buf[:0]
	for s, w := range a.water {
		if a.heard(s, now) {
			ws = append(ws, w)
		}
	}
	if len(ws) == 0 {
		return math.Inf(-1)
	}
	sort.Float64s(ws)
	// A strict majority of k sensors is k/2+1 of them: the (k/2+1)-th latest.
	return ws[len(ws)-1-len(ws)/2]
}

// expected returns the samples per window of each sensor at its current
// sample interval dt (0 when not known): L/dt when that is a whole number
// to within the rounding of dt, else floor(L/dt), as windows then hold
// floor(L/dt) or one more. dt comes from times of about 2e9 s, each
// rounded to half a unit in the last place (ulp 2.4e-7 s): over k
// intervals it is off by up to ulp/k, which moves L/dt by up to
// (L/dt) ulp/(k dt): 0.06 for one interval of a 500 Hz sensor.
func (a *assembler) expected() []int {
	out := make([]int, a.n)
	for s, dt := range a.dt {
		x := a.L / dt
		if !(dt > 0) || !(x < 1e9) {
			continue
		}
		k := float64(max(a.dtN[s], 1))
		ulp := math.Nextafter(math.Abs(a.water[s]), math.Inf(1)) - math.Abs(a.water[s])
		tol := 0.01 + x*ulp/(k*dt)
		if r := math.Round(x); math.Abs(x-r) < tol {
			out[s] = int(r)
		} else {
			out[s] = int(math.Floor(x))
		}
	}
	return out
}

// complete reports whether no sensor can add to window k any more.
func (a *assembler) complete(k int64) bool {
	for s := range a.water {
		if math.IsInf(a.water[s], -1) {
			return false
		}
		next := a.water[s] + a.dt[s]
		if a.dt[s] == 0 {
			next = a.water[s]
		}
		if a.index(next) <= k {
			return false
		}
	}
	return true
}

// resumeSeq is the first stream sequence a successor must read again to
// rebuild the open windows: the oldest message feeding one, or the next
// message when nothing is open.
func (a *assembler) resumeSeq() uint64 {
	m := a.lastSeq + 1
	for _, w := range a.open {
		m = min(m, w.minSeq)
	}
	for _, h := range a.held {
		for _, x := range h {
			m = min(m, x.seq)
		}
	}
	for _, h := range a.ahead {
		for _, x := range h {
			m = min(m, x.seq)
		}
	}
	return m
}
