package calibrate

import (
	"os"
	"path/filepath"
	"testing"

	"undercurrent/ingest"
)

// The entry points given a nil log, calibration, reader, sensitivity or
// columns, or columns of different lengths where an error can be
// returned, return an error and write nothing; those without an error to
// return give the documented zero value. Before, every one of them
// panicked (a nil-pointer dereference, an index out of range in
// FindClipped, or a deliberate panic in FitSine, FitSine4 and FindSpikes).
func TestNilInputsNoPanic(t *testing.T) {
	dir := t.TempDir()
	var nilCal *Calibration
	var nilResp *CoilResponse
	cal := &Calibration{Version: Version, Method: MethodZero, Matrix: [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}}
	log := &ingest.Samples{Time: []float64{0, 1}, Bx: []float64{1, 2}, By: []float64{1, 2}, Bz: []float64{1, 2}, Meta: map[string]string{"sensor": "S1"}}
	errs := map[string]func() error{
		"(*Calibration)(nil).Validate": func() error { return nilCal.Validate() },
		"(*Calibration)(nil).Save":     func() error { return nilCal.Save(filepath.Join(dir, "cal.json")) },
		"(*Calibration)(nil).Apply":    func() error { return nilCal.Apply(log) },
		"Apply(nil)":                   func() error { return cal.Apply(nil) },
		"(*CoilResponse)(nil).Sensitivity": func() error {
			_, err := nilResp.Sensitivity(50)
			return err
		},
		"ReadCoilResponse(nil)":      func() error { _, err := ReadCoilResponse(nil, "coil.csv"); return err },
		"SensitivityWindows(nil)":    func() error { return SensitivityWindows([]Window{{Freq: 50}}, nil) },
		"DemodulateColumns(nil)":     func() error { _, err := DemodulateColumns(nil, nil); return err },
		"FitSine(lengths differ)":    func() error { _, err := FitSine([]float64{0, 1, 2, 3}, []float64{1}, 50, nil); return err },
		"FitSine4(lengths differ)":   func() error { _, err := FitSine4([]float64{0, 1, 2, 3}, []float64{1}, 50, nil); return err },
		"FindSpikes(lengths differ)": func() error { _, _, _, err := FindSpikes([][]float64{{1, 2, 3}, {1}}, nil); return err },
	}
	for name, f := range errs {
		func() {
			defer func() {
				if v := recover(); v != nil {
					t.Errorf("%s: panic %v", name, v)
				}
			}()
			if err := f(); err == nil {
				t.Errorf("%s: no error", name)
			}
		}()
	}
	if left, _ := os.ReadDir(dir); len(left) > 0 {
		t.Errorf("files left behind: %v", left)
	}
	func() {
		defer func() {
			if v := recover(); v != nil {
				t.Errorf("panic %v", v)
			}
		}()
		if got := SensorName(nil); got != "" {
			t.Errorf("SensorName(nil) = %q, want \"\"", got)
		}
		if w := cal.Check(nil); w != nil {
			t.Errorf("Check(nil) = %q, want no warnings", w)
		}
		if w := nilCal.Check(log); w != nil {
			t.Errorf("(*Calibration)(nil).Check = %q, want no warnings", w)
		}
		if tj, w := StampJitter(nil, 50); tj != nil || w != "" {
			t.Errorf("StampJitter(nil) = %v, %q, want nil, \"\"", tj, w)
		}
		if s, w := RetimeSamples(nil, 50); s != nil || w != "" {
			t.Errorf("RetimeSamples(nil) = %v, %q, want nil, \"\"", s, w)
		}
		if c := FindClipped(nil); c != nil {
			t.Errorf("FindClipped(nil) = %v, want none", c)
		}
		if c := FromEllipsoid(nil); c != nil {
			t.Errorf("FromEllipsoid(nil) = %v, want nil", c)
		}
		if c := FromOffset(MethodZero, nil); c != nil {
			t.Errorf("FromOffset(nil) = %v, want nil", c)
		}
	}()
}
