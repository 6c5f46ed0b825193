package calibrate

import (
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestNilSamplesErrors: the adapters return an error for a nil log, not a
// nil-pointer panic.
func TestNilSamplesErrors(t *testing.T) {
	s := &ingest.Samples{Time: []float64{0, 1}, Bx: []float64{1, 2}, By: []float64{1, 2}, Bz: []float64{1, 2}, Frame: ingest.FrameENU}
	for name, f := range map[string]func() error{
		"Despike":         func() error { _, err := Despike(nil, nil); return err },
		"Tilt":            func() error { return Tilt(nil, nil) },
		"BaseCorrect":     func() error { _, err := BaseCorrect(s, nil, nil); return err },
		"BaseCorrect/nil": func() error { _, err := BaseCorrect(nil, s, nil); return err },
		"Demodulate":      func() error { _, err := Demodulate(nil, nil); return err },
		"Readings":        func() error { _, err := Readings(nil); return err },
	} {
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("%s: panic %v", name, r)
				}
			}()
			if err := f(); err == nil || !strings.Contains(err.Error(), "nil") {
				t.Errorf("%s: error %v, want one saying the log is nil", name, err)
			}
		}()
	}
}
