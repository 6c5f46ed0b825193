package main

import (
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// TestLocateWarnsOfAnotherSensorsCalibration: a calibration whose
// reference |B| is far from the log's corrected field (made for another
// sensor, or elsewhere) gets a warning in locate's JSON; one made in the
// log's own field does not.
func TestLocateWarnsOfAnotherSensorsCalibration(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	write := func(name string, ref float64) string {
		t.Helper()
		cal := &calibrate.Calibration{
			Version: 1, Method: calibrate.MethodEllipsoid, Created: time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC),
			Inputs:    []calibrate.Input{{Role: "spin", File: "spin.csv", SHA256: strings.Repeat("0", 64), Samples: 100}},
			Matrix:    [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
			Reference: ref,
		}
		p := filepath.Join(dir, name)
		if err := cal.Save(p); err != nil {
			t.Fatal(err)
		}
		return p
	}
	far := locateGrouped(t, "--calibration", write("far.json", 30000), log)
	if !containsAll(far.Warnings, "was the calibration made for another sensor") {
		t.Errorf("a calibration made in a 30000 nT field: warnings %q", far.Warnings)
	}
	// The log's own median |B| (its sensor may carry offsets: the
	// identity calibration leaves them, and the check compares medians).
	s, err := ingest.ReadSamples(log)
	if err != nil {
		t.Fatal(err)
	}
	mags := make([]float64, s.Len())
	for i := range mags {
		mags[i] = math.Sqrt(s.Bx[i]*s.Bx[i] + s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i])
	}
	sort.Float64s(mags)
	ref := mags[len(mags)/2]
	near := locateGrouped(t, "--calibration", write("near.json", ref), log)
	if containsAll(near.Warnings, "another sensor") {
		t.Errorf("a calibration made in the log's own %.0f nT field: warnings %q", ref, near.Warnings)
	}
}
