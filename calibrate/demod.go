package calibrate

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/mat"

	"undercurrent/ingest"
)

// Window is one demodulated AC window. B is the complex RMS field per axis
// in nT (E, N, U), referenced to absolute time on the clock of the
// result's frequency F (DemodResult.Freq, given or estimated):
//
//	b(t) = √2 Re(B exp(i 2π (F t + (Freq - F)(t - Time)))),
//
// with t the log's time column; Freq = F, b(t) = √2 Re(B exp(i 2π F t)),
// unless EstimateFreq fitted the window at its own Freq. So a steady tone
// at F has the same phase in every window, with or without EstimateFreq,
// and a tone at F + δ turns by 360 δ degrees a second from window to
// window (DemodResult.DriftHz; Demodulate warns when that turns a group's
// phase by more than MaxTurnDegrees). The phasors of one group then
// describe one steady field and may go to inverse.FitLines as one problem.
type Window struct {
	Time float64    // centre time, s
	Pos  [3]float64 // mean position, m ENU
	// Travel is the half-travel of the sensor during the window, m ENU: the
	// window's samples are taken as lying on the straight segment
	// Pos - Travel .. Pos + Travel, walked at a steady pace. It is the
	// least-squares slope v of position against time times
	// T = sqrt(3 var(t)), var(t) the variance of the window's sample times
	// (T = sqrt(N^2-1)/2 dt for N samples dt apart, about half the window's
	// duration), chosen so that the mean of any field quadratic along the
	// path over the samples equals its mean over the segment: the whole-cycle
	// sine fit returns that mean (exactly for a quadratic change, with the
	// curvature columns of DemodSettings.ConstantAmplitude), not the
	// field at Pos.
	// Zero when the log has no positions or the sensor stood still.
	Travel [3]float64
	B      [3]complex128 // complex RMS field per axis, nT
	Sigma  [3]float64    // one-sigma of |B| per axis from the fit residuals, nT
	// Slope is the rate of change of B per axis across the window, nT/s
	// (the phasor of the columns (τ-τ̄) cos ωτ and (τ-τ̄) sin ωτ,
	// DemodSettings.ConstantAmplitude, referenced like B): what the field
	// changes by as the sensor walks, or as the current changes. Zero
	// with ConstantAmplitude.
	Slope [3]complex128
	// Curve is the second derivative of B per axis, nT/s² (twice the
	// phasor of the curvature columns); zero with ConstantAmplitude.
	Curve [3]complex128
	Freq  float64 // Hz used (given or estimated)
	// FreqSigma is the one-sigma of an estimated Freq, Hz:
	// (Σ_k q_k/s_k²)^(-1/2)/2π over the axes k, with s_k² the residual
	// variance of axis k (n - p - 1 degrees of freedom) and q_k its
	// normal-matrix entry for the frequency once its linear parameters are
	// eliminated (the linearised least-squares covariance of the joint
	// fit). Zero when Freq was given.
	FreqSigma float64
	Group     string // group of the samples (windows never straddle groups)
	N         int    // samples in the window
}

// DemodSettings controls Demodulate. A nil *DemodSettings or a zero field
// takes the default.
type DemodSettings struct {
	// LeftOut holds the times of the samples that follow rows the caller
	// left out of the log (readings clipped at the sensor's range, say):
	// a break of the time column just before one is counted in
	// DemodLoss.LeftOut, not as a pause, and the warning of windows lost
	// says they are where LeftOutWhy says ("readings clipped at the
	// magnetometer's range were left out") and gives LeftOutFix instead
	// of advice on the time stamps, which are not at fault.
	LeftOut                []float64
	LeftOutWhy, LeftOutFix string
	// Freq is the signal frequency, Hz. Zero estimates it from the log:
	// from a spectral peak above MinFreq, every window of the log is
	// fitted by the four-parameter fit (as with EstimateFreq) and the
	// windows with a clear signal combined, those walked one way and those
	// walked back apart so that the turn of the phase along a traverse
	// over conductors of different phase cancels (it does not on a log
	// walked one way only, and a warning says so);
	// DemodResult.FreqSigma is the estimate's one-sigma. It costs a few
	// extra passes over the log; a frequency known (the mains, a
	// transmitter's) is better given.
	Freq float64
	// EstimateFreq re-estimates the frequency in every window by the
	// four-parameter fit (IEEE Std 1057 / 1241), starting from Freq, with
	// one frequency shared by the three axes and each axis weighted by its
	// own noise (the package documentation); Window.FreqSigma carries each
	// estimate's one-sigma. The window's phasors are fitted at its own
	// frequency, so a frequency off Freq costs no amplitude, but are
	// referenced to the clock of Freq at the window's centre (Window), so
	// that windows stay phase-coherent: their phase still turns from window
	// to window if Freq is off the field's frequency (DemodResult.DriftHz),
	// and Freq should be the field's (given, or zero to estimate it).
	EstimateFreq bool
	// PhaseChecked says the caller checks the frequency against the
	// phases and takes up a turn itself (cmd/undercurrent fits a phase
	// ramp per group): Demodulate then gives no warning of the phase
	// turning across a group (MaxTurnDegrees), only the amplitude band's.
	PhaseChecked bool
	// SkipFailedFreq, with EstimateFreq, leaves out a window whose
	// four-parameter fit fails (its frequency runs off to zero or below,
	// or its frequency column is degenerate, as where the field runs far
	// from Freq, or the basis at the fitted frequency is singular, as where
	// a noisy window's fit lands on a fitted mains line) instead of failing the whole demodulation;
	// DemodResult.FreqFailed counts them.
	SkipFailedFreq bool
	// Window is the window length, s. Zero means ten cycles of Freq.
	Window float64
	// Step is the hop between window starts, s. Zero means Window (no
	// overlap).
	Step float64
	// Harmonics lists extra harmonics fitted alongside the fundamental
	// (3 for the third, ...); their phasors go to DemodResult.Harmonics.
	// Unless ConstantAmplitude, each also takes its slope columns, as the
	// fundamental does: a walked sensor sees a harmonic in the
	// conductor's own current change within the window like the
	// fundamental, and a changing harmonic is not orthogonal to the
	// fundamental's columns nor to the frequency's (EstimateFreq) even
	// over whole cycles; a 20% 3rd harmonic unfitted, or fitted without
	// them, pulled a walked 50 Hz log's estimated frequency by 0.013 Hz
	// (found in review).
	Harmonics []int
	// Drift adds a cubic background per window: τ, and in a window of
	// MinBackgroundCycles or more the quadratic and cubic Legendre
	// polynomials of the window's time (fillBackground, DriftColumns; the
	// constant term, which absorbs the Earth's field, is always fitted). A sensor walked through a steady (DC) field's gradient sees
	// it change within the window, and a slope s per second projects onto
	// sin ωτ, even over whole cycles, as an amplitude 2s/ω: fitted with
	// the constant alone, a DC conductor passed at a steady pace reads as
	// an AC field proportional to its gradient. Near the conductor the
	// change is far from straight within a window of a slow tone, and a
	// linear term alone left its curvature and above all its cubic part
	// (which projects onto sin ωτ like the slope, at order 1/cycles²)
	// to leak: a pipe carrying 2 A DC and a 4 Hz tone, walked at
	// 0.8 m/s in 2.5 s windows, read up to 0.86 nT of phantom tone,
	// 5 mA further lines in sound fits (found in review); with the cubic
	// 0.11 nT, and no further lines. The linear column's correlation with sin ωτ is about
	// 0.78/cycles (√24/(2π cycles)), so over ten cycles it costs about
	// 0.3% of the fundamental's sigma, and the cubic's about as much.
	Drift bool
	// ConstantAmplitude fits each window with a tone of constant amplitude
	// (the plain three-parameter sine fit). By default the fit also takes a
	// linear change of the fundamental's amplitude and phase across the
	// window, the columns (τ-τ̄) cos ωτ and (τ-τ̄) sin ωτ with τ̄ the
	// window's mean time: a sensor walked over a conductor sees the
	// amplitude change within a window, and a constant-amplitude fit reads
	// a change a1 of the amplitude per second partly as a quadrature term
	// a1/(2ω), turning with the phase at the window's centre (over a
	// whole number of cycles; over a fraction of a cycle more also in
	// phase). It also takes a quadratic change about the window's mean,
	// ((τ-τ̄)² - m2) cos ωτ and ((τ-τ̄)² - m2) sin ωτ with m2 the mean of
	// (τ-τ̄)², so that the fitted B is the mean of the amplitude over the
	// window's samples, as Window.Travel assumes, whatever else the window
	// fits: without them the curvature (near a peak about travel²/(12 h²)
	// of the field) leaked into B at order 1/(ωT)², and further through
	// each column correlated with it and with sin ωτ (Drift, the
	// harmonics' slope columns); with those two a walked 20 A cable under
	// 0.5 nT of noise read 3.2 sigma low and 5.8 sigma shallow on average
	// (TestDemodulatePathMean). The four columns are nearly orthogonal to
	// the rest (a correlation of about 0.28/cycles with sin and cos for
	// the slope's, of order 1/cycles² for the curvature's), so they cost
	// almost no precision.
	ConstantAmplitude bool
	// Nuisance lists other frequencies, Hz, fitted alongside in every
	// window and not reported: the mains (50 or 60 Hz and its odd
	// harmonics) beside an injected tracer. A walked sensor sees a strong
	// mains field change within each window, and a changing tone is not
	// orthogonal to the signal's columns even over whole cycles of both:
	// unfitted, it leaks into the signal's phasors as noise many times the
	// reading noise. Each takes a cos and sin column, and their slope
	// columns unless ConstantAmplitude. Each must lie below the Nyquist
	// frequency and at least 1/Window from Freq and from each requested
	// harmonic of it.
	Nuisance []float64
	// Band is the frequency error tolerated before a drift warning, Hz.
	// Zero means 0.1/Window, where the three-parameter fit loses about
	// 1.6% of the amplitude.
	Band float64
	// MinCycles is the fewest cycles per window accepted without a
	// warning. Zero means 3.
	MinCycles float64
	// MinFreq is the lowest frequency searched when Freq is zero, Hz.
	// Zero means 5.
	MinFreq float64
}

// DemodResult is the outcome of Demodulate.
type DemodResult struct {
	Windows []Window
	// Harmonics holds, per window, the phasors of each requested harmonic
	// (nil when none were asked for), referenced to absolute time like B.
	Harmonics [][][3]complex128
	// Freq is the nominal frequency used, Hz (given or estimated). Every
	// window's phasors are referenced to its clock (Window).
	Freq float64
	// FreqSigma is the one-sigma of Freq when it was estimated
	// (DemodSettings.Freq zero), Hz; zero when Freq was given or the
	// estimate has no sigma (a warning says so).
	FreqSigma float64
	// DriftHz is the median apparent frequency error seen from the phase
	// advance between consecutive windows (of a clear signal, on the
	// strongest axis) against the clock of Freq, with or without
	// EstimateFreq. A warning names it when it turns the phase across the
	// longest group by more than MaxTurnDegrees.
	DriftHz float64
	// Uniform and General count the windows demodulated with the shared
	// precomputed basis and with a basis built from their own timestamps.
	Uniform, General int
	// Nuisance lists the nuisance frequencies fitted (DemodSettings), Hz.
	Nuisance []float64
	// Window is the length of the windows, s: a whole number of samples,
	// the one asked for unless the sampling does not divide it (then
	// the nearest whole number of samples).
	Window float64
	// Quantum describes time stamps quantised to a resolution coarser than
	// the sampling (nil when they are not): when Uniform, the windows were
	// fitted on times rebuilt on the steady sampling the stamps fit, and
	// Window.Time is on those times. A warning says so.
	Quantum *ingest.TimeQuantum
	// Dropped counts samples that fell in no full window (run tails).
	Dropped int
	// FreqFailed counts the windows left out because their four-parameter
	// fit failed (DemodSettings.SkipFailedFreq).
	FreqFailed int
	// Losses lists, per group, the windows lost to breaks in the time
	// column (DemodLoss), in the order the groups first appear; only
	// groups that lost a window are listed. A warning says the same.
	Losses   []DemodLoss
	Warnings []string
}

// DemodLoss is what breaks in the time column cost one group: the windows
// its samples would have given without them and did not. A window never
// spans a pause (a step over MaxStepIntervals sample intervals), a
// repeated time or a time going backwards, so the samples between two
// breaks closer than a window are left out.
type DemodLoss struct {
	Group string // "" for a log without groups
	// Windows is the number of windows lost: those a log of the group's
	// samples without the breaks would have given, less those fitted.
	// Expected is the former.
	Windows, Expected int
	// Samples counts the group's samples in no window, run tails
	// included.
	Samples int
	// Pauses counts steps over MaxStepIntervals sample intervals within
	// the group, LongestPause is the longest, s.
	Pauses       int
	LongestPause float64
	// Repeats counts times equal to the one before, Backwards times
	// before it, NotANumber times that are NaN.
	Repeats, Backwards, NotANumber int
	// LeftOut counts steps over MaxStepIntervals before a sample that
	// follows rows the caller left out (DemodSettings.LeftOut).
	LeftOut int
}

// add counts l's losses into o (the group's name is o's).
func (o *DemodLoss) add(l DemodLoss) {
	o.Windows += l.Windows
	o.Expected += l.Expected
	o.Samples += l.Samples
	o.Pauses += l.Pauses
	o.LongestPause = math.Max(o.LongestPause, l.LongestPause)
	o.Repeats += l.Repeats
	o.Backwards += l.Backwards
	o.NotANumber += l.NotANumber
	o.LeftOut += l.LeftOut
}

// MaxStepIntervals is the longest time step, in sample intervals, that a
// demodulation window spans: a single missing sample (a step of two
// intervals) is spanned, the window fitted on its own time stamps; a
// longer pause ends the run.
const MaxStepIntervals = 2.5

// NoWindowError is DemodulateColumns' error when no window fits in any
// run of the log: it says how long the longest run is and what broke the
// runs.
type NoWindowError struct {
	Source string  // the log's name (Demodulate), or ""
	Window float64 // window length, s
	N      int     // samples per window
	// Longest is the longest run, samples, and LongestS its length, s.
	Longest  int
	LongestS float64
	// Breaks sums the breaks in the time column over the groups (Group
	// and Windows unused).
	Breaks DemodLoss
	// Quantum is the resolution of time stamps that look quantised but do
	// not fit a steady sampling (DemodResult.Quantum), s; 0 otherwise.
	// Their repeated times are then no repeated rows.
	Quantum float64
}

func (e *NoWindowError) Error() string {
	src := ""
	if e.Source != "" {
		src = e.Source + ": "
	}
	msg := fmt.Sprintf("calibrate: %sdemodulate: no run of the log is as long as one %g s window (%d samples)", src, e.Window, e.N)
	if why := e.Breaks.reasons(); why != "" {
		msg += fmt.Sprintf(": the time column %s, and a window never spans such a break; the longest run holds %d samples (%.4g s)", why, e.Longest, e.LongestS)
	}
	if e.Quantum > 0 {
		msg += fmt.Sprintf("; the times look written to %.4g s, coarser than the sampling, but do not fit a steady sampling", e.Quantum)
	}
	return msg
}

// reasons describes the breaks l counts ("" for none), as "repeats a time
// 3 times and pauses 2 times (longest 0.5 s)".
func (l *DemodLoss) reasons() string {
	var parts []string
	if l.Repeats > 0 {
		parts = append(parts, fmt.Sprintf("repeats a time %s", times(l.Repeats)))
	}
	if l.Backwards > 0 {
		parts = append(parts, fmt.Sprintf("goes backwards %s", times(l.Backwards)))
	}
	if l.Pauses > 0 {
		parts = append(parts, fmt.Sprintf("pauses %s (two or more samples missing, the longest pause %.3g s)", times(l.Pauses), l.LongestPause))
	}
	if l.NotANumber > 0 {
		parts = append(parts, fmt.Sprintf("is not a number %s", times(l.NotANumber)))
	}
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return parts[0]
	}
	return strings.Join(parts[:len(parts)-1], ", ") + " and " + parts[len(parts)-1]
}

// times is "once", "twice" or "N times".
func times(n int) string {
	switch n {
	case 1:
		return "once"
	case 2:
		return "twice"
	}
	return fmt.Sprintf("%d times", n)
}

// Columns is a log as plain columns, the input of DemodulateColumns.
// Pos and Group may be nil.
type Columns struct {
	Time  []float64
	B     [3][]float64
	Pos   [3][]float64
	Group []string
	// leftOut holds DemodSettings.LeftOut's times (breakAt).
	leftOut map[float64]bool
}

func (c *Columns) check() error {
	n := len(c.Time)
	for k := 0; k < 3; k++ {
		if len(c.B[k]) != n {
			return fmt.Errorf("calibrate: field column %d has %d rows, time has %d", k, len(c.B[k]), n)
		}
		if c.Pos[k] != nil && len(c.Pos[k]) != n {
			return fmt.Errorf("calibrate: position column %d has %d rows, time has %d", k, len(c.Pos[k]), n)
		}
	}
	if c.Group != nil && len(c.Group) != n {
		return fmt.Errorf("calibrate: group column has %d rows, time has %d", len(c.Group), n)
	}
	// Non-finite values are caught per window (badValue), where the sums
	// turn NaN, so that the log is read only once.
	return nil
}

var fieldNames = [3]string{"bx", "by", "bz"}

// badValue returns an error naming the first non-finite value of axis k in
// rows [lo, hi).
func (c *Columns) badValue(k, lo, hi int) error {
	for i := lo; i < hi; i++ {
		if v := c.B[k][i]; math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("calibrate: row %d: column %s is %g", i, fieldNames[k], v)
		}
	}
	return fmt.Errorf("calibrate: rows %d-%d: column %s overflows", lo, hi-1, fieldNames[k])
}

// run is a stretch of rows [lo, hi) in one group with increasing times.
type run struct{ lo, hi int }

// runs splits the log at group changes and at non-increasing times.
func (c *Columns) runs() []run {
	var out []run
	lo := 0
	for i := 1; i <= len(c.Time); i++ {
		// !(a > b) also splits around NaN times, leaving them in runs of one.
		if i == len(c.Time) || !(c.Time[i] > c.Time[i-1]) || (c.Group != nil && c.Group[i] != c.Group[i-1]) {
			out = append(out, run{lo, i})
			lo = i
		}
	}
	return out
}

// splitGaps splits runs where the time step exceeds maxStep, so that no
// window spans a pause in logging.
func (c *Columns) splitGaps(runs []run, maxStep float64) []run {
	var out []run
	for _, r := range runs {
		lo := r.lo
		for i := r.lo + 1; i < r.hi; i++ {
			if c.Time[i]-c.Time[i-1] > maxStep {
				out = append(out, run{lo, i})
				lo = i
			}
		}
		out = append(out, run{lo, r.hi})
	}
	return out
}

// sampleInterval is the median positive time step within runs.
func (c *Columns) sampleInterval(runs []run) float64 {
	// The median of up to 4096 steps taken from the starts of runs.
	d := make([]float64, 0, 4096)
	for _, r := range runs {
		for i := r.lo + 1; i < r.hi && len(d) < cap(d); i++ {
			d = append(d, c.Time[i]-c.Time[i-1])
		}
	}
	if len(d) == 0 {
		return 0
	}
	sort.Float64s(d)
	med := d[len(d)/2]
	// Absolute Unix times are rounded to ~2.4e-7 s, so single steps are
	// coarse; the mean step of the longest run is exact to far better when
	// the run is uniform, and is used when it agrees with the median.
	var long run
	for _, r := range runs {
		if r.hi-r.lo > long.hi-long.lo {
			long = r
		}
	}
	if long.hi-long.lo > 2 {
		mean := (c.Time[long.hi-1] - c.Time[long.lo]) / float64(long.hi-long.lo-1)
		if math.Abs(mean-med) < 1e-3*med {
			return mean
		}
	}
	return med
}

// DemodulateColumns fits a sine (three-parameter, or four-parameter with
// EstimateFreq) to each axis in sliding windows and returns one Window
// each, with warnings for too few cycles and frequency drift. Windows hold
// a whole number of samples and never straddle a change of group, a time
// that does not increase, or a pause (a step above MaxStepIntervals sample
// intervals; a single missing sample is spanned, the window fitted on its
// own time stamps); a run's tail shorter than a window is dropped, and the
// windows lost to such breaks are counted per group (DemodResult.Losses)
// with a warning. When no window fits, the error is a *NoWindowError.
// Windows whose times sit on a uniform grid share one precomputed basis;
// others get their own.
func DemodulateColumns(c *Columns, set *DemodSettings) (*DemodResult, error) {
	if c == nil {
		return nil, errors.New("calibrate: demodulate: no columns (nil)")
	}
	var ds DemodSettings
	if set != nil {
		ds = *set
	}
	if err := c.check(); err != nil {
		return nil, err
	}
	c, stuck := stuckColumns(c) // stuckstamps.go
	c, quantum := retimeColumns(c)
	if len(ds.LeftOut) > 0 {
		cc := *c
		cc.leftOut = make(map[float64]bool, len(ds.LeftOut))
		for _, t := range ds.LeftOut {
			cc.leftOut[t] = true
		}
		c = &cc
	}
	if ds.Freq < 0 || math.IsNaN(ds.Freq) || math.IsInf(ds.Freq, 0) {
		return nil, fmt.Errorf("calibrate: demodulate: frequency %g Hz is not positive", ds.Freq)
	}
	if ds.Window < 0 || ds.Step < 0 || ds.Band < 0 || ds.MinCycles < 0 {
		return nil, errors.New("calibrate: demodulate: window, step, band and cycles must not be negative")
	}
	for _, h := range ds.Harmonics {
		if h < 2 {
			return nil, fmt.Errorf("calibrate: demodulate: harmonic %d, want 2 or more", h)
		}
	}
	if ds.MinCycles == 0 {
		ds.MinCycles = 3
	}
	if ds.MinFreq == 0 {
		ds.MinFreq = 5
	}
	runs := c.runs()
	dt := c.sampleInterval(runs)
	if !(dt > 0) {
		if why := ingest.OneTime(c.Time); why != "" {
			return nil, errors.New("calibrate: demodulate: " + why)
		}
		return nil, errors.New("calibrate: demodulate: fewer than two samples in time order")
	}
	runs = c.splitGaps(runs, MaxStepIntervals*dt)
	fs := 1 / dt
	res := &DemodResult{}
	if ds.Freq == 0 {
		f, sigma, note, err := estimateFreq(c, runs, dt, &ds)
		if err != nil {
			return nil, err
		}
		ds.Freq, res.FreqSigma = f, sigma
		if sigma > 0 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("frequency not given: estimated %s Hz %s", plusMinus(f, sigma), note))
		} else {
			res.Warnings = append(res.Warnings, fmt.Sprintf("frequency not given: estimated %.4f Hz %s", f, note))
		}
	}
	res.Freq = ds.Freq
	res.Nuisance = append([]float64(nil), ds.Nuisance...)
	if len(stuck) > 0 {
		res.Warnings = append(res.Warnings, StuckWarning(len(stuck), fmt.Sprintf("row %d, counting from 1", stuck[0]+1)))
	}
	if quantum != nil {
		res.Quantum = quantum
		res.Warnings = append(res.Warnings, quantumWarning(quantum, ds.Freq))
	}
	maxH := 1
	for _, h := range ds.Harmonics {
		maxH = max(maxH, h)
	}
	if float64(maxH)*ds.Freq >= fs/2 {
		what := fmt.Sprintf("%g Hz", ds.Freq)
		if maxH > 1 {
			what = fmt.Sprintf("%g Hz (harmonic %d of %g Hz)", float64(maxH)*ds.Freq, maxH, ds.Freq)
		}
		return nil, fmt.Errorf("calibrate: demodulate: %s is at or above the Nyquist frequency %.4g Hz of the log%s", what, fs/2, c.repeatedTimes())
	}
	if ds.Window == 0 {
		ds.Window = 10 / ds.Freq
	}
	if ds.Step == 0 {
		ds.Step = ds.Window
	}
	if ds.Band == 0 {
		ds.Band = 0.1 / ds.Window
	}
	N := int(math.Round(ds.Window / dt))
	hop := max(1, int(math.Round(ds.Step/dt)))
	res.Window = usedWindow(ds.Window, N, dt)
	for _, fn := range ds.Nuisance {
		if !(fn > 0) || fn >= fs/2 || math.IsInf(fn, 0) {
			return nil, fmt.Errorf("calibrate: demodulate: nuisance frequency %g Hz is not between 0 and the Nyquist frequency %g Hz", fn, fs/2)
		}
		for _, h := range append([]int{1}, ds.Harmonics...) {
			if math.Abs(fn-float64(h)*ds.Freq) < 1/ds.Window {
				return nil, fmt.Errorf("calibrate: demodulate: nuisance frequency %g Hz is within 1/window (%.3g Hz) of %g Hz, which a %g s window cannot tell apart", fn, 1/ds.Window, float64(h)*ds.Freq, ds.Window)
			}
		}
	}
	p := 3 + 2*len(ds.Harmonics) + DriftColumns(&ds, N, dt)
	if !ds.ConstantAmplitude {
		p += 4 + 2*len(ds.Harmonics)
	}
	perNuisance := 2
	if !ds.ConstantAmplitude {
		perNuisance = 4
	}
	p += perNuisance * len(ds.Nuisance)
	if N <= p+1 {
		// Name the shortest window that holds enough samples: the fit
		// needs at least p+2 (found in review: "9 samples, too few for 8
		// parameters" read as a contradiction and named no way out).
		// A longer window may take the background's quadratic and cubic
		// too (DriftColumns), and so need more samples still.
		m := p + 2
		for m < p-DriftColumns(&ds, N, dt)+DriftColumns(&ds, m, dt)+2 {
			m++
		}
		return nil, fmt.Errorf("calibrate: demodulate: a %g s window holds %d samples at %g Hz sampling, too few for the %d parameters each window fits (the signal with its change across the window, a constant and the background's change, and any harmonics and mains lines fitted beside it) with residuals left to judge them: use a window of at least %.3g s", ds.Window, N, fs, p, float64(m)/fs)
	}
	// The interval measured from absolute Unix times is off by parts per
	// million (their float64 rounding), so a window of just MinCycles
	// cycles may count a hair fewer: a window short by under 0.005 cycles
	// (what %.2f cannot show) is as good, and is not warned about.
	if cyc := ds.Freq * float64(N) * dt; cyc < ds.MinCycles-0.005 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("a %g s window holds only %.2f cycles of %g Hz (want at least %g): amplitudes leak from the Earth's field and drift", ds.Window, cyc, ds.Freq, ds.MinCycles))
	}

	enough := ds.Freq*float64(N)*dt >= ds.MinCycles-0.005
	// In a window of too few cycles (warned about above) the fundamental's
	// own columns are inflated anyway, and only the harmonics' share is
	// judged: their inflation over that of the same window without them.
	base := 1.0
	if !enough && len(ds.Harmonics) > 0 {
		base = templateInflation(N, dt, &ds, nil)
	}
	tpl, err := newTemplate(N, dt, ds.Freq, ds.Harmonics, DriftColumns(&ds, N, dt), !ds.ConstantAmplitude, ds.Nuisance)
	if err != nil {
		if enough || !math.IsInf(base, 0) && len(ds.Harmonics) > 0 {
			// Singular outright: say why when a longer window would do.
			e := &IllConditionedError{Freq: ds.Freq, Rate: fs, Window: res.Window, Inflation: math.Inf(1)}
			if !enough {
				e.Harmonics, e.Base = ds.Harmonics, base
			}
			if e.Suggest, _ = conditionedWindow(fs, &ds, WarnWindowInflation); e.Suggest > 0 {
				return nil, e
			}
		}
		return nil, err
	}
	// A window of enough cycles whose columns are nearly dependent (a
	// sample rate just above twice the frequency) is refused, naming a
	// window that would do; so is one of too few cycles whose harmonics'
	// columns are (the 2nd harmonic's cos 2ωτ and sin 2ωτ are nearly the
	// fundamental's change across a window of two cycles or fewer: with
	// the 2nd, 3rd, 5th and 7th fitted in 1.5 cycles of 50 Hz at 2 kHz
	// the fundamental's variance was 1900 times that without them, a
	// walked cable's current sigma 30 times, and nothing said; found in
	// review). Between WarnWindowInflation and MaxWindowInflation a
	// warning says so.
	if inf := tpl.inflation(); (enough || len(ds.Harmonics) > 0) && !(inf <= WarnWindowInflation*base) {
		e := &IllConditionedError{Freq: ds.Freq, Rate: fs, Window: res.Window, Inflation: inf}
		if !enough {
			e.Harmonics, e.Base = ds.Harmonics, base
		}
		e.Suggest, _ = conditionedWindow(fs, &ds, WarnWindowInflation)
		if !(inf <= MaxWindowInflation*base) {
			return nil, e
		}
		res.Warnings = append(res.Warnings, strings.TrimPrefix(e.Error(), "calibrate: demodulate: "))
	}
	d := demodulator{c: c, set: &ds, tpl: tpl, res: res}
	res.Windows = make([]Window, 0, len(c.Time)/hop+len(runs))
	got := make([]int, len(runs)) // windows per run
	for i, r := range runs {
		first := len(res.Windows)
		end := r.lo
		failed := 0
		for lo := r.lo; lo+N <= r.hi; lo += hop {
			if err := d.window(lo, lo+N); err != nil {
				var ff *freqFitFailed
				if !(ds.SkipFailedFreq && errors.As(err, &ff)) {
					return nil, err
				}
				res.FreqFailed++
				failed++
			}
			end = lo + N
		}
		res.Dropped += r.hi - end
		// A window whose frequency fit failed is not lost to a break.
		got[i] = len(res.Windows) - first + failed
		d.phaseDrift(res.Windows[first:])
	}
	span, spanGroup := longestGroupSpan(res.Windows, res.Window)
	if len(d.drifts) > 0 {
		sort.Float64s(d.drifts)
		res.DriftHz = d.drifts[len(d.drifts)/2]
		// The median's standard error, from the drifts' scaled median
		// absolute deviation (1.2533 σ/√n for a normal sample).
		dev := make([]float64, len(d.drifts))
		for i, v := range d.drifts {
			dev[i] = math.Abs(v - res.DriftHz)
		}
		se := 1.2533 * 1.4826 * median(dev, nil) / math.Sqrt(float64(len(dev)))
		turn := 360 * math.Abs(res.DriftHz) * span
		outside := !ds.EstimateFreq && math.Abs(res.DriftHz) > ds.Band
		turns := !ds.PhaseChecked && turn > MaxTurnDegrees && math.Abs(res.DriftHz) > 3*se
		switch {
		case turns:
			// Enough decimals to show the drift: 0.05 Hz or more in
			// thousandths, as the amplitude band's warning.
			dec := 4
			if math.Abs(res.DriftHz) >= 0.05 {
				dec = 3
			}
			w := fmt.Sprintf("the phase advances between windows as if the frequency were %.*f Hz, not %g Hz: across the longest group (%s%.3g s) the phasors' phase turns by %.0f°, so its phasors are not those of one steady field and a fit of them as one problem (inverse.FitLines) may misplace or miss the conductors; demodulate at %.*f Hz",
				dec, ds.Freq+res.DriftHz, ds.Freq, groupLabel(spanGroup), span, turn, dec, ds.Freq+res.DriftHz)
			if outside {
				w += fmt.Sprintf(" (it is also outside the %.3f Hz band of a %g s window: amplitudes are biased low)", ds.Band, ds.Window)
			}
			res.Warnings = append(res.Warnings, w)
		case outside:
			res.Warnings = append(res.Warnings, fmt.Sprintf(
				"the phase advances between windows as if the frequency were %.3f Hz, not %g Hz (outside the %.3f Hz band of a %g s window): amplitudes are biased low; estimate the frequency",
				ds.Freq+res.DriftHz, ds.Freq, ds.Band, ds.Window))
		}
	}
	if turn := 360 * res.FreqSigma * span; !ds.PhaseChecked && turn > MaxTurnDegrees {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the estimated frequency's uncertainty, %.2g Hz, alone turns the phase by up to %.0f° across the longest group (%s%.3g s): its phasors may not be those of one steady field; give the frequency if it is known",
			res.FreqSigma, turn, groupLabel(spanGroup), span))
	}
	if d.outBand > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf(
			"in %d of %d windows the estimated frequency (%.3f to %.3f Hz) is outside %g ± %.3f Hz, first at %s",
			d.outBand, len(res.Windows), d.outLo, d.outHi, ds.Freq, ds.Band, d.firstOut))
	}
	res.Losses = c.losses(runs, got, N, hop, MaxStepIntervals*dt)
	if len(res.Windows) == 0 {
		e := &NoWindowError{Window: ds.Window, N: N}
		for _, r := range runs {
			if n := r.hi - r.lo; n > e.Longest {
				e.Longest, e.LongestS = n, c.Time[r.hi-1]-c.Time[r.lo]
			}
		}
		e.Breaks = c.breaks(runs, MaxStepIntervals*dt)
		if quantum != nil && !quantum.Uniform {
			e.Quantum = quantum.Quantum
		}
		return nil, e
	}
	if w := lossWarning(res.Losses, c.Group != nil, quantum, &ds); w != "" {
		res.Warnings = append(res.Warnings, w)
	}
	return res, nil
}

// MaxTurnDegrees is the most by which the phase of a steady field may turn
// across a group's windows before Demodulate warns: a frequency off by
// DriftHz turns it by 360 DriftHz T degrees over a group lasting T
// seconds (264° for 0.073 Hz over the demo's 10 s traverses), and the
// group's phasors then are not those of one steady field.
const MaxTurnDegrees = 5

// longestGroupSpan returns the longest time from the start of a group's
// first window to the end of its last (the stretch whose phasors go to one
// fit), s, and that group.
func longestGroupSpan(ws []Window, window float64) (float64, string) {
	first, last := map[string]float64{}, map[string]float64{}
	var order []string
	for _, w := range ws {
		if _, ok := first[w.Group]; !ok {
			first[w.Group] = w.Time
			order = append(order, w.Group)
		}
		last[w.Group] = w.Time
	}
	span, group := 0.0, ""
	for _, g := range order {
		if d := last[g] - first[g] + window; d > span {
			span, group = d, g
		}
	}
	return span, group
}

// groupLabel names a group for a message: "group T01, " (nothing for the
// log's only, unnamed group).
func groupLabel(g string) string {
	if g == "" {
		return ""
	}
	return "group " + g + ", "
}

// breakAt classifies the break before row i (the start of a run) into l:
// a group change is none; otherwise a repeated time, a time going
// backwards, a NaN time, or a pause (a step over maxStep). It reports
// whether it was a group change.
func (c *Columns) breakAt(i int, maxStep float64, l *DemodLoss) (groupChange bool) {
	if c.Group != nil && c.Group[i] != c.Group[i-1] {
		return true
	}
	a, b := c.Time[i-1], c.Time[i]
	switch step := b - a; {
	case math.IsNaN(a) || math.IsNaN(b):
		l.NotANumber++
	case step == 0:
		l.Repeats++
	case step < 0:
		l.Backwards++
	case step > maxStep && c.leftOut[b]:
		l.LeftOut++
	case step > maxStep:
		l.Pauses++
		l.LongestPause = math.Max(l.LongestPause, step)
	}
	return false
}

// breaks sums the breaks between runs over the whole log.
func (c *Columns) breaks(runs []run, maxStep float64) DemodLoss {
	var l DemodLoss
	for _, r := range runs[min(1, len(runs)):] {
		c.breakAt(r.lo, maxStep, &l)
	}
	return l
}

// losses returns, per group, the windows lost to breaks in the time
// column (DemodLoss): runs are the log's runs in order and got the windows
// fitted in each; a stretch of rows of one group (between group changes)
// would have given (n-N)/hop+1 windows without breaks.
func (c *Columns) losses(runs []run, got []int, N, hop int, maxStep float64) []DemodLoss {
	var out []DemodLoss
	index := map[string]int{}
	var cur DemodLoss // the current stretch of one group
	var n, fitted, end int
	flush := func() {
		if n >= N {
			cur.Expected = (n-N)/hop + 1
		}
		cur.Windows = max(0, cur.Expected-fitted)
		if cur.Windows > 0 {
			k, ok := index[cur.Group]
			if !ok {
				k = len(out)
				index[cur.Group] = k
				out = append(out, DemodLoss{Group: cur.Group})
			}
			out[k].add(cur)
		}
	}
	for i, r := range runs {
		if i == 0 || c.breakAt(r.lo, maxStep, &cur) {
			if i > 0 {
				flush()
			}
			cur = DemodLoss{}
			if c.Group != nil {
				cur.Group = c.Group[r.lo]
			}
			n, fitted = 0, 0
		}
		n += r.hi - r.lo
		fitted += got[i]
		end = r.lo
		if got[i] > 0 {
			end = r.lo + (got[i]-1)*hop + N
		}
		cur.Samples += r.hi - end
	}
	if len(runs) > 0 {
		flush()
	}
	return out
}

// lossWarning describes the windows lost to breaks in the time column, per
// group when grouped; "" when none was lost. With stamps that look
// quantised (q non-nil and not uniform), repeated times are no repeated
// rows, and the advice is to write the times with more digits.
func lossWarning(ls []DemodLoss, grouped bool, q *ingest.TimeQuantum, ds *DemodSettings) string {
	if len(ls) == 0 {
		return ""
	}
	var all DemodLoss
	var per []string
	for i := range ls {
		l := &ls[i]
		all.add(*l)
		name := l.Group
		if name == "" {
			name = "(no group)"
		}
		per = append(per, fmt.Sprintf("%s %d/%d (%s)", name, l.Windows, l.Expected, l.short()))
	}
	leftOut := ""
	if all.LeftOut > 0 {
		leftOut = fmt.Sprintf("%d gaps are where %s", all.LeftOut, ds.LeftOutWhy)
		if all.LeftOut == 1 {
			leftOut = "1 gap is where " + ds.LeftOutWhy
		}
	}
	if all.LeftOut > 0 && all.reasons() == "" {
		// Every break is a gap the caller made: the time stamps are not
		// at fault (before, an AC log whose clipped readings were left
		// out was told to fix its logger's time stamps: found in review).
		gaps := fmt.Sprintf("all %d gaps are where %s", all.LeftOut, ds.LeftOutWhy)
		if all.LeftOut == 1 {
			gaps = "the one gap is where " + ds.LeftOutWhy
		}
		what := fmt.Sprintf("%d of %d AC windows lost to gaps in the readings (%.1f%%; %d samples in no window): %s",
			all.Windows, all.Expected, 100*float64(all.Windows)/float64(all.Expected), all.Samples, gaps)
		if grouped {
			what += fmt.Sprintf("; windows lost/expected per group: %s", strings.Join(per, ", "))
		}
		return what + ". A window never spans a gap longer than one missing sample, so the samples between two gaps closer than a window are left out and the fit rests on fewer windows; the time stamps are not at fault: " + ds.LeftOutFix + ", or demodulate in shorter windows"
	}
	what := fmt.Sprintf("%d of %d AC windows lost to breaks in the time column (%.1f%%; %d samples in no window): the time column %s",
		all.Windows, all.Expected, 100*float64(all.Windows)/float64(all.Expected), all.Samples, all.reasons())
	if leftOut != "" {
		what += "; " + leftOut + ", not the time stamps' fault"
	}
	if grouped {
		what += fmt.Sprintf("; windows lost/expected per group: %s", strings.Join(per, ", "))
	}
	fix := "fix the logger's time stamps (repeated rows removed)"
	if q != nil && !q.Uniform {
		fix = fmt.Sprintf("write the times with more digits than their %.4g s (the repeated times are rows of their own, not copies)", q.Quantum)
	}
	return what + ". A window never spans a repeated time, one going backwards or a pause longer than one missing sample, so the samples between two breaks closer than a window are left out and the fit rests on fewer windows: " + fix + ", or demodulate in shorter windows"
}

// short describes l's breaks tersely: "5 repeated, 2 pauses".
func (l *DemodLoss) short() string {
	var parts []string
	add := func(n int, one, many string) {
		switch {
		case n == 1:
			parts = append(parts, "1 "+one)
		case n > 1:
			parts = append(parts, fmt.Sprintf("%d %s", n, many))
		}
	}
	add(l.Repeats, "repeated time", "repeated times")
	add(l.Backwards, "step back", "steps back")
	add(l.Pauses, "pause", "pauses")
	add(l.NotANumber, "NaN time", "NaN times")
	add(l.LeftOut, "gap left out", "gaps left out")
	return strings.Join(parts, ", ")
}

// template is the basis shared by all uniformly sampled windows of N
// samples: columns relative to the first sample, and (XᵀX)⁻¹. The columns
// are cos, sin, 1, the cos and sin of each harmonic, τ with drift, then,
// with slope, the linear change of the fundamental's amplitude and of
// each harmonic's (DemodSettings.ConstantAmplitude, slopeColumns), then
// the nuisance frequencies' columns.
type template struct {
	n, p      int
	dt        float64
	basis     [][]float64 // p columns of n
	ginv      []float64   // p×p row-major (XᵀX)⁻¹
	harmonics []int
	drift     int // background columns beyond the constant (DriftColumns)
	slope     bool
	nuisance  []float64
	freq      float64
	// chol is the Cholesky factor of XᵀX for a window's own basis
	// (generalTemplate), whose ginv then holds only its first two rows;
	// nil for the shared template, whose ginv is whole.
	chol []float64
}

// slopeStart is the index of the first slope column (the fundamental's
// (τ-τ̄) cos ωτ) of a basis with the harmonics h and drift.
func slopeStart(h []int, drift int) int {
	return 3 + 2*len(h) + drift
}

// MinBackgroundCycles is the fewest cycles of the signal a window must
// hold for DemodSettings.Drift to fit the background's quadratic and cubic
// beside τ. Over fewer the cubic can hardly be told from the signal's own
// change across the window (the fundamental's variance, against a
// well-spread window's, went from 1.13 to 1.56 at three cycles and from
// 1.8 to 37 at two, where with the signal's harmonics it passed
// MaxWindowInflation), while a shorter window spans less of the path and
// leaks less of the background's curve (about in proportion to its
// length): such a window takes τ alone.
const MinBackgroundCycles = 4

// DriftColumns is the number of columns settings set take for the
// background beyond the constant in windows of n samples dt seconds apart:
// none without Drift; τ and the quadratic and cubic of the window's
// background (fillBackground) with it in a window of MinBackgroundCycles
// or more; τ alone in a shorter one.
func DriftColumns(set *DemodSettings, n int, dt float64) int {
	switch {
	case set == nil || !set.Drift:
		return 0
	case set.Freq*float64(n)*dt >= MinBackgroundCycles-0.005:
		return 3
	}
	return 1
}

// fillBackground fills c2 and c3 with the quadratic and cubic Legendre
// polynomials of the window's local times tau scaled to [-1, 1] about the
// window's midpoint, P2(u) = (3u²-1)/2 and P3(u) = (5u³-3u)/2: with the
// constant and τ they fit a cubic background (DemodSettings.Drift), and
// in that form the columns stay well conditioned however long the window.
func fillBackground(c2, c3, tau []float64) {
	n := len(tau)
	if n == 0 {
		return
	}
	mid, half := 0.5*(tau[0]+tau[n-1]), 0.5*(tau[n-1]-tau[0])
	if !(half > 0) {
		half = 1
	}
	for k, t := range tau {
		u := (t - mid) / half
		c2[k] = 0.5 * (3*u*u - 1)
		c3[k] = 0.5 * u * (5*u*u - 3)
	}
}

// slopeColumns fills the slope columns of the fundamental and of each
// harmonic (fillSlope) in cols, laid out as in template, from their cos
// and sin columns and the window's local times tau.
func slopeColumns(cols [][]float64, h []int, drift int, tau []float64) {
	q := slopeStart(h, drift)
	fillSlope(cols[q], cols[q+1], cols[0], cols[1], tau)
	fillCurve(cols[q+2], cols[q+3], cols[0], cols[1], tau)
	for j := range h {
		fillSlope(cols[q+4+2*j], cols[q+5+2*j], cols[3+2*j], cols[4+2*j], tau)
	}
}

// nuisanceCols is the number of columns the nuisance frequencies take.
func (tp *template) nuisanceCols() int {
	if tp.slope {
		return 4 * len(tp.nuisance)
	}
	return 2 * len(tp.nuisance)
}

func newTemplate(n int, dt, freq float64, harmonics []int, drift int, slope bool, nuisance []float64) (*template, error) {
	q := slopeStart(harmonics, drift)
	p := q
	if slope {
		p += 4 + 2*len(harmonics)
	}
	tp := &template{n: n, dt: dt, harmonics: harmonics, drift: drift, slope: slope, nuisance: nuisance, freq: freq}
	p += tp.nuisanceCols()
	tp.p = p
	tp.basis = make([][]float64, p)
	for j := range tp.basis {
		tp.basis[j] = make([]float64, n)
	}
	// basisRow fills all but the background's quadratic and cubic.
	nb := 3 + 2*len(harmonics) + min(drift, 1)
	row := make([]float64, nb)
	w := 2 * math.Pi * freq
	for k := 0; k < n; k++ {
		basisRow(row, float64(k)*dt, w, harmonics, drift > 0)
		for j := 0; j < nb; j++ {
			tp.basis[j][k] = row[j]
		}
	}
	tau := make([]float64, n)
	for k := range tau {
		tau[k] = float64(k) * dt
	}
	if drift == 3 {
		fillBackground(tp.basis[nb], tp.basis[nb+1], tau)
	}
	if slope {
		// τ̄ = (n-1) dt / 2; k dt - τ̄ is formed as (2k - (n-1)) dt/2, exact
		// in the integers.
		m2 := float64(n*n-1) * dt * dt / 12 // the mean of tc²
		for k := 0; k < n; k++ {
			tc := float64(2*k-(n-1)) * dt / 2
			tp.basis[q][k] = tc * tp.basis[0][k]
			tp.basis[q+1][k] = tc * tp.basis[1][k]
			tp.basis[q+2][k] = (tc*tc - m2) * tp.basis[0][k]
			tp.basis[q+3][k] = (tc*tc - m2) * tp.basis[1][k]
			for j := range harmonics {
				tp.basis[q+4+2*j][k] = tc * tp.basis[3+2*j][k]
				tp.basis[q+5+2*j][k] = tc * tp.basis[4+2*j][k]
			}
		}
	}
	fillNuisance(tp.basis[p-tp.nuisanceCols():], tau, nuisance, slope)
	g, err := normalInverse(tp.basis)
	if err != nil {
		return nil, err
	}
	tp.ginv = g
	return tp, nil
}

// MaxWindowInflation is the most by which the variance of the
// fundamental's cosine or sine coefficient in a window may exceed its
// variance were the two orthogonal to the window's other columns
// (template.inflation) before DemodulateColumns refuses the window; beyond
// WarnWindowInflation it warns, naming a window that would do.
//
// Sampled at a rate fs just above twice the frequency f, cos ωt and
// sin ωt are (-1)^k times an envelope turning at (fs - 2f)/2 Hz, and over
// a window much shorter than the beat 1/(fs - 2f) that envelope is nearly
// a quadratic, which the columns of a changing amplitude
// (DemodSettings.ConstantAmplitude) also take: the fit can no longer tell
// the fundamental from its change. The variance is then inflated by
// orders of magnitude, and any change of the field within the window
// beyond a quadratic (a sensor walked over a cable), or the Earth's field
// through the rounding of a near-singular solve, with it: a 40 A cable
// logged at 102 Hz in the 0.2 s windows of ten 50 Hz cycles (an
// inflation of 4e7) read "no current found" on every traverse, or 12
// sigma off, with window residuals of 9600 nT (found in review).
// Windows spanning about two beats or more are inflated by under 2 (1.8
// at 102 Hz in 1 s windows, 1.9 at 110 Hz in 0.2 s); a well-spread window
// of ten cycles at 2 kHz by 1.01, and 50 Hz at 107 Hz in 0.2 s (1.4
// beats) by 24, its sigmas honest but five times those of a longer window.
const (
	MaxWindowInflation  = 100
	WarnWindowInflation = 4
)

// IllConditionedError is DemodulateColumns' error when the window's
// columns are so nearly dependent that the fundamental's phasor is lost
// among them (MaxWindowInflation), typically at a sample rate just above
// twice the frequency.
type IllConditionedError struct {
	Source     string  // the log's name (Demodulate), or ""
	Freq, Rate float64 // signal frequency and sample rate, Hz
	Window     float64 // the window asked for, s (a whole number of samples)
	Inflation  float64 // the fundamental's variance inflation in it
	// Suggest is the shortest whole multiple of Window (up to
	// maxWindowMultiple) in which the inflation is at most
	// WarnWindowInflation (ConditionedWindow); 0 when there is none.
	Suggest float64
	// Harmonics, in a window of fewer than MinCycles cycles, are the
	// harmonics fitted whose columns inflate the fundamental's variance,
	// and Base that inflation without them (the window's own, which the
	// warning about too few cycles covers); nil and 0 otherwise.
	Harmonics []int
	Base      float64
}

func (e *IllConditionedError) Error() string {
	src := ""
	if e.Source != "" {
		src = e.Source + ": "
	}
	var msg string
	if len(e.Harmonics) > 0 {
		msg = fmt.Sprintf("calibrate: %sdemodulate: in %.4g s windows, %.2f cycles of %g Hz, the columns of the harmonics fitted (%s) are nearly dependent on the fundamental's change across the window (%s that without them)",
			src, e.Window, e.Window*e.Freq, e.Freq, intList(e.Harmonics), e.relative())
		if e.Suggest > 0 {
			return msg + fmt.Sprintf(": fit fewer harmonics (the 2nd first), or use windows of %.4g s or longer", e.Suggest)
		}
		return msg + ": fit fewer harmonics (the 2nd first)"
	}
	if beat := math.Abs(e.Rate - 2*e.Freq); beat*e.Window < 4 {
		msg = fmt.Sprintf("calibrate: %sdemodulate: %.5g Hz sampling is too close to twice %g Hz for %.4g s windows: sampled at that rate the %g Hz sine and cosine alternate in sign from sample to sample under an envelope that turns once every %.3g s (1/(fs - 2f)), and over a window shorter than about two such turns the envelope is nearly the window's own columns for a changing amplitude, so the fit cannot tell the signal from its change (%s, and any change of the field within the window beyond a quadratic amplified with it)",
			src, e.Rate, e.Freq, e.Window, e.Freq, 1/beat, e.inflated())
	} else {
		msg = fmt.Sprintf("calibrate: %sdemodulate: the fit's columns are nearly dependent in %.4g s windows of %g Hz at %.5g Hz sampling (%s)", src, e.Window, e.Freq, e.Rate, e.inflated())
	}
	if e.Suggest > 0 {
		return msg + fmt.Sprintf(": use windows of %.4g s or longer, or sample faster", e.Suggest)
	}
	return msg + ": sample faster"
}

// inflated describes the inflation: "the signal's variance 3.6e+07 times that
// of a well-spread window", or that the columns are singular.
func (e *IllConditionedError) inflated() string {
	if math.IsInf(e.Inflation, 0) || math.IsNaN(e.Inflation) {
		return "the signal's columns singular with the others"
	}
	return fmt.Sprintf("the signal's variance %.3g times that of a well-spread window", e.Inflation)
}

// relative describes a short window's inflation against that without its
// harmonics (Base): "the signal's variance 1.9e+03 times".
func (e *IllConditionedError) relative() string {
	if math.IsInf(e.Inflation, 0) || math.IsNaN(e.Inflation) {
		return "the signal's columns singular with them"
	}
	return fmt.Sprintf("the signal's variance %.3g times", e.Inflation/e.Base)
}

// intList is "2, 3, 5".
func intList(h []int) string {
	parts := make([]string, len(h))
	for i, k := range h {
		parts[i] = strconv.Itoa(k)
	}
	return strings.Join(parts, ", ")
}

// maxWindowMultiple is the longest window, in multiples of the one asked
// for, that ConditionedWindow tries.
const maxWindowMultiple = 64

// ConditionedWindow returns the shortest whole multiple of set.Window
// (ten cycles of set.Freq when zero) whose fit at the sample rate fs Hz,
// with set's harmonics, drift, amplitude change and nuisance lines, has
// the fundamental's variance inflated by at most maxInflation
// (MaxWindowInflation; see there), and that inflation. Whole multiples
// keep whole cycles of the signal, or of the mains, where the window held
// them. It returns set.Window itself when that is well conditioned, and
// an error when no multiple up to maxWindowMultiple is.
func ConditionedWindow(fs float64, set *DemodSettings, maxInflation float64) (window, inflation float64, err error) {
	var ds DemodSettings
	if set != nil {
		ds = *set
	}
	if !(fs > 0) || !(ds.Freq > 0) {
		return 0, 0, errors.New("calibrate: conditioned window: sample rate and frequency must be positive")
	}
	if ds.Window == 0 {
		ds.Window = 10 / ds.Freq
	}
	w, inf := conditionedWindow(fs, &ds, maxInflation)
	if w == 0 {
		return 0, inf, fmt.Errorf("calibrate: conditioned window: no window up to %d times %g s is well conditioned at %g Hz sampling", maxWindowMultiple, ds.Window, fs)
	}
	return w, inf, nil
}

// conditionedWindow is ConditionedWindow on settings with the window set:
// the window (a whole number of samples) and its inflation, or 0 and the
// inflation of the longest window tried.
func conditionedWindow(fs float64, ds *DemodSettings, maxInflation float64) (float64, float64) {
	dt := 1 / fs
	var inf float64
	for m := 1; m <= maxWindowMultiple; m++ {
		n := int(math.Round(float64(m) * ds.Window / dt))
		tp, err := newTemplate(n, dt, ds.Freq, ds.Harmonics, DriftColumns(ds, n, dt), !ds.ConstantAmplitude, ds.Nuisance)
		if err != nil {
			inf = math.Inf(1)
			continue
		}
		if inf = tp.inflation(); inf <= maxInflation {
			return usedWindow(float64(m)*ds.Window, n, dt), inf
		}
	}
	return 0, inf
}

// templateInflation is the fundamental's variance inflation
// (template.inflation) in a window of n samples dt apart with ds's
// settings but the harmonics h; +Inf when the basis is singular.
func templateInflation(n int, dt float64, ds *DemodSettings, h []int) float64 {
	tp, err := newTemplate(n, dt, ds.Freq, h, DriftColumns(ds, n, dt), !ds.ConstantAmplitude, ds.Nuisance)
	if err != nil {
		return math.Inf(1)
	}
	return tp.inflation()
}

// HarmonicsFit is ConditionedHarmonics' choice of harmonics.
type HarmonicsFit struct {
	// Keep are the harmonics fitted, in the order asked for.
	Keep []int
	// Inflation is the fundamental's variance with Keep fitted over that
	// without harmonics (1 with none kept); All that with every harmonic
	// asked for (+Inf when their basis is singular).
	Inflation, All float64
}

// ConditionedHarmonics chooses which of set.Harmonics to fit beside the
// fundamental in windows of set.Window (ten cycles of set.Freq when zero)
// at the sample rate fs Hz, with set's drift, amplitude change and
// nuisance lines: taking them in the order given, it keeps each whose
// columns, with those kept before it, leave the fundamental's variance
// at most maxRatio times that of the same window without harmonics
// (template.inflation). Over ten cycles they cost a percent or two; over
// two cycles or fewer the 2nd harmonic's columns are nearly the
// fundamental's change across the window (the 2nd, 3rd, 5th and 7th
// inflated it 19 times in 2 cycles of 50 Hz at 2 kHz, 1900 times in 1.5,
// the 3rd and 5th alone 1.2 and 1.4 times). An error when the window's
// basis without harmonics is itself singular (the demodulation says why).
func ConditionedHarmonics(fs float64, set *DemodSettings, maxRatio float64) (HarmonicsFit, error) {
	var ds DemodSettings
	if set != nil {
		ds = *set
	}
	if !(fs > 0) || !(ds.Freq > 0) {
		return HarmonicsFit{}, errors.New("calibrate: conditioned harmonics: sample rate and frequency must be positive")
	}
	if ds.Window == 0 {
		ds.Window = 10 / ds.Freq
	}
	dt := 1 / fs
	n := int(math.Round(ds.Window / dt))
	base := templateInflation(n, dt, &ds, nil)
	if math.IsInf(base, 0) || math.IsNaN(base) {
		return HarmonicsFit{}, fmt.Errorf("calibrate: conditioned harmonics: the basis of a %g s window at %g Hz sampling is singular without harmonics", ds.Window, fs)
	}
	fit := HarmonicsFit{Inflation: 1, All: 1}
	if len(ds.Harmonics) == 0 {
		return fit, nil
	}
	fit.All = templateInflation(n, dt, &ds, ds.Harmonics) / base
	if fit.All <= maxRatio {
		fit.Keep, fit.Inflation = append([]int(nil), ds.Harmonics...), fit.All
		return fit, nil
	}
	for _, h := range ds.Harmonics {
		try := append(append([]int(nil), fit.Keep...), h)
		if r := templateInflation(n, dt, &ds, try) / base; r <= maxRatio {
			fit.Keep, fit.Inflation = try, r
		}
	}
	return fit, nil
}

// inflation is the factor by which the variance of the fundamental's
// cosine or sine coefficient (the larger) exceeds what it would be were
// its column orthogonal to the others: (XᵀX)⁻¹_jj times the column's sum
// of squares, 1 for an orthogonal basis (the variance inflation factor of
// regression diagnostics). It needs the whole (XᵀX)⁻¹ (the shared
// template's).
func (tp *template) inflation() float64 {
	p := tp.p
	v0 := tp.ginv[0] * dot(tp.basis[0], tp.basis[0])
	v1 := tp.ginv[p+1] * dot(tp.basis[1], tp.basis[1])
	if math.IsNaN(v0) || math.IsNaN(v1) {
		return math.Inf(1)
	}
	return math.Max(v0, v1)
}

// normalInverse returns (XᵀX)⁻¹ for the columns of X, row-major.
func normalInverse(cols [][]float64) ([]float64, error) {
	p := len(cols)
	xtx := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			var s float64
			for k, v := range cols[i] {
				s += v * cols[j][k]
			}
			xtx.SetSym(i, j, s)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(xtx) {
		return nil, errors.New("calibrate: demodulate: the sine basis is singular in a window (too few samples per cycle?)")
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, fmt.Errorf("calibrate: demodulate: %v", err)
	}
	g := make([]float64, p*p)
	for i := 0; i < p; i++ {
		for j := 0; j < p; j++ {
			g[i*p+j] = inv.At(i, j)
		}
	}
	return g, nil
}

type demodulator struct {
	c      *Columns
	set    *DemodSettings
	tpl    *template
	res    *DemodResult
	drifts []float64
	// windows whose estimated frequency left the band
	outBand      int
	outLo, outHi float64
	firstOut     string
	// scratch, reused from window to window
	xty   []float64
	beta  []float64
	ybuf  []float64   // a window's series less its first value
	fit   *freqFit    // the four-parameter fit (EstimateFreq)
	gen   *template   // the basis of a window that is not on the shared grid
	times windowTimes // the times of a window off the shared grid
	gram  []float64   // p×p normal matrix of gen
	chol  []float64   // its Cholesky factor
	// grid holds the nuisance columns on the shared template's time grid
	// and their block of the normal matrix (nil until a window on the grid
	// needs them): windows on the grid take them instead of forming them.
	grid *nuisanceGrid
}

// uniform reports whether rows [lo, hi) sit on the template's time grid
// within 0.1% of a sample interval (or the rounding of the time column).
func (d *demodulator) uniform(lo, hi int) bool {
	t := d.c.Time[lo:hi]
	t0, dt := t[0], d.tpl.dt
	// 0.1% of a step, or a few roundings of the absolute time.
	tol := max(1e-3*dt, 4*(math.Nextafter(math.Abs(t0), math.Inf(1))-math.Abs(t0)))
	for k, tk := range t {
		if math.Abs(tk-t0-float64(k)*dt) > tol {
			return false
		}
	}
	return true
}

// freqFitFailed is a window's failed four-parameter fit, which
// DemodSettings.SkipFailedFreq leaves out.
type freqFitFailed struct{ err error }

func (e *freqFitFailed) Error() string { return e.err.Error() }
func (e *freqFitFailed) Unwrap() error { return e.err }

// window demodulates rows [lo, hi) and appends the result.
func (d *demodulator) window(lo, hi int) error {
	c, set := d.c, d.set
	w := Window{N: hi - lo, Freq: set.Freq}
	t0 := c.Time[lo]
	w.Time = 0.5 * (c.Time[lo] + c.Time[hi-1])
	if c.Group != nil {
		w.Group = c.Group[lo]
	}
	for k := 0; k < 3; k++ {
		if c.Pos[k] == nil {
			continue
		}
		var s float64
		for _, v := range c.Pos[k][lo:hi] {
			s += v
		}
		w.Pos[k] = s / float64(hi-lo)
		if math.IsNaN(w.Pos[k]) || math.IsInf(w.Pos[k], 0) {
			for i := lo; i < hi; i++ {
				if v := c.Pos[k][i]; math.IsNaN(v) || math.IsInf(v, 0) {
					return fmt.Errorf("calibrate: row %d: column %s is %g", i, [3]string{"x", "y", "z"}[k], v)
				}
			}
		}
	}
	w.Travel = halfTravel(c, lo, hi, w.Pos)
	tpl := d.tpl
	var fitQ [3]float64 // the joint fit's Schur complement per axis (EstimateFreq)
	if set.EstimateFreq {
		if d.fit == nil {
			d.fit = newFreqFit(set.Harmonics, d.tpl.drift, set.Nuisance, !set.ConstantAmplitude)
		}
		var grid *nuisanceGrid
		if len(set.Nuisance) > 0 && hi-lo == d.tpl.n && d.uniform(lo, hi) {
			grid = d.nuisanceGrid()
		}
		if k := d.fit.load(c.Time[lo:hi], [3][]float64{c.B[0][lo:hi], c.B[1][lo:hi], c.B[2][lo:hi]}, grid); k >= 0 {
			return c.badValue(k, lo, hi)
		}
		// The four-parameter fit (IEEE Std 1057 / 1241) from the nominal
		// frequency, one frequency shared by the three axes.
		f, _, q, err := d.fit.fit(c.Time[lo:hi], set.Freq, 30)
		if err != nil {
			err = fmt.Errorf("calibrate: demodulate: window at rows %d-%d (t = %s): %w", lo, hi-1, fmtTime(t0), err)
			if set.SkipFailedFreq {
				return &freqFitFailed{err}
			}
			return err
		}
		fitQ = q
		w.Freq = f
		if math.Abs(f-set.Freq) > set.Band {
			if d.outBand == 0 {
				d.firstOut = fmt.Sprintf("rows %d-%d, t = %s", lo, hi-1, fmtTime(w.Time))
				d.outLo, d.outHi = f, f
			}
			d.outBand++
			d.outLo, d.outHi = math.Min(d.outLo, f), math.Max(d.outHi, f)
		}
		var err2 error
		tpl, err2 = d.generalTemplate(&d.fit.times, f, grid)
		if err2 != nil {
			// The fit may converge where the window's basis is singular (a
			// noisy window's fit drawn onto a fitted mains line: a 128 Hz
			// tone at 200 nT noise reached 149.94 Hz beside the 150 Hz
			// nuisance columns); with SkipFailedFreq that window is left
			// out like any failed fit. Before, it gave up the check for
			// the whole log (found in review).
			err2 = fmt.Errorf("calibrate: demodulate: window at rows %d-%d (t = %s, frequency fitted at %.4g Hz): %w", lo, hi-1, fmtTime(t0), f, err2)
			if set.SkipFailedFreq {
				return &freqFitFailed{err2}
			}
			return err2
		}
		d.res.General++
	} else if d.uniform(lo, hi) {
		d.res.Uniform++
	} else {
		var err error
		d.times.set(c.Time[lo:hi])
		tpl, err = d.generalTemplate(&d.times, set.Freq, nil)
		if err != nil {
			return fmt.Errorf("calibrate: demodulate: window at rows %d-%d (t = %s): %w", lo, hi-1, fmtTime(t0), err)
		}
		d.res.General++
	}
	var harm [][3]complex128
	if len(set.Harmonics) > 0 {
		harm = make([][3]complex128, len(set.Harmonics))
	}
	p := tpl.p
	if cap(d.xty) < p {
		d.xty = make([]float64, p)
		d.beta = make([]float64, p)
	}
	xty, beta := d.xty[:p], d.beta[:p]
	dof := float64(hi - lo - p)
	// phasor turns a window's cos/sin coefficients of harmonic h into a
	// phasor on the clock of set.Freq (Window.B): at the window's own
	// frequency about its centre with EstimateFreq, so that windows fitted
	// at slightly different frequencies stay phase-coherent.
	phasor := func(a, b float64, h int) complex128 {
		if w.Freq == set.Freq {
			return localToAbsolute(a, b, w.Freq, t0, h)
		}
		return centreToClock(a, b, w.Freq, set.Freq, t0, w.Time, h)
	}
	var freqInfo float64 // Σ q_k/s_k², the estimated frequency's information
	for k := 0; k < 3; k++ {
		y := c.B[k][lo:hi]
		ref := y[0]
		var yy float64
		if p == 3 {
			// The common case, in one pass: Σ y'c, Σ y's, Σ y', Σ y'².
			cb, sb := tpl.basis[0][:len(y)], tpl.basis[1][:len(y)]
			var sc, ss, s1 float64
			for i, v := range y {
				v -= ref
				sc += v * cb[i]
				ss += v * sb[i]
				s1 += v
				yy += v * v
			}
			xty[0], xty[1], xty[2] = sc, ss, s1
		} else if p == 7 && tpl.slope {
			// The default (cos, sin, 1, the two slope columns and the two
			// curvature columns), in one pass.
			n := len(y)
			cb, sb := tpl.basis[0][:n], tpl.basis[1][:n]
			tcb, tsb := tpl.basis[3][:n], tpl.basis[4][:n]
			qcb, qsb := tpl.basis[5][:n], tpl.basis[6][:n]
			var sc, ss, s1, stc, sts, sqc, sqs float64
			for i, v := range y {
				v -= ref
				sc += v * cb[i]
				ss += v * sb[i]
				s1 += v
				stc += v * tcb[i]
				sts += v * tsb[i]
				sqc += v * qcb[i]
				sqs += v * qsb[i]
				yy += v * v
			}
			xty[0], xty[1], xty[2], xty[3], xty[4], xty[5], xty[6] = sc, ss, s1, stc, sts, sqc, sqs
		} else {
			// The series less its first value once, then one product per
			// column (contiguous, four partial sums).
			if cap(d.ybuf) < len(y) {
				d.ybuf = make([]float64, len(y))
			}
			yb := d.ybuf[:len(y)]
			for i, v := range y {
				v -= ref
				yb[i] = v
				yy += v * v
			}
			for j := 0; j < p; j++ {
				xty[j] = dot(yb, tpl.basis[j])
			}
		}
		if math.IsNaN(yy) || math.IsInf(yy, 0) {
			return c.badValue(k, lo, hi)
		}
		var fitted float64
		if tpl.chol != nil {
			// A window's own basis: solved with its Cholesky factor.
			copy(beta, xty)
			cholSolve(tpl.chol, beta)
			for i, b := range beta {
				fitted += b * xty[i]
			}
		} else {
			for i := 0; i < p; i++ {
				var s float64
				for j := 0; j < p; j++ {
					s += tpl.ginv[i*p+j] * xty[j]
				}
				beta[i] = s
				fitted += s * xty[i]
			}
		}
		rss := math.Max(yy-fitted, 0)
		s2 := rss / dof
		if fitQ[k] > 0 {
			// s_k² = rss/(n - p - 1) for the four-parameter model; with the
			// slope columns, whose span holds the frequency's column
			// τ(-A sin + B cos), the residual is that of n - p degrees of
			// freedom. rss = 0 (a noise-free tone) makes it infinite:
			// sigma 0.
			df := dof - 1
			if tpl.slope {
				df = dof
			}
			freqInfo += fitQ[k] * df / rss
		}
		a, b := beta[0], beta[1]
		w.B[k] = phasor(a, b, 1)
		amp := math.Hypot(a, b)
		g00, g01, g11 := tpl.ginv[0], tpl.ginv[1], tpl.ginv[p+1]
		var v float64
		if amp > 0 {
			ua, ub := a/amp, b/amp
			v = s2 * (ua*ua*g00 + 2*ua*ub*g01 + ub*ub*g11)
		} else {
			v = s2 * (g00 + g11) / 2
		}
		w.Sigma[k] = math.Sqrt(v / 2) // RMS scale
		for j, h := range set.Harmonics {
			harm[j][k] = phasor(beta[3+2*j], beta[4+2*j], h)
		}
		if tpl.slope {
			q := slopeStart(set.Harmonics, tpl.drift)
			w.Slope[k] = phasor(beta[q], beta[q+1], 1)
			w.Curve[k] = 2 * phasor(beta[q+2], beta[q+3], 1)
		}
	}
	if freqInfo > 0 {
		w.FreqSigma = 1 / math.Sqrt(freqInfo) / (2 * math.Pi)
	}
	d.res.Windows = append(d.res.Windows, w)
	if harm != nil {
		d.res.Harmonics = append(d.res.Harmonics, harm)
	}
	return nil
}

// generalTemplate builds the basis from the window's own timestamps g, in
// buffers reused from window to window (the template is valid until the
// next call).
func (d *demodulator) generalTemplate(g *windowTimes, freq float64, grid *nuisanceGrid) (*template, error) {
	n, p := len(g.tau), d.tpl.p
	tp := d.gen
	if tp == nil {
		tp = &template{p: p, basis: make([][]float64, p), ginv: make([]float64, p*p), harmonics: d.set.Harmonics, drift: d.tpl.drift, slope: d.tpl.slope, nuisance: d.tpl.nuisance}
		d.gen = tp
		d.gram = make([]float64, p*p)
		d.chol = make([]float64, p*p)
	}
	if cap(tp.basis[0]) < n {
		for j := range tp.basis {
			tp.basis[j] = make([]float64, n)
		}
	}
	for j := range tp.basis {
		tp.basis[j] = tp.basis[j][:n]
	}
	tp.n, tp.freq = n, freq
	fillBasis(tp.basis, g, 2*math.Pi*freq, d.set.Harmonics, tp.drift)
	if tp.slope {
		slopeColumns(tp.basis, d.set.Harmonics, tp.drift, g.tau)
	}
	q := p - tp.nuisanceCols()
	if grid != nil {
		for j := q; j < p; j++ {
			copy(tp.basis[j], grid.cols[j-q])
		}
	} else {
		fillNuisance(tp.basis[q:], g.tau, tp.nuisance, tp.slope)
	}
	xtx := d.gram
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			var s float64
			switch {
			case i == 2 && j == 2:
				s = float64(n)
			case grid != nil && i >= q:
				s = grid.gram[(i-q)*(p-q)+j-q]
			default:
				s = dot(tp.basis[i], tp.basis[j])
			}
			xtx[i*p+j], xtx[j*p+i] = s, s
		}
	}
	if err := cholesky(d.chol, xtx, p, p); err != nil {
		return nil, errors.New("calibrate: demodulate: the sine basis is singular in a window (too few samples per cycle?)")
	}
	// The coefficients are solved with the factor (window); of (XᵀX)⁻¹
	// only the first two columns are needed (the fundamental's sigma),
	// and it is symmetric, so columns are rows. The full inverse cost 45
	// solves a window beside the mains.
	tp.chol = d.chol
	for j := 0; j < 2; j++ {
		col := tp.ginv[j*p : (j+1)*p]
		for i := range col {
			col[i] = 0
		}
		col[j] = 1
		cholSolve(d.chol, col)
	}
	return tp, nil
}

// nuisanceGrid is the nuisance columns of the shared template (times k
// dt from a window's start) and their block of the normal matrix,
// row-major.
type nuisanceGrid struct {
	cols [][]float64
	gram []float64
}

// nuisanceGrid returns the nuisance columns on the template's grid and
// their normal block, formed on first use. A window whose times sit on the
// grid (uniform) takes them: they are the same for every such window, and
// forming them (a sine per sample and column) and their products was most
// of the cost of the frequency-estimating windows beside the mains. Windows
// off the grid form their own.
func (d *demodulator) nuisanceGrid() *nuisanceGrid {
	if d.grid != nil {
		return d.grid
	}
	p := d.tpl.p
	q := p - d.tpl.nuisanceCols()
	cols := d.tpl.basis[q:p]
	m := len(cols)
	g := &nuisanceGrid{cols: cols, gram: make([]float64, m*m)}
	for i := range m {
		for j := i; j < m; j++ {
			v := dot(cols[i], cols[j])
			g.gram[i*m+j], g.gram[j*m+i] = v, v
		}
	}
	d.grid = g
	return g
}

// fillSlope fills the columns of a linear change of the fundamental's
// amplitude, (τ-τ̄) cos ωτ into sc and (τ-τ̄) sin ωτ into ss, from the
// cos and sin columns cs, sn and the window's local times tau (τ̄ their
// mean).
func fillSlope(sc, ss, cs, sn, tau []float64) {
	var m float64
	for _, v := range tau {
		m += v
	}
	m /= float64(len(tau))
	for k, v := range tau {
		tc := v - m
		sc[k] = tc * cs[k]
		ss[k] = tc * sn[k]
	}
}

// fillCurve fills the columns of a quadratic change of the fundamental's
// amplitude about its mean over the window, ((τ-τ̄)² - m2) cos ωτ into cc
// and ((τ-τ̄)² - m2) sin ωτ into cs, m2 the mean of (τ-τ̄)², from the cos
// and sin columns cs, sn and the window's local times tau.
func fillCurve(cc, csn, cs, sn, tau []float64) {
	var m float64
	for _, v := range tau {
		m += v
	}
	m /= float64(len(tau))
	var m2 float64
	for _, v := range tau {
		m2 += (v - m) * (v - m)
	}
	m2 /= float64(len(tau))
	for k, v := range tau {
		u := (v-m)*(v-m) - m2
		cc[k] = u * cs[k]
		csn[k] = u * sn[k]
	}
}

// MainsNuisance returns the mains frequencies to fit alongside a signal at
// freq Hz in windows of window seconds of a log sampled at fs Hz
// (DemodSettings.Nuisance): for each mains frequency in mains (50, 60),
// its fundamental, third and fifth harmonics and the odd harmonics next
// above and below freq (a mains field is rich in odd harmonics, and
// those nearest the signal leak into it most), in increasing order,
// leaving out those at or above 0.45 fs, those within NuisanceSeparation
// of freq or of the harmonics of it to be fitted (DemodSettings.Harmonics),
// and repeats within 1/window of one already taken (nuisance tones need
// only span the mains, not be told apart). Nil when freq is itself a
// mains frequency (NearMains: a grid runs off nominal).
func MainsNuisance(freq, window, fs float64, mains []float64, harmonics []int) []float64 {
	var cand []float64
	for _, m := range mains {
		if !(m > 0) || NearMains(freq, m) {
			return nil
		}
		for _, h := range []float64{1, 3, 5} {
			cand = append(cand, h*m)
		}
		// The odd harmonics on either side of freq.
		k := math.Floor(freq / m)
		below := k
		if math.Mod(below, 2) == 0 {
			below--
		}
		for _, h := range []float64{below, below + 2} {
			if h >= 7 {
				cand = append(cand, h*m)
			}
		}
	}
	sort.Float64s(cand)
	sep := NuisanceSeparation(window)
	var out []float64
	for _, f := range cand {
		f = math.Round(f*1e9) / 1e9 // 3 x 16.7 is 50.1, not 50.099999999999994
		ok := f < 0.45*fs && math.Abs(f-freq) >= sep
		for _, h := range harmonics {
			ok = ok && math.Abs(f-float64(h)*freq) >= sep
		}
		if ok && len(out) > 0 && f-out[len(out)-1] < 1/window {
			ok = false
		}
		if ok {
			out = append(out, f)
		}
	}
	return out
}

// MainsTolerance is the relative distance from a nominal mains frequency
// within which a signal is taken as the mains itself: a grid's frequency
// may lawfully stray 1% from nominal (50 Hz ± 1% for 99.5% of a year in
// EN 50160, the European standard for supply voltage characteristics;
// the same ±1% is Great Britain's statutory limit; both from memory), and
// a cable surveyed at 50.05 Hz carries the mains, not a tracer beside it.
const MainsTolerance = 0.01

// NearMains reports whether freq lies within MainsTolerance of the mains
// frequency m.
func NearMains(freq, m float64) bool { return math.Abs(freq-m) <= MainsTolerance*m }

// NuisanceSeparation is the least distance, Hz, between a nuisance
// frequency and the signal (or another nuisance) at which MainsNuisance
// fits it in windows of window seconds: 2/window. Over a window of T
// seconds two tones 1/T apart are orthogonal only when steady; each
// nuisance frequency also takes its slope columns, whose spectrum spreads
// about 1/T either side, and one at 1.1/T from a 128 Hz tracer in 0.05 s
// windows tripled the tracer's sigma (found in review). Closer than this
// a mains line cannot be fitted apart from the signal: a longer window is
// the remedy.
func NuisanceSeparation(window float64) float64 { return 2 / window }

// fillNuisance fills the columns of the nuisance frequencies freqs (Hz) at
// the window's local times tau: cos and sin of each, then, with slope,
// (τ-τ̄) cos and (τ-τ̄) sin of each.
func fillNuisance(cols [][]float64, tau, freqs []float64, slope bool) {
	if len(freqs) == 0 {
		return
	}
	var m float64
	for _, v := range tau {
		m += v
	}
	m /= float64(len(tau))
	j := 0
	for _, fn := range freqs {
		w := 2 * math.Pi * fn
		cs, sn := cols[j], cols[j+1]
		for k, v := range tau {
			sn[k], cs[k] = math.Sincos(w * v)
		}
		j += 2
		if slope {
			fillSlope(cols[j], cols[j+1], cs, sn, tau)
			j += 2
		}
	}
}

// phaseDrift records the apparent frequency error from the phase advance
// between consecutive windows of one run, on the strongest axis.
func (d *demodulator) phaseDrift(ws []Window) {
	if len(ws) < 2 {
		return
	}
	axis, best := 0, -1.0
	for k := 0; k < 3; k++ {
		if a := cmplx.Abs(ws[0].B[k]); a > best {
			axis, best = k, a
		}
	}
	for i := 1; i < len(ws); i++ {
		a, b := ws[i-1], ws[i]
		if cmplx.Abs(a.B[axis]) < 5*a.Sigma[axis] || cmplx.Abs(b.B[axis]) < 5*b.Sigma[axis] {
			continue
		}
		dt := b.Time - a.Time
		if !(dt > 0) {
			continue
		}
		dphi := cmplx.Phase(b.B[axis] / a.B[axis])
		d.drifts = append(d.drifts, dphi/(2*math.Pi*dt))
	}
}

// estimateFreq finds the dominant frequency above ds.MinFreq and its
// one-sigma, Hz. A spectral peak (spectralPeak) is only the start: on a
// walked log the phase of the field turns along a traverse where
// conductors of different phase overlap (and flips where one axis's field
// changes sign over a conductor), so the peak of one traverse's spectrum,
// and a constant-amplitude sine fitted to the whole traverse, read that
// turn as frequency (50.0733 Hz for the demo's 50 Hz, 4 of 4 seeds, found
// in review). The estimate is instead the combination of the per-window
// four-parameter fits of the whole log (CombineWindowFreqs) from the peak, as the
// locate command's frequency check does. note is a sentence for the
// warning on how it was made; sigma is zero when it could not be had.
func estimateFreq(c *Columns, runs []run, dt float64, ds *DemodSettings) (f, sigma float64, note string, err error) {
	f0, err := spectralPeak(c, runs, dt, ds.MinFreq)
	if err != nil {
		return 0, 0, "", err
	}
	set := *ds
	set.EstimateFreq, set.SkipFailedFreq = true, true
	// The linear term keeps a walked DC gradient out of the windows, and
	// the amplitude's change across the window is fitted apart from the
	// frequency (the four-parameter fit's border columns).
	set.Drift, set.ConstantAmplitude = true, false
	set.Step = 0
	if set.Window == 0 {
		set.Window = 10 / f0
	}
	fallback := "from the spectrum's peak only (%s), which walking over conductors of different phase moves by up to a tenth of a hertz, and with no uncertainty: give the frequency if it is known"
	// A window whose phase turns as the sensor walks has more than one
	// stationary point of its frequency fit, and which it reaches depends
	// on the start (219 of the demo's 1550 windows moved by up to 0.07 Hz
	// between starts at 50 and 50.0733 Hz, the estimate by 0.0007 Hz), so
	// the windows are fitted again from the estimate until it stays within
	// its sigma of where they started.
	var est WindowFreq
	start := f0
	for pass := 0; pass < maxFreqPasses; pass++ {
		set.Freq = start
		res, err := DemodulateColumns(c, &set)
		if err != nil {
			if pass > 0 {
				break
			}
			return f0, 0, fmt.Sprintf(fallback, "the windows' frequency fits failed: "+strings.TrimPrefix(err.Error(), "calibrate: demodulate: ")), nil
		}
		e, ok := CombineWindowFreqs(res.Windows, CutAtCommonMedian)
		if !ok {
			if pass > 0 {
				break
			}
			return f0, 0, fmt.Sprintf(fallback, fmt.Sprintf("fewer than %d windows have the field %d times its noise", WindowFreqMinWindows, WindowFreqSNR)), nil
		}
		est = e
		if math.Abs(e.Freq-start) <= e.Sigma {
			break
		}
		start = e.Freq
	}
	switch {
	case est.BothWays:
		note = fmt.Sprintf("from %d windows walked both ways", est.Windows)
	case est.Still:
		note = fmt.Sprintf("from %d windows", est.Windows)
	default:
		note = fmt.Sprintf("from %d windows all walked one way, where the walk over conductors of different phase may move it by thousandths of a hertz beyond its uncertainty: give the frequency if it is known", est.Windows)
	}
	return est.Freq, est.Sigma, note, nil
}

// plusMinus formats x ± sigma with sigma to two significant digits and x
// to the same decimal place.
func plusMinus(x, sigma float64) string {
	d := max(0, 1-int(math.Floor(math.Log10(sigma))))
	return fmt.Sprintf("%.*f ± %.*f", d, x, d, sigma)
}

const (
	// maxFreqPasses bounds estimateFreq's fits of the windows.
	maxFreqPasses = 4
)

// spectralPeak finds the dominant frequency above minFreq: the peak of the
// summed power spectrum of the three axes over the longest run (up to
// 65536 samples), Hann-windowed, interpolated by a parabola through the
// log power. It starts estimateFreq's window fits, which converge from
// within a fraction of 1/Window.
func spectralPeak(c *Columns, runs []run, dt, minFreq float64) (float64, error) {
	var r run
	for _, x := range runs {
		if x.hi-x.lo > r.hi-r.lo {
			r = x
		}
	}
	n := 1
	for n*2 <= min(r.hi-r.lo, 65536) {
		n *= 2
	}
	if n < 64 {
		return 0, errors.New("calibrate: demodulate: cannot estimate the frequency: no run of 64 samples or more")
	}
	fft := fourier.NewFFT(n)
	power := make([]float64, n/2+1)
	seq := make([]float64, n)
	var coef []complex128
	for k := 0; k < 3; k++ {
		y := c.B[k][r.lo : r.lo+n]
		var m float64
		for _, v := range y {
			m += v
		}
		m /= float64(n)
		for i, v := range y {
			// Hann window against leakage from the Earth's field and drift.
			seq[i] = (v - m) * (0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n)))
		}
		coef = fft.Coefficients(coef, seq)
		for i, z := range coef {
			power[i] += real(z)*real(z) + imag(z)*imag(z)
		}
	}
	df := 1 / (float64(n) * dt)
	lo := max(1, int(math.Ceil(minFreq/df)))
	peak := -1
	for i := lo; i < len(power)-1; i++ {
		if peak < 0 || power[i] > power[peak] {
			peak = i
		}
	}
	if peak < 0 || power[peak] == 0 {
		return 0, fmt.Errorf("calibrate: demodulate: cannot estimate the frequency: no signal above %g Hz", minFreq)
	}
	// Parabolic interpolation of the log power.
	delta := 0.0
	if peak > 0 && peak < len(power)-1 && power[peak-1] > 0 && power[peak+1] > 0 {
		a, b, g := math.Log(power[peak-1]), math.Log(power[peak]), math.Log(power[peak+1])
		if den := a - 2*b + g; den != 0 {
			delta = 0.5 * (a - g) / den
		}
	}
	return (float64(peak) + delta) * df, nil
}

// halfTravel returns the half-travel of rows [lo, hi) (see Window.Travel):
// the least-squares slope of each position column against time, times
// sqrt(3 var(t)). Times are taken relative to their mean, so absolute
// time stamps lose no digits.
func halfTravel(c *Columns, lo, hi int, mean [3]float64) [3]float64 {
	var out [3]float64
	n := hi - lo
	if n < 2 {
		return out
	}
	t := c.Time[lo:hi]
	var tm float64
	for _, v := range t {
		tm += v - t[0]
	}
	tm = tm/float64(n) + t[0]
	var stt float64
	for _, v := range t {
		stt += (v - tm) * (v - tm)
	}
	if !(stt > 0) {
		return out
	}
	half := math.Sqrt(3 * stt / float64(n))
	for k := 0; k < 3; k++ {
		if c.Pos[k] == nil {
			continue
		}
		var stx float64
		for i, v := range c.Pos[k][lo:hi] {
			stx += (t[i] - tm) * (v - mean[k])
		}
		out[k] = stx / stt * half
	}
	return out
}

// repeatedTimes words, for the Nyquist refusal, times stored more coarsely
// than the readings come: when most readings have the time of the
// reading before them in their group (a 500 Hz log whose times were cast
// to whole seconds, as a review found), the sample rate read from the
// steps between stamps is the stamps', and "0.5 Hz" alone read as a log
// sampled at 1 Hz. "" otherwise.
func (c *Columns) repeatedTimes() string {
	n, rep := len(c.Time), 0
	for i := 1; i < n; i++ {
		if c.Time[i] == c.Time[i-1] && (c.Group == nil || c.Group[i] == c.Group[i-1]) {
			rep++
		}
	}
	if n < 10 || 2*rep <= n {
		return ""
	}
	return fmt.Sprintf(" as read from its time stamps, but %d of its %d readings have the time of the reading before them, about %.0f readings a stamp: its times are stored more coarsely than the readings come (whole seconds?), and the readings' own rate is higher; store the times to milliseconds or finer", rep, n, float64(n)/float64(n-rep))
}
