package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"slices"
	"strings"
	"testing"
)

// TestFindingIDsJoinFiles checks that results.json's findings[], findings.csv
// and route.geojson give each finding the same id, in the same order, so
// that the three files join on it (found in review: only route.geojson
// had one). Two findings of one kind at the same groups get "#2", a lone
// line's has no conductor part, and ids read back are not taken as given:
// they are made again when written.
func TestFindingIDsJoinFiles(t *testing.T) {
	d := fenwickLane(true)
	d.Findings = append(d.Findings,
		Finding{Kind: "current-anomaly", Severity: SeverityInfo, Groups: []string{"T02"}, Message: "a"},
		Finding{Kind: "current-anomaly", Severity: SeverityInfo, Groups: []string{"T02"}, Message: "b"},
		Finding{Kind: "lone-line", Severity: SeverityInfo, Groups: []string{"T06"}, Lone: true, Message: "d"},
	)
	want := d.FindingIDs()
	if len(want) < 4 || !slices.Contains(want, "finding/current-anomaly/c1/T02#2") || !slices.Contains(want, "finding/lone-line/T06") {
		t.Fatalf("ids %q", want)
	}
	further := &Document{Findings: []Finding{{Kind: "poor-fit", Groups: []string{"T05", "T06"}, Conductor: 2}}}
	if got := further.FindingIDs(); !slices.Equal(got, []string{"finding/poor-fit/c2/T05+T06"}) {
		t.Errorf("a further conductor's finding: ids %q", got)
	}

	var js bytes.Buffer
	if err := WriteJSON(&js, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Findings []struct {
			ID string `json:"id"`
		} `json:"findings"`
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	var fromJSON []string
	for _, f := range doc.Findings {
		fromJSON = append(fromJSON, f.ID)
	}
	if !slices.Equal(fromJSON, want) {
		t.Errorf("results.json findings[].id %q, want %q", fromJSON, want)
	}

	var fc bytes.Buffer
	if err := WriteFindingsCSV(&fc, d); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(strings.NewReader(strings.TrimPrefix(fc.String(), utf8BOM))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := slices.Index(rows[0], "id")
	// id was added at the end, and the values' keys after it
	// (value_key, value_keys): the columns before stay where they were.
	if col != len(rows[0])-3 || !slices.Equal(rows[0][col+1:], []string{"value_key", "value_keys"}) {
		t.Fatalf("findings.csv header %q: want id, value_key and value_keys as the last columns (added at the end)", rows[0])
	}
	var fromCSV []string
	for _, r := range rows[1:] {
		switch r[1] {
		case SafetyKind, RunWarningKind:
			if r[col] != "" {
				t.Errorf("a %s row has id %q", r[1], r[col])
			}
		default:
			fromCSV = append(fromCSV, r[col])
		}
	}
	if !slices.Equal(fromCSV, want) {
		t.Errorf("findings.csv id %q, want %q", fromCSV, want)
	}

	features := geoFeatures(t, d)
	var fromGeo []string
	for _, f := range features {
		if f.Properties["feature"] == "finding" {
			fromGeo = append(fromGeo, f.ID)
		}
	}
	if !slices.Equal(fromGeo, want) {
		t.Errorf("route.geojson finding ids %q, want %q", fromGeo, want)
	}

	// Read back and written again: the same ids, not doubled or kept
	// stale when the findings change.
	back, err := ReadJSON(bytes.NewReader(js.Bytes()), "results.json")
	if err != nil {
		t.Fatal(err)
	}
	back.Findings = back.Findings[1:]
	var again bytes.Buffer
	if err := WriteJSON(&again, back); err != nil {
		t.Fatal(err)
	}
	doc.Findings = nil
	if err := json.Unmarshal(again.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Findings) != len(want)-1 || doc.Findings[len(doc.Findings)-1].ID != want[len(want)-1] {
		t.Errorf("ids written again %+v", doc.Findings)
	}
}
