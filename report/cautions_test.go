package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// TestCautionsInEveryCrewFile: the safety cautions reach a crew whatever
// file it is given alone, not only report.html: results.json and
// route.geojson carry them in a top-level "cautions" array (for the
// GeoJSON a foreign member, which RFC 7946 section 6.1 allows at the top
// level of a FeatureCollection), and findings.csv in its first rows, kind
// "safety", with the header's column count (RFC 4180: each record the same
// number of fields), so that the file still reads as a table; the run's
// warnings follow them in findings.csv, kind "run-warning".
func TestCautionsInEveryCrewFile(t *testing.T) {
	for _, geo := range []bool{false, true} {
		d := fenwickLane(geo)
		dir := t.TempDir()
		if err := WriteFiles(dir, d); err != nil {
			t.Fatal(err)
		}
		read := func(name string) []byte {
			b, err := os.ReadFile(filepath.Join(dir, name))
			if err != nil {
				t.Fatal(err)
			}
			return b
		}
		for _, name := range []string{FileJSON, FileGeoJSON} {
			var top struct {
				Cautions []string `json:"cautions"`
			}
			if err := json.Unmarshal(read(name), &top); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if !reflect.DeepEqual(top.Cautions, Cautions) {
				t.Errorf("geo=%v: %s cautions %q, want %q", geo, name, top.Cautions, Cautions)
			}
		}
		var gj map[string]any
		if err := json.Unmarshal(read(FileGeoJSON), &gj); err != nil || gj["type"] != "FeatureCollection" {
			t.Errorf("route.geojson is no longer a FeatureCollection: %v", err)
		}

		rows, err := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(read(FileFindings), []byte(utf8BOM)))).ReadAll()
		if err != nil {
			t.Fatalf("findings.csv: %v", err)
		}
		if len(d.Warnings) == 0 {
			t.Fatal("fixture: the document has no run warnings")
		}
		if len(rows) != 1+len(Cautions)+len(d.Warnings)+len(d.Findings) {
			t.Fatalf("findings.csv has %d rows, want the header, %d cautions, %d run warnings and %d findings", len(rows), len(Cautions), len(d.Warnings), len(d.Findings))
		}
		col := map[string]int{}
		for i, h := range rows[0] {
			col[h] = i
		}
		for i, c := range Cautions {
			row := rows[1+i]
			if row[col["severity"]] != SeverityCaution || row[col["kind"]] != SafetyKind || row[col["message"]] != c {
				t.Errorf("findings.csv row %d = %q, want the caution %q", 2+i, row, c)
			}
			for k, v := range row {
				if k != col["severity"] && k != col["kind"] && k != col["message"] && v != "" {
					t.Errorf("findings.csv caution row %d: column %s holds %q, want it empty", 2+i, rows[0][k], v)
				}
			}
		}
		// Then the run's warnings, kind "run-warning": they were in
		// results.json and report.html alone (found in review).
		for i, w := range d.Warnings {
			row := rows[1+len(Cautions)+i]
			if row[col["severity"]] != SeverityWarning || row[col["kind"]] != RunWarningKind || row[col["message"]] != w {
				t.Errorf("findings.csv row %d = %q, want the run warning %q", 2+len(Cautions)+i, row, w)
			}
		}
		// The findings follow, as before.
		if first := rows[1+len(Cautions)+len(d.Warnings)]; first[col["kind"]] != d.Findings[0].Kind || first[col["message"]] != d.Findings[0].Message {
			t.Errorf("the first finding row is %q, want %s %q", first, d.Findings[0].Kind, d.Findings[0].Message)
		}

		page := string(read(FileHTML))
		for _, c := range Cautions {
			if !strings.Contains(page, c) {
				t.Errorf("report.html lacks the caution %q", c)
			}
		}
	}
}

// TestCautionsReadBack: results.json's cautions are the writer's, not
// the fit's: a document read back and written again carries the cautions
// of the program writing it, and reading one with cautions keeps the rest
// of the document as it was.
func TestCautionsReadBack(t *testing.T) {
	d := fenwickLane(false)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	back, err := ReadJSON(bytes.NewReader(buf.Bytes()), FileJSON)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back, profilesRounded(d)) {
		t.Error("the document changed in a round trip through results.json")
	}
	var again bytes.Buffer
	if err := WriteJSON(&again, back); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(again.Bytes(), buf.Bytes()) {
		t.Error("results.json written again differs")
	}
}
