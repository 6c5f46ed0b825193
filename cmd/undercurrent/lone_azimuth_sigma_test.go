package main

import (
	"testing"
)

// TestLocateCrossingAzimuthSigma: the shallow-cover finding about a
// crossing service no conductor's track follows (crossing-service.toml)
// gives the crossing's azimuth with the sigma of that line's fitted
// azimuth, the source's azimuth_sigma_deg in the same document (the fit's
// covariance propagated to the bearing), as every other number of the
// finding has one (README: a one-sigma uncertainty on every number).
// Before, the azimuth had none.
func TestLocateCrossingAzimuthSigma(t *testing.T) {
	_, doc := locateJSON(t, "crossing-service.toml", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6")
	found := 0
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" || len(f.Groups) != 1 {
			continue
		}
		var line *docSource
		for _, g := range doc.Groups {
			for i, s := range g.Sources {
				if g.Key == f.Groups[0] && s.Kind == "line" && s.Point == f.Position {
					line = &g.Sources[i]
				}
			}
		}
		if line == nil {
			continue // not a lone line's finding
		}
		for _, v := range f.Values {
			if v.Name != "azimuth" {
				continue
			}
			found++
			if !(line.AzimuthSig > 0) || v.Sigma != line.AzimuthSig {
				t.Errorf("%s: crossing's azimuth %.3f ± %g degrees, its line's fit %.3f ± %g", f.Groups[0], v.Value, v.Sigma, line.Azimuth, line.AzimuthSig)
			}
		}
	}
	if found == 0 {
		t.Fatalf("no lone line's cover finding with an azimuth: %+v", doc.Findings)
	}
}
