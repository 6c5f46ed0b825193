package report

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// readmeResultSection is README's "The result document" section, which
// documents results.json, findings.csv, results.csv and route.geojson.
func readmeResultSection(t *testing.T) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	i := strings.Index(s, "\n## The result document\n")
	j := strings.Index(s, "\n## The continuous pipeline\n")
	if i < 0 || j < i {
		t.Fatal("README.md has no section \"The result document\" before \"The continuous pipeline\"")
	}
	return s[i:j]
}

// readmeNames are the field names README's section names: each word of
// letters, digits and underscores inside a `code span` ("sources[].offset_m"
// names sources and offset_m).
func readmeNames(section string) map[string]bool {
	names := map[string]bool{}
	word := regexp.MustCompile(`[A-Za-z0-9_]+`)
	for _, span := range regexp.MustCompile("`[^`\n]+`").FindAllString(section, -1) {
		for _, w := range word.FindAllString(span, -1) {
			names[w] = true
		}
	}
	return names
}

// jsonKeys adds to keys every member name of v, a decoded JSON value, with
// the path it was first met at, skipping the members of objects whose path
// skip says are not fields (the settings, keyed by flag names).
func jsonKeys(v any, path string, skip func(path, key string) bool, keys map[string]string) {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			if skip(path, k) {
				continue
			}
			if _, ok := keys[k]; !ok {
				keys[k] = path + "." + k
			}
			jsonKeys(e, path+"."+k, skip, keys)
		}
	case []any:
		for _, e := range x {
			jsonKeys(e, path+"[]", skip, keys)
		}
	}
}

// isValueKey says whether name is a finding value's key or its sigma's
// (findingValueKeys), which README documents in its own table.
func isValueKey(name string) bool {
	for _, k := range findingValueKeys {
		for _, def := range k.Keys {
			if def.Key == name || sigmaKey(def.Key, def.Unit) == name {
				return true
			}
		}
	}
	return false
}

// geoJSONMembers are the members RFC 7946 itself defines, which README
// need not name.
var geoJSONMembers = map[string]bool{"type": true, "features": true, "geometry": true, "coordinates": true, "properties": true}

// TestREADMENamesEmittedFields: every column of results.csv and
// findings.csv, and every member name that results.json and
// route.geojson give for the demo (AC, 50 Hz), the geo-referenced fixture
// and a DC survey with a fault is named in README's "The result document"
// section, so that a field added without documenting it fails here. The
// settings' members (flag names) and the finding values' keys (README's
// table of them, TestREADMEValueKeys) are checked elsewhere.
func TestREADMENamesEmittedFields(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and fits two surveys")
	}
	names := readmeNames(readmeResultSection(t))
	docs := map[string]*Document{
		"demo":    simulatedACDoc(t, scenarioFile(t, filepath.Join("demo", "fenwick-lane.toml")), 50),
		"fixture": fenwickLane(true),
		"dc":      scenarioDoc(t, "two-conductors-fault.toml", 1),
	}
	missing := map[string]string{}
	for name, d := range docs {
		for _, w := range []struct {
			file  string
			write func(*bytes.Buffer) error
		}{
			{"results.json", func(b *bytes.Buffer) error { return WriteJSON(b, d) }},
			{"route.geojson", func(b *bytes.Buffer) error { return WriteGeoJSON(b, d) }},
		} {
			var b bytes.Buffer
			if err := w.write(&b); err != nil {
				t.Fatal(err)
			}
			var v any
			if err := json.Unmarshal(b.Bytes(), &v); err != nil {
				t.Fatal(err)
			}
			keys := map[string]string{}
			jsonKeys(v, "", func(path, key string) bool {
				return path == ".settings" || strings.HasSuffix(path, ".properties") && isValueKey(key) ||
					w.file == "route.geojson" && geoJSONMembers[key]
			}, keys)
			for k, at := range keys {
				if !names[k] {
					missing[k] = name + " " + w.file + " " + at
				}
			}
		}
	}
	// The two CSV files' columns, all of them whatever the survey.
	for _, h := range [][]string{csvHeader, findingsHeader} {
		for _, c := range h {
			if !names[c] {
				missing[c] = "a CSV column"
			}
		}
	}
	var ks []string
	for k := range missing {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	for _, k := range ks {
		t.Errorf("README.md's \"The result document\" does not name %q (%s)", k, missing[k])
	}
}

// scenarioFile loads the scenario file name under testdata.
func scenarioFile(t *testing.T, name string) *simulate.Scenario {
	t.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// TestEmptyListsRule: README's rule for lists, on a document with no
// findings, warnings, notes or further conductors: results.json writes
// inputs, groups, findings and a group's sources as [] and leaves out
// warnings, notes and conductors (none is null), and route.geojson keeps
// its top-level cautions and leaves out warnings.
func TestEmptyListsRule(t *testing.T) {
	d := minimalDoc()
	var b bytes.Buffer
	if err := WriteJSON(&b, d); err != nil {
		t.Fatal(err)
	}
	var doc map[string]json.RawMessage
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"inputs", "groups", "findings"} {
		if v, ok := doc[k]; !ok || !bytes.HasPrefix(v, []byte("[")) {
			t.Errorf("results.json %s = %s, want a list", k, v)
		}
	}
	if string(doc["findings"]) != "[]" || string(doc["inputs"]) != "[]" {
		t.Errorf("results.json findings %s, inputs %s: want []", doc["findings"], doc["inputs"])
	}
	if !strings.Contains(string(doc["groups"]), `"sources": []`) {
		t.Errorf("results.json groups %s: want each with sources []", doc["groups"])
	}
	for _, k := range []string{"warnings", "notes", "conductors", "settings", "route"} {
		if v, ok := doc[k]; ok {
			t.Errorf("results.json gives %s = %s for none, want it left out", k, v)
		}
	}
	if bytes.Contains(b.Bytes(), []byte("null")) {
		t.Errorf("results.json holds a null:\n%s", b.String())
	}
	b.Reset()
	if err := WriteGeoJSON(&b, d); err != nil {
		t.Fatal(err)
	}
	var geo map[string]json.RawMessage
	if err := json.Unmarshal(b.Bytes(), &geo); err != nil {
		t.Fatal(err)
	}
	if _, ok := geo["cautions"]; !ok {
		t.Error("route.geojson has no top-level cautions")
	}
	if v, ok := geo["warnings"]; ok {
		t.Errorf("route.geojson gives warnings = %s for none, want it left out", v)
	}
}
