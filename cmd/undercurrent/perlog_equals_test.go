package main

import "testing"

// TestPerLogPathWithEquals: a log whose path holds "=" can be named in
// --sensor-height LOG=H (split at the last "=", a height never holds one)
// and in --calibration LOG=FILE (split at the "=" whose left part names a
// given log, the longest first, so a calibration file whose name holds
// "=" still works). Before, both were cut at the first "=":
// --sensor-height "d=1/line.csv=0.3" was refused as "want a height in
// metres > 0" and --calibration "d=1/line.csv=cal.json" as "d is not one
// of the logs given". Invented names.
func TestPerLogPathWithEquals(t *testing.T) {
	for _, c := range []struct {
		arg, log string
		h        float64
	}{{"d=1/line.csv=0.3", "d=1/line.csv", 0.3}, {"a=b.csv=0.3", "a=b.csv", 0.3}, {"h=0.5.csv=0.8", "h=0.5.csv", 0.8}, {"line.csv=0.3", "d=1/line.csv", 0.3}} {
		o := &locateOptions{sensorHeights: []string{c.arg}}
		if err := o.splitSensorHeights(); err != nil {
			t.Errorf("--sensor-height %s: %v", c.arg, err)
			continue
		}
		hs, _, err := logSensorHeights(o, []string{c.log, "other.csv"})
		if err == nil {
			t.Errorf("--sensor-height %s: other.csv left without a height, not refused", c.arg)
		}
		o.sensorHeight = 0.5 // a bare height for the log not named
		hs, _, err = logSensorHeights(o, []string{c.log, "other.csv"})
		if err != nil || hs[c.log] != c.h || hs["other.csv"] != 0.5 {
			t.Errorf("--sensor-height %s: heights %v (%v), want %s at %g", c.arg, hs, err, c.log, c.h)
		}
	}
	for _, c := range []struct {
		arg  string
		logs []string
		want map[int]string
	}{
		{"d=1/line.csv=cal.json", []string{"d=1/line.csv", "other.csv"}, map[int]string{0: "cal.json"}},
		{"line.csv=cal.json", []string{"d=1/line.csv", "other.csv"}, map[int]string{0: "cal.json"}},
		{"a=b.csv=c=1.json", []string{"other.csv", "a=b.csv"}, map[int]string{1: "c=1.json"}},
		{"line.csv=c=1.json", []string{"line.csv"}, map[int]string{0: "c=1.json"}},
	} {
		bare, named, err := splitPerLog("calibration", []string{c.arg}, calibrationIsBare, false)
		if err != nil || bare != "" {
			t.Fatalf("--calibration %s: bare %q, %v", c.arg, bare, err)
		}
		got, err := resolvePerLog("calibration", named, c.logs)
		if err != nil || len(got) != len(c.want) {
			t.Errorf("--calibration %s over %v: %v (%v), want %v", c.arg, c.logs, got, err, c.want)
			continue
		}
		for k, v := range c.want {
			if got[k] != v {
				t.Errorf("--calibration %s over %v: %v, want %v", c.arg, c.logs, got, c.want)
			}
		}
	}
	// A name that is none of the logs is still refused, naming it.
	_, named, _ := splitPerLog("calibration", []string{"x.csv=cal.json"}, calibrationIsBare, false)
	if _, err := resolvePerLog("calibration", named, []string{"d=1/line.csv"}); err == nil {
		t.Error("--calibration x.csv=cal.json over d=1/line.csv: not refused")
	}
}
