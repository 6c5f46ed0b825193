package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestSignalInGeoJSONAndCSV: route.geojson and results.csv, which travel
// without results.json, say whether their currents are DC or AC RMS, at
// what frequency, and (GeoJSON) how a DC current is signed and what an AC
// phase is measured against. An RMS current read as a peak is low by a
// factor sqrt(2) (the RMS of a sine is its peak over sqrt(2), any
// electrical handbook), and a DC sign means nothing without its direction.
// Before, the GeoJSON had no signal member and the CSV no signal column:
// a DC and a 50 Hz results.csv differed only in an empty phase_deg.
func TestSignalInGeoJSONAndCSV(t *testing.T) {
	for _, tc := range []struct {
		signal  Signal
		cell    string
		current string // in the GeoJSON signal's "current"
	}{
		{Signal{Mode: SignalDC}, "dc", "signed along the Point's azimuth_deg"},
		{Signal{Mode: SignalAC, FrequencyHz: 50, WindowS: 0.2}, "ac-rms-50Hz", "RMS"},
		{Signal{Mode: SignalAC, FrequencyHz: 1999.98765, WindowS: 0.05}, "ac-rms-1999.9877Hz", "RMS"},
	} {
		d := fenwickLane(true)
		d.Signal = tc.signal
		rows := readCSV(t, d)
		if len(rows) == 0 {
			t.Fatal("fixture: no CSV rows")
		}
		for _, r := range rows {
			if r["signal"] != tc.cell {
				t.Errorf("%s: CSV row %s/%s signal %q, want %q", tc.signal.Mode, r["group"], r["source"], r["signal"], tc.cell)
			}
		}
		var buf bytes.Buffer
		if err := WriteGeoJSON(&buf, d); err != nil {
			t.Fatal(err)
		}
		var fc struct {
			Signal *struct {
				Mode           string   `json:"mode"`
				FrequencyHz    *float64 `json:"frequency_hz"`
				WindowS        *float64 `json:"window_s"`
				Current        string   `json:"current"`
				PhaseReference string   `json:"phase_reference"`
			} `json:"signal"`
		}
		if err := json.Unmarshal(buf.Bytes(), &fc); err != nil {
			t.Fatal(err)
		}
		s := fc.Signal
		if s == nil {
			t.Fatalf("%s: route.geojson has no top-level signal", tc.signal.Mode)
		}
		if s.Mode != tc.signal.Mode || !strings.Contains(s.Current, tc.current) {
			t.Errorf("%s: GeoJSON signal mode %q, current %q; want mode %q and %q in the current's wording", tc.signal.Mode, s.Mode, s.Current, tc.signal.Mode, tc.current)
		}
		switch tc.signal.Mode {
		case SignalAC:
			if s.FrequencyHz == nil || math.Abs(*s.FrequencyHz-tc.signal.FrequencyHz) > 1e-9 || s.WindowS == nil || *s.WindowS != tc.signal.WindowS {
				t.Errorf("AC: GeoJSON signal frequency %v Hz, window %v s; want %g and %g", s.FrequencyHz, s.WindowS, tc.signal.FrequencyHz, tc.signal.WindowS)
			}
			if !strings.Contains(s.PhaseReference, "time 0") || !strings.Contains(s.PhaseReference, "azimuth_deg") {
				t.Errorf("AC: GeoJSON phase_reference %q: want the time the cosine peaks and the direction the current flows", s.PhaseReference)
			}
		default:
			if s.FrequencyHz != nil || s.PhaseReference != "" {
				t.Errorf("DC: GeoJSON signal gives frequency %v and phase reference %q", s.FrequencyHz, s.PhaseReference)
			}
		}
	}
}
