package live

import (
	"encoding/json"

	"undercurrent/report"
)

// Estimate is what the service publishes for one asset and window on
// uc.est.<asset>, keeps as the latest value in uc_latest and lists in the
// history API. It is JSON; field names are stable.
type Estimate struct {
	Asset string `json:"asset"`
	// Window is the window index; Start = Window * (End - Start).
	Window int64   `json:"window"`
	Start  float64 `json:"start"` // s, same clock as the sensor times
	End    float64 `json:"end"`
	Mode   string  `json:"mode"` // "dc" or "ac"
	// Frequency is the AC frequency the window was demodulated at, Hz:
	// the site's, or the one found in the window when that differs from
	// it by more than 5 sigma (FrequencySigma, Hz, then set); phases are
	// referred to cos(2 pi Frequency t).
	Frequency      float64             `json:"frequency,omitempty"`
	FrequencySigma float64             `json:"frequency_sigma_hz,omitempty"`
	Conductors     []ConductorEstimate `json:"conductors"`
	// CurrentCovariance is the covariance of the conductors' currents,
	// A^2, a matrix in the order of Conductors: its diagonal is each
	// current_sigma_a squared, and an element off it says how two
	// currents' errors go together (conductors close together trade
	// current in the fit). With it a ratio or sum of currents gets its
	// sigma: for r = I_a / I_b, sigma_r^2 = r^2 (C_aa/I_a^2 + C_bb/I_b^2
	// - 2 C_ab/(I_a I_b)). It holds the window's noise (widened by
	// SigmaScale on a degraded window) and a commissioned geometry's
	// share; for AC it is the RMS currents' (the fundamental's). Absent
	// on a failed window.
	CurrentCovariance [][]float64 `json:"current_covariance_a2,omitempty"`
	// Background is the uniform field fitted with the currents (DC), nT ENU.
	Background *[3]float64 `json:"background_nt,omitempty"`
	// RMS is the root-mean-square residual, nT; Chi2 and DOF describe the
	// fit. Quality is "good"; "partial" when the fit is good but a
	// sensor's samples were missing from the window or left out (Missing
	// says which and why); "degraded" when the reduced chi-square is above
	// alarms.max_chi2; "implausible" when the readings do not look like
	// magnetometer readings in nanotesla (Implausible says why: the Earth's
	// field outside earth_field, or a chi-square far below its degrees of
	// freedom with noise given); "failed" when the solve failed. A
	// degraded window whose fitted background lies outside earth_field
	// by less than misfitFieldFactor stays "degraded": the background
	// absorbs the model's misfit, which Implausible then says.
	RMS     float64 `json:"rms_nt"`
	Chi2    float64 `json:"chi2"`
	DOF     int     `json:"dof"`
	Quality string  `json:"quality"`
	// SigmaScale is set on a degraded window: sqrt(Chi2/DOF), the factor
	// by which its noise sigmas (current_sigma_a, phase_sigma_deg, before
	// the held geometry's share is added) were widened, as the readings
	// miss the model by that many times the stated noise (the Birge ratio,
	// with which the route analysis of batch fits widens a poor fit's
	// sigmas too). Absent on other windows, whose sigmas come from the
	// stated noise alone.
	SigmaScale float64 `json:"sigma_scale,omitempty"`
	// Chi2Geometry is set on a window solved with a commissioned geometry
	// whose reduced chi-square is above alarms.max_chi2: the chi-square
	// the geometry's stated error is expected to add to the window's
	// (geometryChi2). The window is degraded only when Chi2 is above
	// max_chi2 times DOF plus this: a geometry commissioned at a small
	// current misses a window at a large one by more than its noise,
	// which its sigmas already carry (current_sigma_geometry_a).
	// Recommissioning at the larger current makes it smaller.
	Chi2Geometry float64 `json:"chi2_geometry,omitempty"`
	// Implausible lists why the window's readings look implausible (the
	// messages of its implausible alarms), or on a degraded window why
	// its fitted background is not the Earth's field; absent when none.
	Implausible []string `json:"implausible,omitempty"`
	// Sensors used, samples used, and the sensors left out or short of
	// samples with why: "silent", "stuck", "saturated", "131 of 500 samples" (used, but
	// more than one sample short of what its rate puts in a window), "2 of
	// 500 samples, too few to use", or a sine-fit error (AC).
	Sensors int               `json:"sensors"`
	Samples int               `json:"samples"`
	Missing map[string]string `json:"missing,omitempty"`
	// Spikes counts, per sensor, the readings left out as spikes: of a DC
	// window's mean, more than 10 robust standard deviations off the
	// running median of up to 100 neighbours (see despikeDC); of an AC
	// window's demodulation, more than 10 off the waveform fitted to the
	// sensor's window (see acSpikes). Absent when none were. Samples
	// counts the readings used, without them.
	Spikes map[string]int `json:"spikes,omitempty"`
	// Change is set on a window whose current changed within it (a
	// switch, a surge, a dip; for AC a step of the RMS current, a fault or
	// a load switched): the window's Conductors give its mean current,
	// what flowed on average; Change the time the window is best split at
	// and the currents of its two parts (see windowChange, and
	// windowChangeAC for AC). Absent on a steady window.
	Change *WindowChange `json:"change,omitempty"`
	// DataLost is set on the first window after data that the broker
	// removed (data_retention, data_max_bytes) before the worker read it:
	// what was lost (the message of the asset's data-lost alarm).
	DataLost string `json:"data_lost,omitempty"`
	// AfterGap is set on the first window with currents after a gap: the
	// seconds between the end of the previous window with currents and
	// this window's start (a data outage, or windows that failed). A step
	// alarm of this window compares with that earlier window and says so.
	AfterGap float64 `json:"after_gap_s,omitempty"`
	// Caution is set on an AC window with currents: NetCurrentCaution,
	// that the currents read are the net currents the sensors see,
	// induced currents in bonded metal around or beside the conductors
	// included.
	Caution string `json:"caution,omitempty"`
	// Ongoing lists the conditions alarmed once at their onset (see
	// latchedKinds) that still hold in this window, and for how long.
	Ongoing []OngoingAlarm `json:"ongoing,omitempty"`
	// Closed says why the window closed: complete, grace or idle.
	Closed string `json:"closed"`
	Worker string `json:"worker"`
	// Revision is the asset's read revision when the window was solved:
	// 0 until the asset is first restarted, n after the n-th restart (see
	// HeaderRevision). A window read again supersedes its lower revisions.
	Revision int `json:"revision"` // written when 0 too (see MarshalJSON)
}

// NetCurrentCaution is the caution an AC estimate and an AC asset carry
// (Estimate.Caution, AssetInfo.Caution): the currents read are the net
// currents the sensors see, induced currents in bonded metal around or
// beside the conductors included (see report.NetCurrentCaution).
const NetCurrentCaution = report.NetCurrentCaution

// ConductorEstimate is one conductor's current in a window.
type ConductorEstimate struct {
	Name string `json:"name"`
	// Current is A, signed along the conductor's direction (for AC the
	// fundamental's RMS; CurrentTotal counts the harmonics).
	Current float64 `json:"current_a"`
	// CurrentSigma is the one-sigma error of Current: the window's noise
	// and, for a commissioned geometry, CurrentSigmaGeometry, added in
	// quadrature.
	CurrentSigma float64 `json:"current_sigma_a"`
	// CurrentSigmaGeometry is the part of CurrentSigma from the error of
	// the commissioned geometry held in the solve (model "commission";
	// absent for "fixed", whose geometry is taken as exact). It is common
	// to every window solved with that geometry: it does not average away
	// over windows, and a difference between windows (a step, a trend)
	// should leave it out, sqrt(CurrentSigma^2 - CurrentSigmaGeometry^2)
	// being each window's own.
	CurrentSigmaGeometry float64 `json:"current_sigma_geometry_a,omitempty"`
	// Phase is degrees, the current's at the window's middle against
	// cos(2 pi f t), f the site's frequency and t the sensor clock (Unix
	// time): see phaseRef (AC).
	Phase      *float64 `json:"phase_deg,omitempty"`
	PhaseSigma *float64 `json:"phase_sigma_deg,omitempty"`
	// PhaseSigmaGeometry is the part of PhaseSigma from the commissioned
	// geometry's error, as CurrentSigmaGeometry (AC, model "commission").
	PhaseSigmaGeometry *float64 `json:"phase_sigma_geometry_deg,omitempty"`
	// CurrentTotal is an AC conductor's total RMS current, A: the
	// fundamental's (Current) and its harmonics' (Harmonics) in
	// quadrature, each harmonic's square less its noise's share (2
	// sigma^2, the mean of a noise phasor's squared magnitude), at least
	// the fundamental's; CurrentTotalSigma its one-sigma error. Absent
	// for DC and when no harmonic was fitted (a sample rate under 2.5
	// times the second harmonic).
	CurrentTotal      *float64 `json:"current_total_a,omitempty"`
	CurrentTotalSigma *float64 `json:"current_total_sigma_a,omitempty"`
	// Harmonics are an AC conductor's harmonic currents (orders 2 up to
	// the fifth that the sample rate allows), each solved from the
	// sensors' harmonic field phasors with the geometry held as the
	// fundamental's.
	Harmonics []HarmonicCurrent `json:"harmonics,omitempty"`
}

// HarmonicCurrent is one harmonic of an AC conductor's current.
type HarmonicCurrent struct {
	Order        int     `json:"order"`
	Current      float64 `json:"current_a"`
	CurrentSigma float64 `json:"current_sigma_a"`
	// Phase is degrees, the harmonic's at the window's middle against
	// cos(2 pi Order f t), f and t as the fundamental's
	// (ConductorEstimate.Phase), so that the harmonics of order h of
	// several conductors add as phasors: the third harmonics of three
	// phases 120 degrees apart come out in phase, and their phasor sum
	// is the third-harmonic current that returns through the neutral.
	// PhaseSigma is its one-sigma error (180 when the harmonic is lost
	// in the noise: its phase is not determined, and the JSON leaves
	// phase_deg and phase_sigma_deg out, as the survey files leave out an
	// undetermined phase; see MarshalJSON).
	Phase      float64 `json:"phase_deg"`
	PhaseSigma float64 `json:"phase_sigma_deg"`
}

// harmonicJSON is HarmonicCurrent's JSON, its phase absent when not
// determined.
type harmonicJSON struct {
	Order        int      `json:"order"`
	Current      float64  `json:"current_a"`
	CurrentSigma float64  `json:"current_sigma_a"`
	Phase        *float64 `json:"phase_deg,omitempty"`
	PhaseSigma   *float64 `json:"phase_sigma_deg,omitempty"`
}

// PhaseDetermined reports whether the harmonic's phase is known: its
// sigma is under 180 degrees (a sigma of 180 says any phase fits).
func (h HarmonicCurrent) PhaseDetermined() bool { return h.PhaseSigma < 180 }

// MarshalJSON writes h with phase_deg and phase_sigma_deg left out when
// its phase is not determined (PhaseDetermined), rather than a sigma of
// 180 that a dashboard would read as a measured one (found in review).
func (h HarmonicCurrent) MarshalJSON() ([]byte, error) {
	j := harmonicJSON{Order: h.Order, Current: h.Current, CurrentSigma: h.CurrentSigma}
	if h.PhaseDetermined() {
		j.Phase, j.PhaseSigma = &h.Phase, &h.PhaseSigma
	}
	return json.Marshal(j)
}

// UnmarshalJSON reads what MarshalJSON writes: a harmonic without a phase
// has PhaseSigma 180, its phase not determined.
func (h *HarmonicCurrent) UnmarshalJSON(b []byte) error {
	var j harmonicJSON
	if err := json.Unmarshal(b, &j); err != nil {
		return err
	}
	*h = HarmonicCurrent{Order: j.Order, Current: j.Current, CurrentSigma: j.CurrentSigma, PhaseSigma: 180}
	if j.Phase != nil && j.PhaseSigma != nil {
		h.Phase, h.PhaseSigma = *j.Phase, *j.PhaseSigma
	}
	return nil
}

// WindowChange is a change of current within a window (DC, or the RMS
// current of an AC window).
type WindowChange struct {
	// At is the time, s on the sensor clock, at which the window's
	// readings are best split in two: the change's time, to within the
	// readings' noise (a brief dip or surge inside the window is split at
	// one of its ends).
	At float64 `json:"at"`
	// Sigmas is the largest difference between a conductor's currents in
	// the two parts (for AC their RMS currents, the phasors' magnitudes),
	// in standard deviations of that difference (above 6).
	Sigmas     float64       `json:"sigmas"`
	Conductors []ChangeLevel `json:"conductors"`
}

// ChangeLevel is one conductor's current before and after a window's
// change, A, each solved from the mean readings of its part (for AC the
// RMS current and phase demodulated from its part's readings), with
// one-sigma errors from the readings' noise (widened by the part's fit as
// a degraded window's; without the commissioned geometry's share).
type ChangeLevel struct {
	Name        string  `json:"name"`
	Before      float64 `json:"current_before_a"`
	BeforeSigma float64 `json:"current_before_sigma_a"`
	After       float64 `json:"current_after_a"`
	AfterSigma  float64 `json:"current_after_sigma_a"`
	// PhaseBefore and PhaseAfter are the parts' phases, degrees, as
	// ConductorEstimate.Phase (AC only).
	PhaseBefore *float64 `json:"phase_before_deg,omitempty"`
	PhaseAfter  *float64 `json:"phase_after_deg,omitempty"`
}

// Alarm is published on uc.alarm.<asset>.<kind>.
type Alarm struct {
	Asset  string  `json:"asset"`
	Kind   string  `json:"kind"` // see the Alarm* constants
	Window int64   `json:"window"`
	Start  float64 `json:"start"`
	End    float64 `json:"end"`
	// Subject is the conductor or sensor the alarm is about ("" for the fit).
	Subject   string  `json:"subject,omitempty"`
	Value     float64 `json:"value"`
	Threshold float64 `json:"threshold"`
	Message   string  `json:"message"`
	// Revision is the read revision of the estimate that raised the alarm.
	// Once a higher revision has processed the window, the alarm listing
	// shows that revision's alarms of the window instead (see Alarms).
	Revision int `json:"revision"` // written when 0 too (see MarshalJSON)
	// Cleared marks the record that a condition alarmed at its onset
	// (see latchedKinds) no longer holds: its window is the first without
	// it (for a degraded fit the third in a row under its deadband, for an
	// inconsistent sensor the first that does not blame it; see
	// clearAfter), Windows counts the windows it held in, Since is the
	// start of the window it was raised in, Value is the window's own
	// value (under Threshold; 0 for a sensor condition and a failed
	// window) and Peak the largest value while it held (for an
	// implausible check the one furthest from Threshold). Cleared records
	// are not counted in uc_alarms_total.
	Cleared bool    `json:"cleared,omitempty"`
	Windows int     `json:"windows,omitempty"`
	Since   float64 `json:"since,omitempty"`
	Peak    float64 `json:"peak,omitempty"`
	// Worsened marks an over-current, imbalance, degraded fit or
	// inconsistent sensor raised again while it holds because it grew by
	// WorsenFactor over the value last alarmed (Previous: a current, or a
	// reduced chi-square, grown by WorsenFactor in its square root); Since
	// is the start of the window of its onset.
	Worsened bool    `json:"worsened,omitempty"`
	Previous float64 `json:"previous,omitempty"`
	// FormerThreshold, on a cleared record, is the threshold the
	// condition was raised against when the site file in force now gives
	// another (Threshold): a condition held across a restart or a
	// takeover by a worker with other settings may end because the limit
	// changed, not the readings (the message says which).
	FormerThreshold float64 `json:"former_threshold,omitempty"`
	// AfterGap, s, marks a condition's onset or clearing in the first
	// window it was judged in after a gap in the data of at least the
	// service's silent_after, while it was held: one that holds again
	// after the gap is raised anew (the record of its earlier onset is in
	// the message), one that does not is cleared, having perhaps ended in
	// the gap.
	AfterGap float64 `json:"after_gap_s,omitempty"`
	// Sigma, ShareOf and ShareOfCurrent are a share alarm's (AlarmShare,
	// not its cleared record): Value's standard deviation, what the share
	// is taken of (the conductor share_of names, or the asset's
	// conductors joined by "+" for the share of their sum) and that
	// denominator, A.
	Sigma          float64 `json:"sigma,omitempty"`
	ShareOf        string  `json:"share_of,omitempty"`
	ShareOfCurrent float64 `json:"share_of_a,omitempty"`
	// Degraded marks a step alarm judged in a degraded window, or
	// against one (the message says which): the change may belong to a
	// neighbouring conductor, and its size is uncertain.
	Degraded bool `json:"degraded,omitempty"`
	// fitFailed marks the degraded alarm of a window that could not be
	// solved (not encoded: its message and threshold 0 tell it).
	fitFailed bool
}

// OngoingAlarm is a condition raised in an earlier window that still
// holds (Estimate.Ongoing).
type OngoingAlarm struct {
	Kind    string `json:"kind"`
	Subject string `json:"subject,omitempty"`
	// Since is the start of the window the alarm was raised in, s.
	Since float64 `json:"since"`
	// Windows counts the windows it has held in, this one included.
	Windows int `json:"windows"`
	// Value is this window's value (over-current, imbalance, a stuck or
	// saturated sensor's reading, a degraded fit's or an inconsistent
	// sensor's reduced chi-square, an implausible check's value; 0 for a
	// silent sensor and a failed window).
	Value float64 `json:"value"`
}

// Alarm kinds.
const (
	AlarmOverCurrent = "over-current" // |I| above alarms.max_current
	AlarmImbalance   = "imbalance"    // the balance conductors' currents do not cancel: leakage, or an unbalanced load
	AlarmStep        = "step"         // current changed by more than alarms.step (between windows or within one)
	AlarmSilent      = "silent"       // sensor sent nothing in the window
	AlarmStuck       = "stuck"        // sensor repeated one value on an axis
	AlarmSaturated   = "saturated"    // sensor read at its range (range_nt) on an axis
	AlarmDegraded    = "degraded"     // reduced chi-square above alarms.max_chi2, or the solve failed
	// AlarmImplausible: the readings do not look like nanotesla (subject
	// "earth-field" or "chi2", see Estimate.Implausible).
	AlarmImplausible = "implausible"
	// AlarmDataLost: the broker removed data (data_retention,
	// data_max_bytes) before the asset's worker read it.
	AlarmDataLost = "data-lost"
	// AlarmCommissioning: an asset's commissioning stopped for good (the
	// asset's endpoint shows it as stopped), saying why.
	AlarmCommissioning = "commissioning"
	// AlarmClockJump: a sensor's batches started far ahead of both its
	// own pace and the broker's clock (a gateway clock stepped forward),
	// and were refused when its data went on from before them, or
	// processed as dated when it went on in line with them (subject: the
	// sensor; value: how far ahead of the broker's clock, s).
	AlarmClockJump = "clock-jump"
	// AlarmOutOfOrder: a sensor's batches went back before its last
	// sample, two or more over grace plus a window of the broker's clock,
	// and were refused (a gateway clock set back; subject: the sensor;
	// value: how long the refusals have lasted on the broker's clock, s;
	// threshold: grace plus a window). Raised once per run of refusals,
	// and cleared (Cleared, Peak the run's length) by the sensor's next
	// batch accepted.
	AlarmOutOfOrder = "out-of-order"
	// AlarmShare: a conductor carries more than its max_share of the
	// current (subject: the conductor; value: the share; see shareAlarms).
	AlarmShare = "share"
	// AlarmLowShare: a conductor carries less than its min_share of the
	// current (subject: the conductor; value: the share; see shareAlarms).
	AlarmLowShare = "low-share"
)

// AlarmKinds lists every alarm kind the service raises; the alarms API
// refuses any other kind.
var AlarmKinds = []string{AlarmOverCurrent, AlarmImbalance, AlarmStep, AlarmSilent, AlarmStuck, AlarmSaturated, AlarmDegraded, AlarmImplausible, AlarmDataLost, AlarmInconsistent, AlarmCommissioning, AlarmClockJump, AlarmOutOfOrder, AlarmShare, AlarmLowShare}
