package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestLocateCrossingAzimuthSigma: the shallow-cover finding about a
// crossing service no conductor's track follows (crossing-service.toml)
// gives the crossing's azimuth with the sigma of that line's fitted
// azimuth, the source's azimuth_sigma_deg in the same document (the fit's
// covariance propagated to the bearing), as every other number of the
// finding has one (README: a one-sigma uncertainty on every number).
// Before, the azimuth had none. The log is cut to T01-T06, in which
// only T05 and T06 show the service: too few to follow it as a conductor
// (on the whole log it is followed as conductor 2 and crosses the feeder).
func TestLocateCrossingAzimuthSigma(t *testing.T) {
	doc := locateJSONGroups(t, "crossing-service.toml", []string{"T01", "T02", "T03", "T04", "T05", "T06"}, "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6")
	found := 0
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" {
			continue
		}
		// The line where the cover is least: a run of lines in line at
		// successive stations (T05 and T06 here) is one finding, which
		// gives that line's numbers (fix-fx22c).
		var line *docSource
		for _, g := range doc.Groups {
			for i, s := range g.Sources {
				if slices.Contains(f.Groups, g.Key) && s.Kind == "line" && s.Point == f.Position {
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
				t.Errorf("%v: crossing's azimuth %.3f ± %g degrees, its line's fit %.3f ± %g", f.Groups, v.Value, v.Sigma, line.Azimuth, line.AzimuthSig)
			}
		}
	}
	if found == 0 {
		t.Fatalf("no lone line's cover finding with an azimuth: %+v", doc.Findings)
	}
}

// locateJSONGroups simulates the scenario, keeps only the readings of the
// given groups (the log's last column), runs locate --json with args on
// them and decodes the document.
func locateJSONGroups(t *testing.T, scenarioFile string, keep []string, args ...string) *resultDoc {
	t.Helper()
	out := mustCLI(t, append(append([]string{"locate", "--json"}, args...), cutLog(t, scenarioFile, keep))...)
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json output is not JSON: %v\n%.500s", err, out)
	}
	return &doc
}

// cutLog simulates the scenario and writes the readings of the given
// groups (the log's last column) to a log of their own, whose path it
// returns.
func cutLog(t *testing.T, scenarioFile string, keep []string) string {
	t.Helper()
	_, path := scenario(t, scenarioFile)
	dir := t.TempDir()
	log := filepath.Join(dir, "log.csv")
	mustCLI(t, "simulate", path, "-o", log)
	raw, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]bool{}
	for _, k := range keep {
		want[k] = true
	}
	var b strings.Builder
	header := true
	for _, l := range strings.SplitAfter(string(raw), "\n") {
		line := strings.TrimRight(l, "\r\n")
		if line == "" || strings.HasPrefix(line, "#") {
			b.WriteString(l)
			continue
		}
		if header {
			header = false
			b.WriteString(l)
			continue
		}
		if want[line[strings.LastIndex(line, ",")+1:]] {
			b.WriteString(l)
		}
	}
	cut := filepath.Join(dir, "cut.csv")
	if err := os.WriteFile(cut, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return cut
}
