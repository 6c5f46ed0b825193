package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"undercurrent/ingest"
)

// The mains in a DC run.
//
// A DC survey beside a live mains cable reads the cable's field, hundreds
// or thousands of nT alternating 50 or 60 times a second, on top of the
// direct current's. The DC fits take it as noise: over 650 m of a 2 A
// pipeline 9 m from a 60 A cable every traverse read "no current found"
// and a coating defect went unreported (found in review). Averaged over
// whole cycles the mains and all their harmonics cancel and the direct
// current's field is left. So, where the log's rate holds several
// readings per mains cycle, a DC run averages the readings in blocks of
// whole cycles (one reading per block, at the block's mean time and
// position; triangle weights, see triangle) before the fits: by default
// when the alternating-field check (dcalternating.go) finds the 50 or
// 60 Hz mains or a harmonic of them (a rectifier's ripple on the direct
// current, which whole cycles of the mains cancel as well), always with
// --dc-mains 50 or 60, never with --dc-mains off.

const (
	// dcMainsReject is the largest share of the mains' amplitude a block
	// may leave (40 dB down): the mean of N readings at rate fs leaves
	// |sum exp(2 pi i f n / fs)| / N of a tone at f, and the triangle
	// of 2N-1 readings (see triangle) the square of that.
	dcMainsReject = 0.01
	// dcMainsMaxBlock is the longest block, s: five cycles at 50 Hz,
	// 6 cm at a walking pace, far under a buried conductor's anomaly.
	dcMainsMaxBlock = 0.1
	// dcMainsMaxLeft is the largest share of a log's readings the
	// averaging may leave out (at gaps and group ends) before the log is
	// fitted as it is instead: a log missing 2% of its readings at random
	// loses about 6% of them in blocks of 7, and averages well.
	dcMainsMaxLeft = 0.1
	// dcMainsMaxHarmonic is the highest harmonic of the mains that auto
	// takes for the mains: a twelve-pulse rectifier's ripple is the 12th.
	dcMainsMaxHarmonic = 20
	// dcMainsKeptFloor is the least RMS field per component, nT, that a
	// block's leftover of the field's line must reach to be warned of
	// (besides a third of the noise): a hundredth of a nanotesla, under a
	// fluxgate's resolution (from memory: 0.01-0.1 nT), for logs with no
	// noise.
	dcMainsKeptFloor = 0.01
)

// parseDCMains reads --dc-mains: "auto" (0, auto true), "off" (0, false),
// or 50 or 60.
func parseDCMains(text string) (hz float64, auto bool, err error) {
	switch strings.ToLower(strings.TrimSpace(text)) {
	case "auto", "":
		return 0, true, nil
	case "off", "none":
		return 0, false, nil
	case "50":
		return 50, false, nil
	case "60":
		return 60, false, nil
	}
	return 0, false, usageErrorf("--dc-mains %q: want auto, off, 50 or 60", text)
}

// mainsLeft is the share of a tone at f that the mean of n readings
// taken at rate fs leaves.
func mainsLeft(f, fs float64, n int) float64 {
	var z complex128
	for k := range n {
		z += cmplx.Exp(complex(0, 2*math.Pi*f*float64(k)/fs))
	}
	return cmplx.Abs(z) / float64(n)
}

// mainsBlock returns n, the readings whose mean spans whole cycles of the
// mains at f for a log at rate fs (the triangle's blocks are 2n-1 long),
// and the share of the mains' amplitude the triangle leaves. A block that
// is a whole number of cycles within rounding (a fiftieth of a reading)
// is taken first, the shortest of them up to dcMainsMaxBlock: it cancels
// the mains (10 readings, 3 cycles, at 200 Hz and 60 Hz, where the fewest
// leaving under dcMainsReject were 7 readings, 35 ms for 33.3, which left
// 3 nT of a strong cable's field; found in review). Else the fewest, of
// at least two readings and m cycles at most dcMainsMaxBlock long, whose
// triangle leaves at most dcMainsReject of the mains (5 at 256 Hz and
// 50 Hz, 5.12 per cycle: 0.07%). n is 0 when the rate cannot (too slow:
// the mains alias onto the direct current's band). Two readings a cycle,
// the mains at the Nyquist frequency (50 Hz in a 100 Hz log), is the
// least: the mean of two successive readings cancels a line alternating
// in sign from one to the next, and with the same rounding a log a
// fiftieth of a reading per cycle slower (99 Hz-odd for 50 Hz), whose
// mains alias just under its Nyquist frequency.
func mainsBlock(f, fs float64) (int, float64) {
	if !(f > 0) || !(fs >= (2-0.02)*f) {
		return 0, 0
	}
	for m := 1; float64(m)/f <= dcMainsMaxBlock*1.0001; m++ {
		x := float64(m) * fs / f
		if n := int(math.Round(x)); n >= 2 && math.Abs(x-float64(n)) <= 0.02 {
			l := mainsLeft(f, fs, n)
			return n, l * l
		}
	}
	for m := 1; float64(m)/f <= dcMainsMaxBlock*1.0001; m++ {
		n := int(math.Round(float64(m) * fs / f))
		if l := mainsLeft(f, fs, n); n >= 2 && l*l <= dcMainsReject {
			return n, l * l
		}
	}
	return 0, 0
}

// dcClock returns the log's reading rate, Hz, taken from its span (the
// readings over their elapsed time, summed over the runs between gaps),
// and the longest step between successive readings that is no gap, s.
// Time stamps rounded to the millisecond (a 256 Hz log steps 3 or 4 ms)
// or jittered by the logger's clock put the median step off the interval
// and most steps off it by more than a per cent: the rate read 250 Hz for
// 256, and every such step was a break where the averaging left readings
// out (16% of one log; 44006 of 44011 with +-0.2 ms of jitter in a 200 Hz
// log; found in review). A gap is a step back in time or one over half an
// interval longer than the interval, plus the stamps' resolution when it
// is coarser than half an interval (a log faster than its stamps); a
// change of group ends a run too.
func dcClock(s *ingest.Samples) (fs, gap float64) {
	same := func(i int) bool { return s.Group == nil || s.Group[i] == s.Group[i-1] }
	var d []float64
	for i := 1; i < len(s.Time); i++ {
		if st := s.Time[i] - s.Time[i-1]; st > 0 && same(i) {
			d = append(d, st)
		}
	}
	if len(d) == 0 {
		return 0, 0
	}
	sort.Float64s(d)
	dt := d[len(d)/2]
	q := 0.0
	for i := 1; i < len(s.Time); i++ {
		if st := s.Time[i] - s.Time[i-1]; st >= 0 && st <= 0.5*dt && same(i) {
			q = d[0]
			break
		}
	}
	span := func(gap float64) float64 {
		var steps, el float64
		for i := 1; i < len(s.Time); i++ {
			if st := s.Time[i] - s.Time[i-1]; st >= 0 && st <= gap && same(i) {
				steps++
				el += st
			}
		}
		if !(el > 0) {
			return 1 / dt
		}
		return steps / el
	}
	fs = span(1.5*dt + q)
	return fs, 1.5/fs + q
}

// triangle returns the weights of a block of 2n-1 readings, the mean of
// n readings taken n times over (1, 2, ..., n, ..., 2, 1, summing to 1):
// its response is the square of the n-reading mean's, so it leaves the
// mains' share squared, and its zeros are double: a mains field whose
// amplitude changes along the walk (a cable's, nearer at one end of a
// traverse) is rejected too, where the plain mean of one cycle left
// A'/(2 pi f) of it, about 2.5 nT at 800 nT/s and 50 Hz, which biased the
// currents by half a per cent (found in testing).
func triangle(n int) []float64 {
	w := make([]float64, 2*n-1)
	for k := range w {
		w[k] = float64(min(k+1, 2*n-1-k)) / float64(n*n)
	}
	return w
}

// averageBlocks returns s averaged in blocks of len(w) readings, weighted
// by w: each block successive readings of one group with finite field
// readings, no step between them a gap (longer than gap, or back in time;
// see dcClock); a block's reading is their weighted
// mean (time, position, field, temperature, F) and its middle reading's
// attitude. Readings that make no whole block (at a break, a group's end)
// are left out; their count is returned.
func averageBlocks(s *ingest.Samples, w []float64, gap float64) (*ingest.Samples, int) {
	n := len(w)
	out := &ingest.Samples{Source: s.Source, Frame: s.Frame, Origin: s.Origin, Meta: s.Meta, NoTime: s.NoTime,
		Absent: s.Absent, Warnings: s.Warnings, InFrame: s.InFrame, InFrameStated: s.InFrameStated}
	mean := [][2]*[]float64{
		{&s.Time, &out.Time}, {&s.X, &out.X}, {&s.Y, &out.Y}, {&s.Z, &out.Z},
		{&s.Bx, &out.Bx}, {&s.By, &out.By}, {&s.Bz, &out.Bz}, {&s.Temp, &out.Temp}, {&s.F, &out.F},
	}
	mid := [][2]*[]float64{
		{&s.Roll, &out.Roll}, {&s.Pitch, &out.Pitch}, {&s.Yaw, &out.Yaw},
		{&s.Qw, &out.Qw}, {&s.Qx, &out.Qx}, {&s.Qy, &out.Qy}, {&s.Qz, &out.Qz},
	}
	left := 0
	ok := func(i int) bool {
		return finite(s.Bx[i]) && finite(s.By[i]) && finite(s.Bz[i])
	}
	for lo := 0; lo < s.Len(); {
		hi := lo + 1
		for hi < lo+n && hi < s.Len() && ok(hi-1) && s.Time[hi] >= s.Time[hi-1] && s.Time[hi]-s.Time[hi-1] <= gap &&
			(s.Group == nil || s.Group[hi] == s.Group[lo]) {
			hi++
		}
		if hi-lo < n || !ok(hi-1) {
			// Not a whole block: the readings up to the break are left out.
			left += hi - lo
			lo = hi
			continue
		}
		for _, c := range mean {
			if *c[0] == nil {
				continue
			}
			var sum float64
			for i := lo; i < hi; i++ {
				sum += w[i-lo] * (*c[0])[i]
			}
			*c[1] = append(*c[1], sum)
		}
		for _, c := range mid {
			if *c[0] != nil {
				*c[1] = append(*c[1], (*c[0])[lo+n/2])
			}
		}
		if s.Group != nil {
			out.Group = append(out.Group, s.Group[lo])
		}
		lo = hi
	}
	return out, left
}

// dcMains averages the DC log s at path over whole mains cycles (see
// above) when o asks for it or, by default, when the alternating-field
// check finds the mains. It returns the log to fit (s itself when nothing
// was done), a note saying what was done and an alert (the alternating
// field left in, with advice), either "".
func dcMains(o *locateOptions, path string, s *ingest.Samples) (*ingest.Samples, string, string) {
	fs, gap := dcClock(s)
	if !o.dcMainsAuto && o.dcMains == 0 {
		if w := alternatingWarning(path, s, 0); w != "" {
			w += "; --dc-mains off kept the readings as they are"
			if n50, _ := mainsBlock(50, fs); n50 > 0 {
				w += " (this log's rate holds whole mains cycles: --dc-mains 50 or 60 averages them away)"
			} else if n60, _ := mainsBlock(60, fs); n60 > 0 {
				w += " (this log's rate holds whole mains cycles: --dc-mains 50 or 60 averages them away)"
			}
			return s, "", w
		}
		return s, "", ""
	}
	f := o.dcMains
	why := fmt.Sprintf("--dc-mains %g", f)
	spec, found := alternatingSpectrum(s)
	var line, rms, share float64
	if found {
		line, rms, share, found = spec.peak()
	}
	found = found && share >= altShare
	h := 1 // the line's harmonic of the mains, found by auto
	if f == 0 {
		if !found {
			return s, "", ""
		}
		var both bool
		f, h, both = mainsOf(spec, line, []float64{50, 60})
		if f == 0 {
			return s, "", alternatingWarning(path, s, 0)
		}
		why = fmt.Sprintf("the field alternates at about %.3g Hz (%.3g nT RMS per component, %.0f%% of the readings' variation about their trends), the %g Hz mains", line, rms, 100*math.Min(1, share), f)
		if h > 1 {
			why = fmt.Sprintf("the field alternates at about %.3g Hz (%.3g nT RMS per component, %.0f%% of the readings' variation about their trends), %s the %g Hz mains' frequency: %s, which whole cycles of the mains cancel too", line, rms, 100*math.Min(1, share), harmonicWord(h), f, rippleWhat)
			if both {
				why += " (it is a harmonic of 60 Hz as well, and no other line of either mains tells them apart: whole 50 Hz cycles cancel it either way)"
			}
		}
	}
	n, rest := mainsBlock(f, fs)
	if n == 0 {
		w := alternatingWarning(path, s, f)
		if w != "" && o.dcMains != 0 {
			w += fmt.Sprintf("; --dc-mains %g cannot average them at this log's rate, %.3g Hz", f, fs)
		}
		if w == "" {
			w = fmt.Sprintf("%s: --dc-mains %g: the log's rate, %.3g Hz, does not hold whole cycles of the %g Hz mains in blocks of two readings or more (up to %g s), so the readings are fitted as they are; %s", path, f, fs, f, dcMainsMaxBlock, slowMainsAdvice(f))
		}
		return s, "", w
	}
	w := triangle(n)
	avg, left := averageBlocks(s, w, gap)
	if avg.Len() < 3 || float64(left) > dcMainsMaxLeft*float64(s.Len()) {
		// Averaging that would leave out much of the log (readings
		// stamped too unevenly to make whole blocks) is not done: before,
		// a jittered log kept 5 of 44011 readings and 8 of 11 traverses
		// vanished from the table (found in review).
		msg := fmt.Sprintf("%s: %s, but averaging over whole cycles in blocks of %d readings would leave out %d of the %d readings (at gaps in the time stamps, steps over %.3g ms, and group ends), so the readings are fitted as they are; check the log's time stamps", path, why, len(w), left, s.Len(), 1000*gap)
		if a := alternatingWarning(path, s, f); a != "" {
			msg += "; " + strings.TrimPrefix(a, path+": ")
		}
		return s, "", msg
	}
	cancel := "cancel (each block spans whole cycles)"
	if rest > 1e-6 {
		cancel = fmt.Sprintf("are left at about %.2g%% of their amplitude (no block of whole cycles up to %g s at this rate)", 100*rest, dcMainsMaxBlock)
	}
	note := fmt.Sprintf("%s: %s, so the readings were averaged over whole cycles before the DC fits, in blocks of %d (%.3g ms) weighted as a triangle, the mean of %s (%s at %.4g Hz) taken over again: the mains, even with an amplitude changing along the walk, %s; %d readings became %d",
		path, why, len(w), 1000*float64(len(w))/fs, plural(n, "reading"), plural(int(math.Round(float64(n)*f/fs)), "cycle"), fs, cancel, s.Len(), avg.Len())
	if left > 0 {
		note += fmt.Sprintf(", %d left out at gaps in the time stamps and group ends (no whole block)", left)
	}
	if h > 1 {
		note += fmt.Sprintf("; to locate the alternating current instead, give --freq %g; --dc-mains off fits the readings as they are", float64(h)*f)
	} else {
		note += fmt.Sprintf("; to locate the AC conductor instead, give --freq %g; --dc-mains off fits the readings as they are", f)
	}
	alert := ""
	if found && math.Abs(line-f) >= 0.02*f {
		// The field's own line off the mains averaged (a crew's setting
		// carried over from the other mains country left 20 nT in, and
		// said the mains cancelled; found in review), said when what the
		// blocks leave of it matters against the readings' noise: a third
		// of it adds a ninth to the misfit's variance, and less is lost in
		// the fits' own scatter. Rectifier
		// ripple at twice the mains, which whole cycles cancel, drew this
		// warning beside its own figure of 7e-6% left (found in review).
		l := mainsLeft(line, fs, n)
		kept, noise := rms*l*l, spec.noise()
		if kept >= math.Max(noise/3, dcMainsKeptFloor) {
			head := fmt.Sprintf("--dc-mains %g, but the field's own line is at about %.3g Hz", f, line)
			if o.dcMains == 0 {
				head = fmt.Sprintf("the field's line is at about %.3g Hz", line)
			}
			alert = fmt.Sprintf("%s: %s (%.3g nT RMS per component, %.0f%% of the readings' variation about their trends), which blocks of whole %g Hz cycles leave at about %.2g%% of its amplitude, %.2g nT against the readings' %.2g nT noise; the fits may miss the readings", path, head, rms, 100*math.Min(1, share), f, 100*l*l, kept, noise)
			for _, m := range []float64{50, 60} {
				if m == f {
					continue
				}
				if k := mainsHarmonic(line, m); k == 1 {
					alert += fmt.Sprintf(": it is the %g Hz mains, give --dc-mains %g (or auto)", m, m)
				} else if k > 1 && mainsHarmonic(line, f) == 0 {
					alert += fmt.Sprintf(": it is %s the %g Hz mains' frequency, give --dc-mains %g (or auto)", harmonicWord(k), m, m)
				}
			}
		}
	}
	return avg, note, alert
}

// rippleWhat names what a line at a harmonic of the mains is in a DC
// survey.
const rippleWhat = "the ripple of a rectified direct current (a cathodic-protection rectifier's: twice the mains' frequency from a single-phase bridge, six times from a three-phase one) or a harmonic of a mains cable's field"

// mainsHarmonic returns h when a line at f, Hz, is the h-th harmonic of
// the mains at m (h = 1: the mains themselves), 0 when it is none up to
// dcMainsMaxHarmonic: within 2% of the mains' frequency or half a per
// cent of the harmonic's, whichever is wider (a grid off nominal moves
// its harmonics h times as far; half a per cent keeps the 50 and 60 Hz
// families' harmonics, 10 Hz apart or more where they differ, apart up
// to 1 kHz).
func mainsHarmonic(f, m float64) int {
	h := math.Round(f / m)
	if h < 1 || h > dcMainsMaxHarmonic {
		return 0
	}
	if math.Abs(f-h*m) < math.Max(0.02*m, 0.005*h*m) {
		return int(h)
	}
	return 0
}

// mainsOf returns the mains frequency among cands of which a line at
// line, Hz, is the fundamental or a harmonic, h, 0 when none. A line at a
// harmonic of both 50 and 60 Hz (300, 600 Hz: a three-phase rectifier's
// ripple) is put to the family whose other harmonics hold more of the
// spectrum a (a mains fundamental or twice it beside the ripple); when
// neither holds more than the noise, to 50 Hz, and both is true (whole
// cycles of either cancel the line).
func mainsOf(a *altSpectrum, line float64, cands []float64) (f0 float64, h int, both bool) {
	var fs []float64
	var hs []int
	for _, m := range cands {
		if k := mainsHarmonic(line, m); k > 0 {
			fs = append(fs, m)
			hs = append(hs, k)
		}
	}
	switch len(fs) {
	case 0:
		return 0, 0, false
	case 1:
		return fs[0], hs[0], false
	}
	// The evidence of each family: the power of its harmonics that are
	// not the other's, over the noise's in as many lobes.
	floor := 10 * a.noise() * a.noise() / float64(a.n) // a lobe's mean square of noise alone (5 bins, Hann)
	best, bestE := -1, 0.0
	for i, m := range fs {
		var e float64
		for k := 1; k <= dcMainsMaxHarmonic; k++ {
			g := float64(k) * m
			if a.bin(g) < 0 {
				continue
			}
			other := false
			for j, o := range fs {
				if j != i && mainsHarmonic(g, o) > 0 {
					other = true
				}
			}
			if other {
				continue
			}
			r := a.rmsAt(g)
			e += math.Max(0, r*r-floor)
		}
		if e > 25*floor && e > bestE {
			best, bestE = i, e
		}
	}
	if best < 0 {
		return fs[0], hs[0], true
	}
	return fs[best], hs[best], false
}

// harmonicWord says h times in words.
func harmonicWord(h int) string {
	words := []string{"", "once", "twice", "three times", "four times", "five times", "six times", "seven times", "eight times", "nine times", "ten times", "eleven times", "twelve times"}
	if h >= 1 && h < len(words) {
		return words[h]
	}
	return fmt.Sprintf("%d times", h)
}

// slowMainsAdvice says how to keep a DC survey whose log is too slow to
// average the mains at f away.
func slowMainsAdvice(f float64) string {
	return fmt.Sprintf("the direct current's fits need the mains averaged out: log at a rate holding several readings per cycle (%g or %g Hz, say), which locate then averages over whole cycles, or average over whole %g ms cycles in the logger; --freq %g locates the AC conductor, not the direct current", 4*f, 10*f, 1000/f, f)
}
