package main

import (
	"fmt"

	"undercurrent/ingest"
)

// coilLikeWarning returns a warning when an AC log located without --coil
// or --coil-response looks like an induction coil's output: a median |B|
// below the Earth's field band with no steady part (the columns' medians
// less than their variation about them), as a coil, which senses only a
// changing field, gives. A magnetometer's log with the Earth's field
// removed looks the same, and the warning says so: the coil walk of the
// tests reads tens of mV, and a magnetometer's AC field near a cable tens
// to thousands of nT, so no threshold on |B| parts them. Located as a field, its voltages gave currents thousands
// of times too small, 90° off, reported sound, with the coil's motion
// through the field fitted as a further conductor (review rv14d, finding
// 3); the generic out-of-band warning named --unit, which cannot mend it.
// The opposite slip, a magnetometer's log given --coil, is
// coilSteadyWarning's.
func coilLikeWarning(path string, s *ingest.Samples) string {
	m, ok := medianMagnitude(s.Bx, s.By, s.Bz)
	if !ok || !(m < earthMinNT) {
		return ""
	}
	steady, variation, ok := steadyPart(s)
	if !ok || !(steady < variation) {
		return ""
	}
	return fmt.Sprintf("%s: the field columns read a median |B| of %.3g nT with no steady part (their medians, %.3g, against a variation of %.3g about them): a magnetometer's log with the Earth's field removed, or an induction coil's voltages, which read as a field give currents far too small (or too large) and phases 90° off. If these are coil voltages, give the coil with --coil turns=N,area=A[,mu=M] or --coil-response FILE; --unit cannot mend it",
		path, m, steady, variation)
}
