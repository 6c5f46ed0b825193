package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestValueKeyTable: the table of value keys is well formed: every key
// snake case ending in its unit's suffix (so that sigmaKey puts "_sigma"
// before the unit), "<walk>" in a key exactly where it is in the name,
// and within a kind no two values sharing a name and unit or a key.
func TestValueKeyTable(t *testing.T) {
	snake := regexp.MustCompile(`^[a-z][a-z0-9]*(_([a-z0-9]+|<walk>))*$`)
	for _, k := range findingValueKeys {
		names, keys := map[string]bool{}, map[string]bool{}
		for _, def := range k.Keys {
			if !snake.MatchString(def.Key) {
				t.Errorf("%s: key %q is not snake case", k.Kind, def.Key)
			}
			if u := unitSnake(def.Unit); u != "" && !strings.HasSuffix(def.Key, "_"+u) {
				t.Errorf("%s: key %q does not end in its unit %q", k.Kind, def.Key, u)
			}
			if strings.Contains(def.Name, walkMark) != strings.Contains(def.Key, walkMark) || strings.Count(def.Name, walkMark) > 1 || (strings.Contains(def.Name, walkMark) && !strings.HasSuffix(def.Name, " "+walkMark)) {
				t.Errorf("%s: %q and %q do not both end in one %s", k.Kind, def.Name, def.Key, walkMark)
			}
			if names[def.Name+"|"+def.Unit] || keys[def.Key] {
				t.Errorf("%s: %q (%q, %s) given twice", k.Kind, def.Name, def.Unit, def.Key)
			}
			names[def.Name+"|"+def.Unit], keys[def.Key] = true, true
		}
	}
}

// TestValueKeyLookup: a value is keyed by its kind, name and unit, a
// walk's name going into a per-walk key in snake case; the longest
// phrase wins, and a value the table does not name still gets a key
// made from its name and unit.
func TestValueKeyLookup(t *testing.T) {
	for _, tc := range []struct {
		kind string
		v    Value
		want string
		ok   bool
	}{
		{"current-step", Value{Name: "location (chainage)", Unit: "m"}, "location_chainage_m", true},
		{"current-step", Value{Name: "step", Unit: "A"}, "step_a", true},
		{"current-step", Value{Name: "step day2.csv", Unit: "A"}, "step_day2_csv_a", true},
		{"current-step", Value{Name: "share second walk", Unit: "%"}, "share_second_walk_pct", true},
		{"walks-differ", Value{Name: "phase offset before second walk", Unit: "deg"}, "phase_offset_before_second_walk_deg", true},
		{"walks-differ", Value{Name: "phase offset second walk", Unit: "deg"}, "phase_offset_second_walk_deg", true},
		{"walks-differ", Value{Name: "change or ratio spread", Unit: "A"}, "change_or_ratio_spread_a", true},
		{"walks-differ", Value{Name: "phase drift walk 7", Unit: "deg/m"}, "phase_drift_walk_7_deg_per_m", true},
		{"attenuation", Value{Name: "attenuation", Unit: "dB/km"}, "attenuation_db_per_km", true},
		{"dipole-anomaly", Value{Name: "BIC lower by"}, "bic_lower_by", true},
		// The unit is part of what names a value.
		{"current-step", Value{Name: "step", Unit: "mA"}, "step_ma", false},
		// Another kind's value, and a walk's phrase with no walk.
		{"unsearched", Value{Name: "step", Unit: "A"}, "step_a", false},
		{"walks-differ", Value{Name: "step ", Unit: "A"}, "step_a", false},
	} {
		got, ok := lookupValueKey(tc.kind, tc.v)
		if ok != tc.ok || (ok && got != tc.want) {
			t.Errorf("lookupValueKey(%s, %q %q) = %q, %v; want %q, %v", tc.kind, tc.v.Name, tc.v.Unit, got, ok, tc.want, tc.ok)
		}
		if got := ValueKey(tc.kind, tc.v); got != tc.want {
			t.Errorf("ValueKey(%s, %q %q) = %q, want %q", tc.kind, tc.v.Name, tc.v.Unit, got, tc.want)
		}
	}
}

// valueKeyDocs are the documents TestFindingValueKeysCover walks: the
// demo (testdata/demo/fenwick-lane.toml, AC at 50 Hz as demo runs it)
// and scenarios of testdata/scenarios that between them raise steps,
// changes, anomalies, shallow cover, poor fits, objects, weak sources,
// further conductors and a crossing line.
func valueKeyDocs(t *testing.T) map[string]*Document {
	t.Helper()
	docs := map[string]*Document{
		"demo":    simulatedACDoc(t, scenarioFile(t, filepath.Join("demo", "fenwick-lane.toml")), 50),
		"fixture": fenwickLane(true),
	}
	for _, name := range []string{
		"kestrel-moor-step.toml", "two-conductors-fault.toml", "crossing-service.toml",
		"wrenbeck-dive.toml", "open/tee.toml", "open/bend.toml", "open/drum-beside-cable.toml",
	} {
		docs[name] = scenarioDoc(t, name, 1)
	}
	return docs
}

// TestFindingValueKeysCover: every value of every finding that the demo
// and the scenarios raise has its key in findingValueKeys (none falls
// back to one made from its phrase), and results.json, findings.csv and
// route.geojson give that key: findings[].values[].key, the value_key and
// value_keys columns, and the finding feature's property names.
func TestFindingValueKeysCover(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and fits several surveys")
	}
	seen := map[string]bool{}
	for name, d := range valueKeyDocs(t) {
		var js bytes.Buffer
		if err := WriteJSON(&js, d); err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Findings []Finding `json:"findings"`
		}
		if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
			t.Fatal(err)
		}
		var fc bytes.Buffer
		if err := WriteFindingsCSV(&fc, d); err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(strings.NewReader(strings.TrimPrefix(fc.String(), utf8BOM))).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		col := map[string]int{}
		for i, h := range rows[0] {
			col[h] = i
		}
		byID := map[string][]string{}
		for _, r := range rows[1:] {
			byID[r[col["id"]]] = r
		}
		features := geoFeatures(t, d)
		props := map[string]map[string]any{}
		for _, f := range features {
			props[f.ID] = f.Properties
		}
		for _, f := range doc.Findings {
			var keys []string
			for _, v := range f.Values {
				want, ok := lookupValueKey(f.Kind, v)
				if !ok {
					t.Errorf("%s: %s finding's value %q (%q) has no key in findingValueKeys", name, f.Kind, v.Name, v.Unit)
					continue
				}
				seen[f.Kind+" "+want] = true
				if v.Key != want {
					t.Errorf("%s: results.json gives %s's %q key %q, want %q", name, f.ID, v.Name, v.Key, want)
				}
				if _, ok := props[f.ID][want]; !ok {
					t.Errorf("%s: route.geojson's %s has no property %q", name, f.ID, want)
				}
				keys = append(keys, want)
			}
			r := byID[f.ID]
			if r == nil {
				t.Errorf("%s: findings.csv has no row %s", name, f.ID)
				continue
			}
			if got := r[col["value_keys"]]; got != strings.Join(keys, "; ") {
				t.Errorf("%s: findings.csv %s value_keys %q, want %q", name, f.ID, got, strings.Join(keys, "; "))
			}
			if len(keys) > 0 && r[col["value_key"]] != keys[0] {
				t.Errorf("%s: findings.csv %s value_key %q, want %q", name, f.ID, r[col["value_key"]], keys[0])
			}
		}
	}
	// The walk covers a fair part of the table, so that a value missing
	// from it would likely show.
	if len(seen) < 25 {
		t.Errorf("the documents raised only %d kinds' values: %v", len(seen), seen)
	}
	t.Logf("%d kind and key pairs seen", len(seen))
}

// valueKeysMarkdown is README's table of the finding kinds and their
// values' keys, made from findingValueKeys: one row per kind, each value
// as its key, its name (the phrase, which may be reworded) and its unit.
func valueKeysMarkdown() string {
	var b strings.Builder
	b.WriteString("| kind | values: `key` name (unit) |\n| --- | --- |\n")
	for _, k := range findingValueKeys {
		var vs []string
		for _, def := range k.Keys {
			s := "`" + def.Key + "` " + strings.ReplaceAll(def.Name, walkMark, "&lt;walk&gt;")
			if def.Unit != "" {
				s += " (" + def.Unit + ")"
			}
			vs = append(vs, s)
		}
		b.WriteString("| `" + k.Kind + "` | " + strings.Join(vs, "; ") + " |\n")
	}
	return b.String()
}

// Between these README holds valueKeysMarkdown's table.
const (
	valueKeysBegin = "<!-- finding value keys: made from report/valuekeys.go by go test ./report -run TestREADMEValueKeys -update -->\n"
	valueKeysEnd   = "<!-- end of finding value keys -->\n"
)

// TestREADMEValueKeys: README's table of finding kinds and value keys is
// the code's (findingValueKeys), so that the two cannot drift; -update
// writes it there.
func TestREADMEValueKeys(t *testing.T) {
	path := filepath.Join("..", "README.md")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	i, j := strings.Index(s, valueKeysBegin), strings.Index(s, valueKeysEnd)
	if i < 0 || j < i {
		t.Fatalf("README.md has no table of finding value keys between %q and %q", valueKeysBegin, valueKeysEnd)
	}
	want := valueKeysMarkdown()
	got := s[i+len(valueKeysBegin) : j]
	if got == want {
		return
	}
	if *update {
		s = s[:i+len(valueKeysBegin)] + want + s[j:]
		if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	t.Errorf("README.md's table of finding value keys is not findingValueKeys' (go test ./report -run TestREADMEValueKeys -update rewrites it); want:\n%s", want)
}
