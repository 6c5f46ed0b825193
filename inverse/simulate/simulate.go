package simulate

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"runtime"
	"strconv"
	"sync"
	"sync/atomic"

	"undercurrent/ingest"
	"undercurrent/inverse"
)

// teslaToNT converts the forward models' tesla to nanotesla.
const teslaToNT = 1e9

// source is a conductor ready to evaluate: field returns its field at r, nT,
// at full DC strength or at RMS strength for AC; from time changeAt on
// (Unix seconds; +Inf for a steady current) after returns it instead.
type source struct {
	field    func(r [3]float64) [3]float64
	after    func(r [3]float64) [3]float64
	changeAt float64
	ac       bool
	freq     float64 // Hz
	phase    float64 // rad
}

// at returns the source's field at r at time t (RMS for AC).
func (s *source) at(r [3]float64, t float64) [3]float64 {
	if t >= s.changeAt {
		return s.after(r)
	}
	return s.field(r)
}

// sources builds the forward models of the scenario's conductors.
func (sc *Scenario) sources() []source {
	out := make([]source, 0, len(sc.Conductors))
	for _, c := range sc.Conductors {
		s := source{ac: c.Frequency > 0, freq: c.Frequency, phase: c.Phase * math.Pi / 180, changeAt: math.Inf(1)}
		after := c.Current
		if c.ChangeAt != nil {
			s.changeAt = sc.start + *c.ChangeAt
			after = *c.CurrentAfter
		}
		switch c.Kind {
		case "line":
			d := *c.Direction
			n := norm(d)
			l := inverse.Line{Point: *c.Point, Dir: [3]float64{d[0] / n, d[1] / n, d[2] / n}}
			cur := c.Current
			s.field = func(r [3]float64) [3]float64 { return scale(l.Field(r, cur), teslaToNT) }
			s.after = func(r [3]float64) [3]float64 { return scale(l.Field(r, after), teslaToNT) }
		case "polyline":
			p := inverse.Polyline{Vertices: c.Vertices}
			cur := c.segmentCurrents()
			s.field = func(r [3]float64) [3]float64 { return scale(p.Field(r, cur), teslaToNT) }
			// A change is only allowed with one current for all segments.
			curAfter := make([]float64, len(cur))
			for i := range curAfter {
				curAfter[i] = after
			}
			s.after = func(r [3]float64) [3]float64 { return scale(p.Field(r, curAfter), teslaToNT) }
		case "dipole":
			d := inverse.Dipole{Pos: *c.Position}
			m := *c.Moment
			s.field = func(r [3]float64) [3]float64 { return scale(d.Field(r, m), teslaToNT) }
			s.after = s.field
		}
		out = append(out, s)
	}
	return out
}

// harmonicSources builds the forward models of the conductors' further
// tones (Conductor.Harmonics), one source each, after all the conductors'
// own: they add to the log and to the peaks at their frequency, not to a
// conductor's own peak (PeakFields).
func (sc *Scenario) harmonicSources() []source {
	var out []source
	for _, c := range sc.Conductors {
		for _, h := range c.Harmonics {
			s := source{ac: true, freq: h.Frequency, phase: h.Phase * math.Pi / 180, changeAt: math.Inf(1)}
			cur := h.Current
			switch c.Kind {
			case "line":
				d := *c.Direction
				n := norm(d)
				l := inverse.Line{Point: *c.Point, Dir: [3]float64{d[0] / n, d[1] / n, d[2] / n}}
				s.field = func(r [3]float64) [3]float64 { return scale(l.Field(r, cur), teslaToNT) }
			case "polyline":
				p := inverse.Polyline{Vertices: c.Vertices}
				curs := make([]float64, len(c.Vertices)-1)
				for i := range curs {
					curs[i] = cur
				}
				s.field = func(r [3]float64) [3]float64 { return scale(p.Field(r, curs), teslaToNT) }
			default:
				continue
			}
			s.after = s.field
			out = append(out, s)
		}
	}
	return out
}

// segmentCurrents is the current in each segment of a polyline.
func (c *Conductor) segmentCurrents() []float64 {
	if len(c.Currents) > 0 {
		return c.Currents
	}
	cur := make([]float64, len(c.Vertices)-1)
	for i := range cur {
		cur[i] = c.Current
	}
	return cur
}

// span is where one survey line's readings sit in the log: rows
// [start, start+n), the first at time t0.
type span struct {
	start, n int
	t0       float64
}

// spans lays the survey lines out in time and rows, and returns the time of
// the last reading.
func (sc *Scenario) spans() ([]span, float64) {
	speed, rate := sc.speed(), sc.rate()
	out := make([]span, len(sc.lines))
	if sc.Survey.Pattern == "fixed" {
		// All sensors log at once; rows interleave (see fixed.go), so
		// sensor i's first row is row i.
		n := sc.fixedRows()
		for i := range out {
			out[i] = span{start: i, n: n, t0: sc.start}
		}
		return out, sc.start + float64(n-1)/rate
	}
	t0, last, row := sc.start, math.Inf(-1), 0
	for i, l := range sc.lines {
		n := sc.lineSamples(l)
		out[i] = span{start: row, n: n, t0: t0}
		row += n
		last = t0 + float64(n-1)/rate
		// Keep time strictly increasing even with no pause between lines.
		t0 = math.Max(t0+l.Length()/speed+sc.Survey.Turn, last+1/rate)
	}
	return out, last
}

// reading returns the time and position of reading k of survey line i.
func (sc *Scenario) reading(i int, sp span, k int) (float64, [3]float64) {
	l := sc.lines[i]
	rate := sc.rate()
	if sc.Survey.Pattern == "fixed" {
		return sp.t0 + float64(k)/rate, sc.Survey.Sensors[i].Position
	}
	d := float64(k) * sc.speed() / rate
	if sc.Survey.Pattern == "spin" {
		d = 0
	}
	f := 0.0
	if length := l.Length(); length > 0 {
		f = d / length
	}
	return sp.t0 + float64(k)/rate, [3]float64{
		l.From[0] + f*(l.To[0]-l.From[0]),
		l.From[1] + f*(l.To[1]-l.From[1]),
		sc.Sensor.Height,
	}
}

// eachLine calls do for every survey line, spread over the CPUs.
func eachLine(n int, do func(i int)) {
	var next atomic.Int64
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), n) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := int(next.Add(1)) - 1; i < n; i = int(next.Add(1)) - 1 {
				do(i)
			}
		}()
	}
	wg.Wait()
}

// Rows is the number of readings Simulate produces.
func (sc *Scenario) Rows() int {
	n := 0
	for _, l := range sc.lines {
		n += sc.lineSamples(l)
	}
	return n
}

// Simulate forward-models the survey log of a checked scenario: time (Unix
// seconds), position (m ENU, sensor height above ground at up = 0), field
// (nT; east, north, up for a level sensor, the sensor's body axes with
// roll, pitch and yaw columns for a walking one) and the survey line in
// the group column. A fixed log (pattern "fixed") has no positions: its
// group column names the sensor of each row, its fields are in that
// sensor's axes, and its rows interleave the sensors in time, as the
// replay command wants them. Samples.Origin is set when the scenario is
// geo-referenced, and Samples.Meta records the scenario ("scenario", "site",
// "seed", "simulated"). The same scenario gives the same log every time.
func Simulate(sc *Scenario) (*ingest.Samples, error) {
	if sc == nil || sc.lines == nil {
		return nil, errors.New("simulate: scenario not checked: use Load, Parse or Validate first")
	}
	spans, _ := sc.spans()
	n := sc.Rows()
	fixed := sc.Survey.Pattern == "fixed"
	s := &ingest.Samples{
		Source: sc.Source,
		Time:   make([]float64, n),
		Bx:     make([]float64, n), By: make([]float64, n), Bz: make([]float64, n),
		Group: make([]string, n),
		Frame: ingest.FrameENU,
		Meta:  sc.meta(),
	}
	if !fixed {
		s.X, s.Y, s.Z = make([]float64, n), make([]float64, n), make([]float64, n)
	}
	if o := sc.Origin; o != nil {
		s.Origin = &ingest.Geodetic{Lat: o.Lat, Lon: o.Lon, H: o.Height}
	}
	walking := sc.Sensor.Attitude == "walking"
	spin := sc.Survey.Pattern == "spin"
	if spin {
		s.Frame = ingest.FrameSensor
		s.Meta["pattern"] = "spin"
	}
	// stride is the distance in rows between a line's consecutive
	// readings: 1, or the number of sensors when fixed sensors interleave.
	stride := 1
	if fixed {
		s.Frame = ingest.FrameSensor
		s.Meta["pattern"] = "fixed"
		stride = len(spans)
	}
	if walking {
		s.Frame = ingest.FrameSensor
		s.Roll, s.Pitch, s.Yaw = make([]float64, n), make([]float64, n), make([]float64, n)
	}
	srcs := append(sc.sources(), sc.harmonicSources()...)
	sen := sc.Sensor
	// Each line has its own noise stream, seeded from the scenario's seed
	// and the line's index, so that lines can be simulated in parallel and
	// the log is still the same on every run.
	eachLine(len(spans), func(li int) {
		sp := spans[li]
		rng := rand.New(rand.NewPCG(uint64(sc.Seed), 0x5eed_f0e1^uint64(li)))
		key := sc.lines[li].Key
		var rot [3][3]float64
		if fixed {
			rot = fixedRotation(sc.Survey.Sensors[li].Orientation)
		}
		for k := range sp.n {
			t, r := sc.reading(li, sp, k)
			b := sc.earth(t)
			for _, src := range srcs {
				f := src.at(r, t)
				w := 1.0
				if src.ac {
					w = math.Sqrt2 * math.Cos(cycles(src.freq, t)*2*math.Pi+src.phase)
				}
				b = [3]float64{b[0] + w*f[0], b[1] + w*f[1], b[2] + w*f[2]}
			}
			j := sp.start + k*stride
			if spin {
				b = toSensor(b, sc.spinRotation(t))
			}
			if fixed {
				b = toSensor(b, rot)
			}
			if walking {
				roll, pitch, yaw := sc.attitude(li, t-sp.t0)
				b = enuToBody(b, roll, pitch, yaw)
				s.Roll[j], s.Pitch[j], s.Yaw[j] = roll, pitch, yaw
			}
			if sen.Noise > 0 {
				for i := range b {
					b[i] += sen.Noise * rng.NormFloat64()
				}
			}
			b = sen.distort(b)
			s.Time[j] = t
			if !fixed {
				s.X[j], s.Y[j], s.Z[j] = r[0], r[1], r[2]
			}
			s.Bx[j], s.By[j], s.Bz[j] = b[0], b[1], b[2]
			s.Group[j] = key
		}
	})
	return s, nil
}

// SimulateBase forward-models the base station of a checked scenario with a
// [base] table: the Earth field with its drift, the station's offset and
// noise, from Base.Margin seconds before the first rover reading to as long
// after the last. The log has no positions.
func SimulateBase(sc *Scenario) (*ingest.Samples, error) {
	if sc == nil || sc.lines == nil {
		return nil, errors.New("simulate: scenario not checked: use Load, Parse or Validate first")
	}
	b := sc.Base
	if b == nil {
		return nil, fmt.Errorf("simulate: %s: no [base] table: the scenario has no base station", sc.Source)
	}
	rate, margin := b.SampleRate, b.Margin
	if rate == 0 {
		rate = 1
	}
	if margin == 0 {
		margin = 60
	}
	_, last := sc.spans()
	end := last + margin
	t0 := sc.start - margin
	n := int(math.Floor((end-t0)*rate)) + 1
	if n > MaxRows {
		return nil, fmt.Errorf("simulate: %s: the base station would log %d readings, more than %d", sc.Source, n, MaxRows)
	}
	s := &ingest.Samples{
		Source: sc.Source + " (base station)",
		Time:   make([]float64, n),
		Bx:     make([]float64, n), By: make([]float64, n), Bz: make([]float64, n),
		Frame: ingest.FrameENU,
		Meta:  sc.meta(),
	}
	s.Meta["station"] = "base"
	rng := rand.New(rand.NewPCG(uint64(sc.Seed), 0xba5e_57a7))
	for i := range n {
		t := t0 + float64(i)/rate
		f := sc.earth(t)
		for k := range f {
			f[k] += b.Offset[k]
			if b.Noise > 0 {
				f[k] += b.Noise * rng.NormFloat64()
			}
		}
		s.Time[i] = t
		s.Bx[i], s.By[i], s.Bz[i] = f[0], f[1], f[2]
	}
	return s, nil
}

// earth is the background field at time t, nT.
func (sc *Scenario) earth(t float64) [3]float64 {
	h := (t - sc.start) / 3600
	e, d := sc.Earth.Field, sc.Earth.Drift
	return [3]float64{e[0] + d[0]*h, e[1] + d[1]*h, e[2] + d[2]*h}
}

// distort applies the sensor's soft-iron matrix and hard-iron offset.
func (s Sensor) distort(b [3]float64) [3]float64 {
	if s.Matrix != nil {
		m := s.Matrix
		b = [3]float64{
			m[0][0]*b[0] + m[0][1]*b[1] + m[0][2]*b[2],
			m[1][0]*b[0] + m[1][1]*b[1] + m[1][2]*b[2],
			m[2][0]*b[0] + m[2][1]*b[1] + m[2][2]*b[2],
		}
	}
	return [3]float64{b[0] + s.Offset[0], b[1] + s.Offset[1], b[2] + s.Offset[2]}
}

// cycles returns the fractional part of f*t, the phase of a tone of
// frequency f at time t in cycles, without the loss of precision of
// forming f*t directly when t is a Unix time near 2e9 s: the product is
// split into its rounded value and the exact rounding error (by a fused
// multiply-add) before the whole cycles are removed.
func cycles(f, t float64) float64 {
	p := f * t
	e := math.FMA(f, t, -p) // exact: f*t = p + e
	frac := (p - math.Round(p)) + e
	return frac - math.Floor(frac)
}

// meta records the scenario in the log's metadata.
func (sc *Scenario) meta() map[string]string {
	m := map[string]string{
		"scenario":  sc.Name,
		"simulated": "true",
		"seed":      strconv.FormatInt(sc.Seed, 10),
	}
	if sc.Site != "" {
		m["site"] = sc.Site
	}
	return m
}

// PeakFields returns, for each conductor, the largest field magnitude it
// alone produces at the planned readings, nT (RMS for AC), before or after
// any change of its current: with the sensor noise, a first answer to
// "will this be detectable?".
func (sc *Scenario) PeakFields() []float64 {
	srcs := sc.sources()
	spans, _ := sc.spans()
	peaks := make([][]float64, len(spans))
	eachLine(len(spans), func(li int) {
		peak := make([]float64, len(srcs))
		for k := range spans[li].n {
			_, r := sc.reading(li, spans[li], k)
			for i, src := range srcs {
				peak[i] = math.Max(peak[i], norm(src.field(r)))
				if !math.IsInf(src.changeAt, 1) {
					peak[i] = math.Max(peak[i], norm(src.after(r)))
				}
			}
		}
		peaks[li] = peak
	})
	out := make([]float64, len(srcs))
	for _, p := range peaks {
		for i := range out {
			out[i] = math.Max(out[i], p[i])
		}
	}
	return out
}

// FrequencyPeak is the largest field at the planned readings of all the
// conductors at one frequency together (PeakTotalFields).
type FrequencyPeak struct {
	// Frequency is the conductors' frequency, Hz; 0 for DC (conductors and
	// magnetised objects).
	Frequency float64
	// Conductors is how many of the scenario's conductors it sums.
	Conductors int
	// Peak is the largest magnitude of their summed field, nT (RMS for AC:
	// the fields added as phasors at their phases), each at its current
	// at the reading's time.
	Peak float64
}

// PeakTotalFields returns, for each frequency the scenario's conductors
// carry (in the order they first appear), the largest magnitude of their
// summed field at the planned readings: what the sensors see of them
// together. The cores of one circuit, close together at phases 120° apart
// (or a go and its return), cancel far more than each one's own field
// (PeakFields) suggests: a balanced trefoil of 100 A cores at 1 m read
// 16099 nT a core and 1451 nT together (found in review).
func (sc *Scenario) PeakTotalFields() []FrequencyPeak {
	srcs := append(sc.sources(), sc.harmonicSources()...)
	var out []FrequencyPeak
	band := make([]int, len(srcs))
	for i, src := range srcs {
		f := 0.0
		if src.ac {
			f = src.freq
		}
		band[i] = -1
		for b := range out {
			if out[b].Frequency == f {
				band[i] = b
			}
		}
		if band[i] < 0 {
			band[i] = len(out)
			out = append(out, FrequencyPeak{Frequency: f})
		}
		out[band[i]].Conductors++
	}
	spans, _ := sc.spans()
	peaks := make([][]float64, len(spans))
	eachLine(len(spans), func(li int) {
		peak := make([]float64, len(out))
		sum := make([][3]complex128, len(out))
		for k := range spans[li].n {
			t, r := sc.reading(li, spans[li], k)
			clear(sum)
			for i := range srcs {
				b := srcs[i].at(r, t)
				turn := complex(1, 0)
				if srcs[i].ac {
					turn = cmplx.Rect(1, srcs[i].phase)
				}
				for ax := range 3 {
					sum[band[i]][ax] += complex(b[ax], 0) * turn
				}
			}
			for b, v := range sum {
				m := math.Sqrt(sqAbs(v[0]) + sqAbs(v[1]) + sqAbs(v[2]))
				peak[b] = math.Max(peak[b], m)
			}
		}
		peaks[li] = peak
	})
	for _, p := range peaks {
		for b := range out {
			out[b].Peak = math.Max(out[b].Peak, p[b])
		}
	}
	return out
}

func sqAbs(z complex128) float64 { return real(z)*real(z) + imag(z)*imag(z) }

func scale(v [3]float64, k float64) [3]float64 { return [3]float64{v[0] * k, v[1] * k, v[2] * k} }
