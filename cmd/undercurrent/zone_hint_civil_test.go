package main

import (
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestZoneHintCivilOffsets: a base record that misses the survey by a
// shift no civil time zone has (30 minutes: the half-hour zones are
// -09:30, -03:30, -02:30, +03:30, +04:30, +05:30, +06:30, +09:30, +10:30,
// from memory of the time-zone database) is a clock set wrong and draws no
// zone hint; a whole hour and +05:30 (India) do.
func TestZoneHintCivilOffsets(t *testing.T) {
	const t0 = 1.77676068e9 // 2026-04-21T08:38:00Z
	rover := &ingest.Samples{Time: []float64{t0 + 120, t0 + 1000}}
	for _, c := range []struct {
		shift float64 // the base's times minus the true ones, s
		want  string  // "" for no hint
	}{
		{-1800, ""},
		{1800, ""},
		{3600, "UTC+01:00"},
		{-3600, "UTC-01:00"},
		{19800, "UTC+05:30"},
		{20700, "UTC+05:45"},
		{-900, ""},
	} {
		// The base's times were written without an offset: they can be
		// local.
		base := &ingest.Samples{Time: []float64{t0 + c.shift, t0 + 1200 + c.shift}, NaiveTime: true}
		h := zoneShiftHint(base, rover)
		if c.want == "" && h != "" || c.want != "" && !strings.Contains(h, c.want+" written without") {
			t.Errorf("base %+g s off: hint %q, want %q", c.shift, h, c.want)
		}
	}
}
