package report

import (
	"math"
	"strconv"
)

// signalCell is results.csv's signal column: "dc" for a DC run, else
// "ac-rms-" and the demodulation frequency in hertz ("ac-rms-50Hz",
// "ac-rms-2000Hz"; to 1e-4 Hz, as the crew report gives an estimated
// frequency), so that a DC and an AC file are told apart, and an RMS
// current is not read as a peak, in a table that travels without
// results.json.
func (d *Document) signalCell() string {
	if d.Signal.Mode != SignalAC {
		return SignalDC
	}
	return "ac-rms-" + hertz(d.Signal.FrequencyHz) + "Hz"
}

// hertz formats a frequency to 1e-4 Hz without trailing zeros.
func hertz(f float64) string {
	return strconv.FormatFloat(math.Round(f*1e4)/1e4, 'f', -1, 64)
}

// geoSignal is route.geojson's top-level "signal" member: what a Point's
// current_a and phase_deg are, in words a GIS user can read beside the
// numbers (results.json's signal, with the sign and phase conventions of
// Source.Current and Source.Phase).
type geoSignal struct {
	// Mode is SignalDC or SignalAC; FrequencyHz and WindowS as in Signal.
	Mode        string  `json:"mode"`
	FrequencyHz float64 `json:"frequency_hz,omitempty"`
	WindowS     float64 `json:"window_s,omitempty"`
	// Current says what current_a is: DC, signed along the Point's
	// azimuth_deg, or the RMS of an AC current.
	Current string `json:"current"`
	// PhaseReference says what phase_deg is measured against (AC only).
	PhaseReference string `json:"phase_reference,omitempty"`
}

// GeoSignalDC and GeoSignalRMS are geoSignal.Current for DC and AC runs,
// and GeoPhaseReference its PhaseReference for AC.
const (
	GeoSignalDC = "DC amperes, signed along the Point's azimuth_deg: negative flows the other way " +
		"(a pair conductor's net_current_a along the pair's azimuth_deg)"
	GeoSignalRMS = "AC amperes RMS (a peak is sqrt(2) times as large), the current flowing along the Point's " +
		"azimuth_deg, with its phase in phase_deg (a pair conductor's net_current_a along the pair's azimuth_deg)"
	GeoPhaseReference = "degrees, of the current flowing along azimuth_deg against a cosine of frequency_hz that " +
		"peaks at time 0 of the log's time scale (the Unix epoch, 1970-01-01T00:00:00Z, for absolute times); " +
		"differences between the conductors of one group are meaningful, between groups only while the " +
		"frequency is exact (an error of df Hz turns the phase by 360 df t degrees at time t)"
)

// geoSignalOf is d's geoSignal.
func (d *Document) geoSignalOf() geoSignal {
	if d.Signal.Mode != SignalAC {
		return geoSignal{Mode: SignalDC, Current: GeoSignalDC}
	}
	return geoSignal{Mode: SignalAC, FrequencyHz: d.Signal.FrequencyHz, WindowS: d.Signal.WindowS,
		Current: GeoSignalRMS, PhaseReference: GeoPhaseReference}
}
