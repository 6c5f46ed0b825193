package calibrate

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"os"
	"sort"
	"strconv"
	"strings"
)

// Coil describes an induction coil for Faraday's law V = -N A μ dB/dt.
type Coil struct {
	Turns float64 // N
	Area  float64 // A, m² (mean turn area)
	// Mu is the apparent relative permeability of the core; zero means 1
	// (air core).
	Mu float64
}

func (c Coil) gain(freq float64) (float64, error) {
	mu := c.Mu
	if mu == 0 {
		mu = 1
	}
	if !(c.Turns > 0) || !(c.Area > 0) || !(mu > 0) || !(freq > 0) ||
		math.IsInf(c.Turns, 0) || math.IsInf(c.Area, 0) || math.IsInf(mu, 0) || math.IsInf(freq, 0) {
		return 0, fmt.Errorf("calibrate: coil: turns %g, area %g m², permeability %g and frequency %g Hz must be positive", c.Turns, c.Area, mu, freq)
	}
	return c.Turns * c.Area * mu * 2 * math.Pi * freq, nil // V per T
}

// CoilToField converts coil voltage amplitudes (peak or RMS, V) of a
// sinusoid at freq (Hz) to field amplitudes of the same kind, nT:
//
//	|B| = |V| / (N A μ 2π f).
func CoilToField(volts []float64, coil Coil, freq float64) ([]float64, error) {
	g, err := coil.gain(freq)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(volts))
	for i, v := range volts {
		out[i] = v / g * 1e9
	}
	return out, nil
}

// CoilPhasor converts a coil voltage phasor (V) at freq (Hz) to the field
// phasor (nT). With V = -N A μ iω B, the field leads the voltage by 90°:
//
//	B = i V / (N A μ ω).
func CoilPhasor(v complex128, coil Coil, freq float64) (complex128, error) {
	g, err := coil.gain(freq)
	if err != nil {
		return 0, err
	}
	return complex(0, 1e9/g) * v, nil
}

// CoilWindows converts demodulated windows of coil voltages (B and Sigma
// in volts, as Demodulate returns them when the log's field columns hold
// coil outputs) to field in nT in place, each at its own frequency. A
// window the conversion rejects leaves the windows unchanged. The
// harmonics' phasors (DemodResult.Harmonics) are not in the windows and
// stay in volts: HarmonicsToField converts them, each at its own frequency.
func CoilWindows(ws []Window, coil Coil) error {
	for i, w := range ws {
		if _, err := coil.gain(w.Freq); err != nil {
			return fmt.Errorf("calibrate: coil: window %d: %w", i, err)
		}
	}
	for i := range ws {
		g, _ := coil.gain(ws[i].Freq)
		for k := 0; k < 3; k++ {
			ws[i].B[k] *= complex(0, 1e9/g)
			ws[i].Slope[k] *= complex(0, 1e9/g)
			ws[i].Curve[k] *= complex(0, 1e9/g)
			ws[i].Sigma[k] *= 1e9 / g
		}
	}
	removeMotion(ws, func(w *Window) complex128 { return complex(1/(2*math.Pi*w.Freq), 0) })
	return nil
}

// removeMotion removes the motional term from windows converted from a
// coil's voltage. A coil senses db/dt, and with the field
// b(t) = √2 Re(B(t) exp(iωt)) changing within the log (the sensor walked
// through the field's gradient, (v·∇)B, or the current changing) that is
// √2 Re((iωB + Ḃ) exp(iωt)): the voltage's phasor is V = H(ω) B - i H'(ω) Ḃ
// to first order in Ḃ/ω, H the sensitivity (volts per tesla), and the
// conversion V/H reads B - i (H'/H) Ḃ, which is B + Ḃ/(iω) for the ideal
// coil (H'/H = 1/ω). Over one cable that is small (about v/(ω r), 0.3% in
// quadrature at 1 m/s over a cable 1.1 m away), but over conductors of
// opposite phase the field's gradient between the cores is large: a coil
// walked at 1 m/s over a go-and-return pair 1 m apart read their relative
// phase 0.9° off, 15 sigma, alternating with the walking direction, and
// fitted a 0.44 A phantom line between the cores on every traverse (found
// in review). Ḃ is each window's own Slope, converted with B, and the
// second order, B̈/ω² for the ideal coil, is taken from its Curve (the
// second derivative of a measured response is left out); windows without
// one (DemodSettings.ConstantAmplitude) take the central difference of
// their neighbours in a run (one-sided at a run's ends), a run being the
// windows of one group at one frequency, each within 1.5 of the run's
// usual step of the one before. deriv returns H'/H for a window (s). The
// sigmas are kept: Slope's noise over ω adds about √12/(ωT) of a window's
// sigma in quadrature (a window of T seconds), 0.06 at 50 Hz in 0.2 s.
func removeMotion(ws []Window, deriv func(*Window) complex128) {
	corr := make([][3]complex128, len(ws))
	for lo := 0; lo < len(ws); {
		hi := lo + 1
		for hi < len(ws) && ws[hi].Group == ws[lo].Group && ws[hi].Freq == ws[lo].Freq && ws[hi].Time > ws[hi-1].Time {
			hi++
		}
		// The run's usual step: the median of its steps.
		var steps []float64
		for i := lo + 1; i < hi; i++ {
			steps = append(steps, ws[i].Time-ws[i-1].Time)
		}
		sort.Float64s(steps)
		for a := lo; a < hi; {
			b := a + 1
			for b < hi && ws[b].Time-ws[b-1].Time <= 1.5*steps[len(steps)/2] {
				b++
			}
			motionRun(ws[a:b], corr[a:b], deriv)
			a = b
		}
		lo = hi
	}
	for i := range ws {
		for k := 0; k < 3; k++ {
			ws[i].B[k] -= corr[i][k]
		}
	}
}

// motionRun sets corr to each window's motional term -i (H'/H) Ḃ, Ḃ from
// the windows' own phasors (removeMotion), for one run of windows.
func motionRun(ws []Window, corr [][3]complex128, deriv func(*Window) complex128) {
	for i := range ws {
		rho := deriv(&ws[i])
		d := complex(0, -1) * rho
		if ws[i].Slope != [3]complex128{} {
			// B = B' + iρ Ḃ' - ρ² B̈ to second order (the converted
			// window's B', Ḃ' and B̈, Ḃ' = Ḃ - iρ B̈); the second term is
			// about v²/(ω r)² of the field, 0.13 nT of 3000 nT at 1 m/s
			// over a pair 1.2 m away, several of a quiet window's sigmas.
			for k := 0; k < 3; k++ {
				corr[i][k] = d*ws[i].Slope[k] + rho*rho*ws[i].Curve[k]
			}
			continue
		}
		if len(ws) < 2 {
			return
		}
		a, b := max(i-1, 0), min(i+1, len(ws)-1)
		dt := ws[b].Time - ws[a].Time
		for k := 0; k < 3; k++ {
			corr[i][k] = d * (ws[b].B[k] - ws[a].B[k]) / complex(dt, 0)
		}
	}
}

// CoilSensitivity is a coil's complex sensitivity: Sensitivity returns H,
// volts per tesla, with V = H B for the phasors of a sinusoid of frequency
// freq Hz (phasors of y(t) = √2 Re(P exp(iωt)), as Demodulate returns
// them). Coil (the ideal law) and *CoilResponse (a measured table)
// implement it.
type CoilSensitivity interface {
	Sensitivity(freq float64) (complex128, error)
}

// Sensitivity returns the ideal coil's H = -i N A μ ω, V per T (Faraday's
// law V = -N A μ dB/dt with d/dt = iω): the voltage lags the field by 90°.
func (c Coil) Sensitivity(freq float64) (complex128, error) {
	g, err := c.gain(freq)
	if err != nil {
		return 0, err
	}
	return complex(0, -g), nil
}

// CoilResponse is a coil's measured response, for coils that do not follow
// the ideal law (a core whose permeability changes with frequency, the
// coil's own resonance, an amplifier or filter in the output): at each
// frequency the sensitivity |H| (V per T, amplitude over amplitude) and
// the phase of H (degrees: how far the voltage leads the field; -90 for
// the ideal coil V = -N A μ dB/dt).
type CoilResponse struct {
	Freq  []float64 // Hz, strictly increasing, at least two
	Sens  []float64 // V per T, positive
	Phase []float64 // degrees, each within 180° of the one before
}

// Sensitivity interpolates the table at freq Hz: log |H| linearly in log f
// (exact for the ideal coil's |H| ∝ f, and for any power law between two
// rows) and the phase linearly in log f. A frequency outside the table is
// an error: the response is not extrapolated; so is a nil r.
func (r *CoilResponse) Sensitivity(freq float64) (complex128, error) {
	if r == nil {
		return 0, errors.New("calibrate: coil response: none (nil)")
	}
	n := len(r.Freq)
	if n < 2 || len(r.Sens) != n || len(r.Phase) != n {
		return 0, fmt.Errorf("calibrate: coil response: %d frequencies, %d sensitivities and %d phases: want at least two rows of each", n, len(r.Sens), len(r.Phase))
	}
	if !(freq > 0) || math.IsInf(freq, 0) {
		return 0, fmt.Errorf("calibrate: coil response: frequency %g Hz must be positive", freq)
	}
	if freq < r.Freq[0] || freq > r.Freq[n-1] {
		return 0, fmt.Errorf("calibrate: coil response: %s Hz is outside the table's %g-%g Hz (the response is not extrapolated)", FreqText(freq, r.Freq[0], r.Freq[n-1]), r.Freq[0], r.Freq[n-1])
	}
	// The first row whose frequency is at or above freq.
	j := sort.SearchFloat64s(r.Freq, freq)
	if j == 0 {
		j = 1
	}
	i := j - 1
	u := (math.Log(freq) - math.Log(r.Freq[i])) / (math.Log(r.Freq[j]) - math.Log(r.Freq[i]))
	mag := math.Exp(math.Log(r.Sens[i]) + u*(math.Log(r.Sens[j])-math.Log(r.Sens[i])))
	ph := r.Phase[i] + u*(r.Phase[j]-r.Phase[i])
	return cmplx.Rect(mag, ph*math.Pi/180), nil
}

// FreqText formats the frequency f in plain notation with four
// significant digits, or with as many more as it takes to tell it from
// each of the frequencies edges ("50.05"; "49.998" beside an edge of 50),
// for messages.
func FreqText(f float64, edges ...float64) string {
	for d := 4; ; d++ {
		t := PlainDigits(f, d)
		clash := false
		for _, e := range edges {
			clash = clash || f != e && t == strconv.FormatFloat(e, 'f', -1, 64)
		}
		if !clash || d >= 15 {
			return t
		}
	}
}

// PlainDigits formats x in plain notation (no exponent) rounded to d
// significant digits, for messages: 45238.9 gives "45240" and 0.0452389
// "0.04524" with d = 4.
func PlainDigits(x float64, d int) string {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	dec := d - 1 - int(math.Floor(math.Log10(math.Abs(x))))
	if dec < 0 {
		dec = 0
	}
	// Round to d digits first: 'f' alone keeps every integer digit.
	r, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', d, 64), 64)
	t := strconv.FormatFloat(r, 'f', dec, 64)
	if strings.Contains(t, ".") {
		t = strings.TrimRight(strings.TrimRight(t, "0"), ".")
	}
	return t
}

// Sensitivity units of a response table, by the name of its second column.
var sensitivityColumns = map[string]float64{
	"sensitivity_v_per_t":   1,
	"sensitivity_v_per_nt":  1e9,
	"sensitivity_mv_per_nt": 1e6,
}

// ReadCoilResponse reads a coil response table: CSV with a header line
// naming the three columns
//
//	frequency_hz, sensitivity_v_per_t | sensitivity_v_per_nt | sensitivity_mv_per_nt, phase_deg
//
// (in that order; the sensitivity's name gives its unit), then one row per
// frequency, frequencies strictly increasing; lines starting with # are
// comments. As a spreadsheet exports it, the text may start with a UTF-8
// byte order mark and the fields may be separated by semicolons instead of
// commas (the header line decides); with semicolons a decimal comma is
// read too ("3,14e-5"). Phases are unwrapped (each moved by whole turns to
// within 180° of the one before), so a table may wrap them at ±180°. name
// is used in messages. A nil rd is an error.
func ReadCoilResponse(rd io.Reader, name string) (*CoilResponse, error) {
	if rd == nil {
		return nil, fmt.Errorf("calibrate: coil response %s: no reader (nil)", name)
	}
	br := bufio.NewReader(rd)
	// A byte order mark (U+FEFF in UTF-8) before the header is no part of
	// its first name.
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		_, _ = br.Discard(3)
	}
	// The delimiter: a semicolon when the first line that is neither blank
	// nor a comment holds one and no comma.
	delim := ','
	for n := 64; ; n *= 2 {
		b, err := br.Peek(n)
		if line, ok := headerLine(b, err != nil); ok {
			if strings.Contains(line, ";") && !strings.Contains(line, ",") {
				delim = ';'
			}
			break
		}
		if err != nil {
			break
		}
	}
	cr := csv.NewReader(br)
	cr.Comma = delim
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	fail := func(line int, format string, a ...any) error {
		return fmt.Errorf("calibrate: coil response %s:%d: %s", name, line, fmt.Sprintf(format, a...))
	}
	head, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("calibrate: coil response %s: empty: want a header line frequency_hz,sensitivity_v_per_nt,phase_deg and a row per frequency", name)
	}
	if err != nil {
		return nil, fmt.Errorf("calibrate: coil response %s: %w", name, err)
	}
	line, _ := cr.FieldPos(0)
	for i := range head {
		head[i] = strings.ToLower(strings.TrimSpace(head[i]))
	}
	scale, ok := 0.0, len(head) == 3 && head[0] == "frequency_hz" && head[2] == "phase_deg"
	if ok {
		scale, ok = sensitivityColumns[head[1]]
	}
	if !ok {
		return nil, fail(line, "header %q: want frequency_hz, then sensitivity_v_per_t, sensitivity_v_per_nt or sensitivity_mv_per_nt (the sensitivity's unit), then phase_deg (how far the voltage leads the field; -90 for an ideal coil)", strings.Join(head, string(delim)))
	}
	r := &CoilResponse{}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("calibrate: coil response %s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) != 3 {
			return nil, fail(line, "%d values: want frequency, sensitivity and phase", len(rec))
		}
		var v [3]float64
		for k, f := range rec {
			t := strings.TrimSpace(f)
			if delim == ';' {
				t = strings.Replace(t, ",", ".", 1)
			}
			x, err := strconv.ParseFloat(t, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, fail(line, "%s %q is not a finite number", head[k], f)
			}
			v[k] = x
		}
		switch n := len(r.Freq); {
		case !(v[0] > 0):
			return nil, fail(line, "frequency %g Hz: want a positive frequency", v[0])
		case n > 0 && !(v[0] > r.Freq[n-1]):
			return nil, fail(line, "frequency %g Hz after %g Hz: want the frequencies strictly increasing", v[0], r.Freq[n-1])
		case !(v[1] > 0):
			return nil, fail(line, "%s %g: want a positive sensitivity", head[1], v[1])
		}
		ph := v[2]
		if n := len(r.Phase); n > 0 {
			ph -= 360 * math.Round((ph-r.Phase[n-1])/360)
		}
		r.Freq = append(r.Freq, v[0])
		r.Sens = append(r.Sens, v[1]*scale)
		r.Phase = append(r.Phase, ph)
	}
	if n := len(r.Freq); n < 2 {
		rows := "no rows"
		if n == 1 {
			rows = "one row"
		}
		return nil, fmt.Errorf("calibrate: coil response %s: %s: want at least two frequencies to interpolate between", name, rows)
	}
	return r, nil
}

// headerLine returns the first line of b that is neither blank nor a #
// comment, and false when b ends before that line does (unless atEOF).
func headerLine(b []byte, atEOF bool) (string, bool) {
	for len(b) > 0 {
		i := bytes.IndexByte(b, '\n')
		if i < 0 && !atEOF {
			return "", false
		}
		line := b
		if i >= 0 {
			line, b = b[:i], b[i+1:]
		} else {
			b = nil
		}
		t := strings.TrimSpace(string(line))
		if t != "" && !strings.HasPrefix(t, "#") {
			return t, true
		}
	}
	return "", atEOF
}

// LoadCoilResponse reads a coil response table from a file
// (ReadCoilResponse).
func LoadCoilResponse(path string) (*CoilResponse, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("calibrate: %w", err)
	}
	defer f.Close()
	return ReadCoilResponse(f, path)
}

// SensitivityWindows converts demodulated windows of coil voltages (B and
// Sigma in volts) to field in nT in place, each at its own frequency, with
// B = V / H and Sigma = Sigma_V / |H| (H = s.Sensitivity(freq), V per T).
// A window the sensitivity rejects (a frequency outside a table) leaves the
// windows unchanged. With the ideal Coil it agrees with CoilWindows. A nil
// s is an error. The harmonics' phasors (DemodResult.Harmonics) stay in
// volts: HarmonicsToField converts them, each at its own frequency.
func SensitivityWindows(ws []Window, s CoilSensitivity) error {
	if s == nil {
		return errors.New("calibrate: coil: no sensitivity (nil)")
	}
	h := make([]complex128, len(ws))
	for i, w := range ws {
		var err error
		if h[i], err = s.Sensitivity(w.Freq); err != nil {
			return fmt.Errorf("calibrate: coil: window %d: %w", i, err)
		}
		if h[i] == 0 || cmplx.IsNaN(h[i]) || cmplx.IsInf(h[i]) {
			return fmt.Errorf("calibrate: coil: window %d: sensitivity %v V/T at %g Hz", i, h[i], w.Freq)
		}
	}
	for i := range ws {
		inv := 1e9 / h[i]
		m := cmplx.Abs(inv)
		for k := 0; k < 3; k++ {
			ws[i].B[k] *= inv
			ws[i].Slope[k] *= inv
			ws[i].Curve[k] *= inv
			ws[i].Sigma[k] *= m
		}
	}
	removeMotion(ws, func(w *Window) complex128 { return sensitivityLogSlope(s, w.Freq) })
	return nil
}

// sensitivityLogSlope is H'(ω)/H(ω) for the sensitivity s at freq Hz, s
// (removeMotion): the central difference of H over 0.1% of freq, one-sided
// where that leaves a table's range, and 1/ω (the ideal coil's) when s
// cannot be read either side.
func sensitivityLogSlope(s CoilSensitivity, freq float64) complex128 {
	if _, ok := s.(Coil); ok {
		return complex(1/(2*math.Pi*freq), 0)
	}
	h0, err := s.Sensitivity(freq)
	if err != nil || h0 == 0 {
		return complex(1/(2*math.Pi*freq), 0)
	}
	df := 1e-3 * freq
	lo, hi := freq-df, freq+df
	hlo, errLo := s.Sensitivity(lo)
	hhi, errHi := s.Sensitivity(hi)
	switch {
	case errLo != nil && errHi != nil:
		return complex(1/(2*math.Pi*freq), 0)
	case errLo != nil:
		hlo, lo = h0, freq
	case errHi != nil:
		hhi, hi = h0, freq
	}
	return (hhi - hlo) / complex(2*math.Pi*(hi-lo), 0) / h0
}

// HarmonicsToField converts the harmonics' phasors of a demodulation of
// coil voltages (res.Harmonics, volts, which CoilWindows and
// SensitivityWindows leave alone) to field phasors in nT in place:
// harmonic h of window i at its own frequency, h times that window's Freq,
//
//	B = V / H(h f),  H = s.Sensitivity(h f), V per T,
//
// so that a measured response (*CoilResponse) is read at the harmonic's
// frequency, not at the fundamental's; the ideal Coil's H grows with the
// frequency, and a harmonic converted at the fundamental's frequency would
// read h times too strong and, with a response whose phase changes with
// frequency, turned. harmonics lists the harmonic numbers fitted, in the
// order of DemodSettings.Harmonics. The motional term that CoilWindows
// removes from the fundamental (removeMotion) is not removed: no slope is
// fitted for a harmonic, and the term, about v/(h ω r) of the field, is h
// times smaller there. A nil res or s, a res whose Harmonics do not match
// its windows and harmonics, a harmonic below 2 or a frequency the
// sensitivity rejects (outside a table) is an error, and leaves res
// unchanged.
func HarmonicsToField(res *DemodResult, harmonics []int, s CoilSensitivity) error {
	if res == nil || s == nil {
		return errors.New("calibrate: coil: no demodulation or no sensitivity (nil)")
	}
	if len(res.Harmonics) == 0 {
		return nil
	}
	if len(res.Harmonics) != len(res.Windows) {
		return fmt.Errorf("calibrate: coil: %d windows of harmonics for %d windows", len(res.Harmonics), len(res.Windows))
	}
	for _, h := range harmonics {
		if h < 2 {
			return fmt.Errorf("calibrate: coil: harmonic %d: want 2 or more (the fundamental is in the windows)", h)
		}
	}
	inv := make([][]complex128, len(res.Harmonics))
	for i, hs := range res.Harmonics {
		if len(hs) != len(harmonics) {
			return fmt.Errorf("calibrate: coil: window %d holds %d harmonics, but %d harmonics (%v) were named", i, len(hs), len(harmonics), harmonics)
		}
		inv[i] = make([]complex128, len(hs))
		for j, h := range harmonics {
			f := float64(h) * res.Windows[i].Freq
			g, err := s.Sensitivity(f)
			if err != nil {
				return fmt.Errorf("calibrate: coil: window %d, harmonic %d (%s Hz): %w", i, h, FreqText(f), err)
			}
			if g == 0 || cmplx.IsNaN(g) || cmplx.IsInf(g) {
				return fmt.Errorf("calibrate: coil: window %d, harmonic %d: sensitivity %v V/T at %g Hz", i, h, g, f)
			}
			inv[i][j] = 1e9 / g
		}
	}
	for i, hs := range res.Harmonics {
		for j := range hs {
			for k := 0; k < 3; k++ {
				hs[j][k] *= inv[i][j]
			}
		}
	}
	return nil
}
