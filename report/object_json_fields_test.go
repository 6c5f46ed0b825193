package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// lineOnlyKeys are the members of a line source that a point dipole has
// no value for.
var lineOnlyKeys = []string{
	"direction", "current_a", "current_sigma_a", "offset_m", "offset_sigma_m",
	"azimuth_deg", "azimuth_sigma_deg", "dip_deg", "dip_sigma_deg", "span_m",
}

// TestObjectSourceJSONFields: a magnetised object's source in results.json
// carries what a point dipole has, its point, depth and moment, and none
// of a line's members. Before, it gave current_a 0, azimuth_deg 0, dip_deg
// 0 and a direction of zeros, which read as a measured current of 0 A
// bearing due north, and named its moment moment_am2 where results.csv and
// route.geojson say moment_a_m2 (found in review). Lines keep every
// member. The moment is checked against the one simulated for the Kestrel
// Moor valve body (valveBodyAlone: the field of a point dipole, B =
// mu0/(4 pi) (3 (m.r^) r^ - m)/r^3, Jackson, Classical Electrodynamics,
// 3rd ed., eq. 5.56), each axis within 4 of its sigmas (a bound a correct
// fit misses with probability 6e-5 per axis). A version 1 document, whose
// moment was moment_am2, still reads. Fails before the change (current_a
// and moment_am2 are written).
func TestObjectSourceJSONFields(t *testing.T) {
	d, _, moment := valveBodyAlone(t)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		SchemaVersion int `json:"schema_version"`
		Groups        []struct {
			Key     string           `json:"key"`
			Sources []map[string]any `json:"sources"`
		} `json:"groups"`
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.SchemaVersion < 2 {
		t.Errorf("schema_version %d: a member renamed and members removed make version 2", doc.SchemaVersion)
	}
	objects := 0
	for _, g := range doc.Groups {
		for _, s := range g.Sources {
			if s["kind"] != KindDipole {
				continue
			}
			objects++
			for _, k := range append(lineOnlyKeys, "moment_am2", "moment_sigma_am2") {
				if v, has := s[k]; has {
					t.Errorf("%s: object has %s = %v", g.Key, k, v)
				}
			}
			m, _ := s["moment_a_m2"].([]any)
			ms, _ := s["moment_sigma_a_m2"].([]any)
			if len(m) != 3 || len(ms) != 3 {
				t.Fatalf("%s: moment_a_m2 %v, moment_sigma_a_m2 %v", g.Key, s["moment_a_m2"], s["moment_sigma_a_m2"])
			}
			for a := range 3 {
				v, sv := m[a].(float64), ms[a].(float64)
				if !(sv > 0) || math.Abs(v-moment[a]) > 4*sv {
					t.Errorf("%s: moment axis %d %.4f ± %.4f A m^2, simulated %.4f", g.Key, a, v, sv, moment[a])
				}
			}
			for _, k := range []string{"point_m", "point_sigma_m", "depth_m", "depth_sigma_m", "unidentifiable"} {
				if _, has := s[k]; !has {
					t.Errorf("%s: object lacks %s", g.Key, k)
				}
			}
		}
	}
	if objects != 1 {
		t.Fatalf("%d objects in results.json, want the valve body", objects)
	}

	// Read back: as written, and from a version 1 document.
	v1 := strings.NewReplacer(`"moment_a_m2"`, `"moment_am2"`, `"moment_sigma_a_m2"`, `"moment_sigma_am2"`,
		fmt.Sprintf(`"schema_version": %d,`, SchemaVersion), `"schema_version": 1,`).Replace(buf.String())
	if v1 == buf.String() || strings.Contains(v1, "moment_a_m2") {
		t.Fatal("fixture: the version 1 document was not made")
	}
	for name, text := range map[string]string{"this version": buf.String(), "version 1": v1} {
		back, err := ReadJSON(strings.NewReader(text), FileJSON)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		n := 0
		for i, g := range back.Groups {
			for j, s := range g.Sources {
				if s.Kind != KindDipole {
					continue
				}
				n++
				want := d.Groups[i].Sources[j]
				if s.Moment == nil || s.MomentSigma == nil || *s.Moment != *want.Moment || *s.MomentSigma != *want.MomentSigma {
					t.Errorf("%s: moment read back as %v ± %v, written %v ± %v", name, s.Moment, s.MomentSigma, *want.Moment, *want.MomentSigma)
				}
			}
		}
		if n != 1 {
			t.Errorf("%s: %d objects read back", name, n)
		}
		// Written again, it is in this version's layout and says so (a
		// version 1 document rewritten had kept schema_version 1 over
		// version 2's names).
		var again bytes.Buffer
		if err := WriteJSON(&again, back); err != nil {
			t.Fatalf("%s: writing again: %v", name, err)
		}
		if want := fmt.Sprintf(`"schema_version": %d,`, SchemaVersion); !strings.Contains(again.String(), want) || strings.Contains(again.String(), "moment_am2") {
			t.Errorf("%s: written again without %s, or with moment_am2", name, want)
		}
	}

	// results.csv leaves the cells empty and route.geojson leaves the
	// members out; both name the moment moment_a_m2.
	for _, r := range readCSV(t, d) {
		if r["kind"] != KindDipole {
			continue
		}
		for _, k := range []string{"current_a", "current_sigma_a", "phase_deg", "azimuth_deg", "dip_deg", "offset_m"} {
			if r[k] != "" {
				t.Errorf("results.csv object row: %s = %q", k, r[k])
			}
		}
		if r["moment_a_m2"] == "" {
			t.Error("results.csv object row has no moment_a_m2")
		}
	}
	for _, f := range geoFeatures(t, d) {
		p := f.Properties
		if p["feature"] != "object" {
			continue
		}
		for _, k := range lineOnlyKeys {
			if v, has := p[k]; has {
				t.Errorf("route.geojson object: %s = %v", k, v)
			}
		}
		if _, has := p["moment_a_m2"]; !has {
			t.Error("route.geojson object has no moment_a_m2")
		}
	}
}

// TestACObjectSourceJSONKeepsPhase: an AC object's phase_deg is the
// reference phase its moment_a_m2 is read at (acMoment), so it stays,
// with its sigma, while the line members go; a line keeps them all.
// Fixture: TestACDipolePhaseEstimated's drum, moment (0.4, 0.25, -1.1)
// A m^2 at 155.1 degrees (invented).
func TestACObjectSourceJSONKeepsPhase(t *testing.T) {
	est := inverse.SourceEstimate{Kind: KindDipole, Point: [3]float64{29.7, 6, -0.6},
		Moment: [3]float64{0.4, 0.25, -1.1}, MomentSigma: [3]float64{0.01, 0.01, 0.02},
		Phase: 155.1, Depth: 0.6, DepthSigma: 0.02, Identifiable: inverse.Identifiable{Depth: true, Offset: true}}
	line := inverse.SourceEstimate{Kind: KindLine, Dir: [3]float64{0, 1, 0}, Current: 40, CurrentSigma: 0.1, Phase: -25, PhaseSigma: 0.0013,
		Identifiable: inverse.Identifiable{Current: true, Phase: true, Depth: true, Offset: true, Azimuth: true, Dip: true}}
	pts := [][3]float64{{-4, 0, 0.3}, {4, 0, 0.3}}
	for _, c := range []struct {
		est  inverse.SourceEstimate
		line bool
	}{{est, false}, {line, true}} {
		b, err := json.Marshal(buildSource(c.est, pts, true))
		if err != nil {
			t.Fatal(err)
		}
		var s map[string]any
		if err := json.Unmarshal(b, &s); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"phase_deg", "phase_sigma_deg"} {
			if _, has := s[k]; !has {
				t.Errorf("%s: no %s in %s", c.est.Kind, k, b)
			}
		}
		for _, k := range lineOnlyKeys {
			if _, has := s[k]; has != c.line {
				t.Errorf("%s: has %s %v: %s", c.est.Kind, k, has, b)
			}
		}
		if _, has := s["moment_a_m2"]; has == c.line {
			t.Errorf("%s: has moment_a_m2 %v", c.est.Kind, has)
		}
	}
}
