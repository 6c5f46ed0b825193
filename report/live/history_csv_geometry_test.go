package live

import (
	"encoding/csv"
	"net/http/httptest"
	"strings"
	"testing"
)

// TestHistoryCSVGeometryShare: the CSV history gives the commissioned
// geometry's share of a window's sigmas (common to all windows, to be left
// out when windows are compared) as the JSON does, after the columns the
// history always had; a window solved on a geometry taken as exact leaves
// them empty. Before, only the JSON carried it, and a reader of the CSV
// could not take it out of current_sigma_a. The estimates are invented
// fixtures; what is checked is the project's own format (README, the live
// pipeline's uncertainties), no outside value.
func TestHistoryCSVGeometryShare(t *testing.T) {
	gp := 0.4
	ph, phs := 12.0, 0.5
	ests := []Estimate{
		{Asset: "fenwick-lane", Window: 1, Conductors: []ConductorEstimate{{Name: "L1", Current: 40, CurrentSigma: 0.05, CurrentSigmaGeometry: 0.04, Phase: &ph, PhaseSigma: &phs, PhaseSigmaGeometry: &gp}}},
		{Asset: "fenwick-lane", Window: 2, Conductors: []ConductorEstimate{{Name: "L1", Current: 40, CurrentSigma: 0.03}}},
	}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, ests)
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil || len(rows) != 3 {
		t.Fatalf("%v\n%s", err, rec.Body.String())
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	gi, gpi, ok1 := col["current_sigma_geometry_a"], col["phase_sigma_geometry_deg"], true
	if _, ok := col["current_sigma_geometry_a"]; !ok {
		ok1 = false
	}
	if _, ok := col["phase_sigma_geometry_deg"]; !ok || !ok1 || col["revision"] != 14 || gi < col["revision"] {
		t.Fatalf("header %v: want the geometry's share after the revision, the 15th column", rows[0])
	}
	if rows[1][gi] != "0.04" || rows[1][gpi] != "0.4" {
		t.Errorf("window 1: geometry share %q A, %q deg; want 0.04 and 0.4", rows[1][gi], rows[1][gpi])
	}
	if rows[2][gi] != "" || rows[2][gpi] != "" {
		t.Errorf("window 2 (exact geometry): geometry share %q, %q; want empty", rows[2][gi], rows[2][gpi])
	}
}
