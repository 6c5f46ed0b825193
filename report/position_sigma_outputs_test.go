package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestPositionSigmaWording: the outputs say what the sigmas count. The
// Kestrel Moor fixture's groups refitted with the positions known to
// 0.2 m across the plan and 0.15 m in height (locate --position-sigma
// 0.2,0.15) count that uncertainty in their sigmas (each group's notes say
// so): results.json records the values (position_sigma) and its
// uncertainty_note, report.html's note on the ± figures and its table of
// fits, results.csv's uncertainty_note and route.geojson's sigma_note say
// "the reading noise and position uncertainty (0.2 m plan, 0.15 m
// height)", a document read back from results.json too. Before, every one
// said the reading noise only whatever the fits counted. The same groups
// fitted without it keep "the reading noise only" and point to
// --position-sigma.
func TestPositionSigmaWording(t *testing.T) {
	const with = "the reading noise and position uncertainty (0.2 m plan, 0.15 m height)"
	plain := kestrelMoor(t)
	pos := make([]Fit, len(plain))
	for i, f := range plain {
		set := &inverse.Settings{Count: 1, PositionSigmaPlan: 0.2, PositionSigmaUp: 0.15}
		res, err := inverse.FitLines(f.Problem, set)
		if err != nil {
			t.Fatalf("%s: %v", f.Key, err)
		}
		noted := false
		for _, n := range res.Notes {
			noted = noted || strings.HasPrefix(n, inverse.PositionSigmaNote)
		}
		if !noted {
			t.Fatalf("%s: the fit with position sigmas has no note of them: %q", f.Key, res.Notes)
		}
		pos[i] = Fit{Key: f.Key, Problem: f.Problem, Result: res, Settings: set}
	}
	for _, tc := range []struct {
		name       string
		fits       []Fit
		want, lack []string // in results.json and report.html alike
	}{
		{"--position-sigma 0.2,0.15", pos, []string{with}, []string{"reading noise only"}},
		{"without", plain, []string{"reading noise only", "--position-sigma"}, []string{"position uncertainty ("}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(Document{}, tc.fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
			if err != nil {
				t.Fatal(err)
			}
			var js bytes.Buffer
			if err := WriteJSON(&js, d); err != nil {
				t.Fatal(err)
			}
			var raw struct {
				PositionSigma *struct {
					Plan float64 `json:"plan_m"`
					Up   float64 `json:"up_m"`
				} `json:"position_sigma"`
				Note string `json:"uncertainty_note"`
			}
			if err := json.Unmarshal(js.Bytes(), &raw); err != nil {
				t.Fatal(err)
			}
			if flag := tc.fits[0].Settings != nil; flag != (raw.PositionSigma != nil) ||
				flag && (raw.PositionSigma.Plan != 0.2 || raw.PositionSigma.Up != 0.15) {
				t.Errorf("results.json position_sigma %+v, fits' settings %+v", raw.PositionSigma, tc.fits[0].Settings)
			}
			back, err := ReadJSON(bytes.NewReader(js.Bytes()), "results.json")
			if err != nil {
				t.Fatal(err)
			}
			for _, doc := range []struct {
				name string
				d    *Document
			}{{"built", d}, {"read back", back}} {
				var h bytes.Buffer
				if err := WriteHTML(&h, doc.d); err != nil {
					t.Fatal(err)
				}
				for _, w := range tc.want {
					if !strings.Contains(raw.Note, w) {
						t.Errorf("results.json uncertainty_note lacks %q: %s", w, raw.Note)
					}
					if !strings.Contains(h.String(), w) {
						t.Errorf("%s report.html lacks %q", doc.name, w)
					}
				}
				for _, l := range tc.lack {
					if strings.Contains(raw.Note, l) {
						t.Errorf("results.json uncertainty_note says %q: %s", l, raw.Note)
					}
					if strings.Contains(h.String(), l) {
						t.Errorf("%s report.html says %q", doc.name, l)
					}
				}
				// The note on the ± figures, the summary's fit
				// uncertainty and the table of fits.
				if n := strings.Count(h.String(), with); tc.fits[0].Settings != nil && n < 3 {
					t.Errorf("%s report.html says %q %d times, want 3", doc.name, with, n)
				}
				if !strings.Contains(h.String(), "Uncertainties are one standard deviation from "+map[bool]string{true: with, false: "the reading noise only"}[tc.fits[0].Settings != nil]) {
					t.Errorf("%s report.html: the table of fits does not say what its uncertainties are from", doc.name)
				}
			}
			for _, row := range readCSV(t, d) {
				want := ""
				if tc.fits[0].Settings != nil {
					want = "sigmas count " + with
				}
				if row["uncertainty_note"] != want {
					t.Errorf("results.csv %s uncertainty_note %q, want %q", row["group"], row["uncertainty_note"], want)
				}
			}
			var g bytes.Buffer
			if err := WriteGeoJSON(&g, d); err != nil {
				t.Fatal(err)
			}
			if has := strings.Contains(g.String(), `"sigma_note":"Sigmas count `+with); has != (tc.fits[0].Settings != nil) {
				t.Errorf("route.geojson: sigma_note with %q is there %v", with, has)
			}
		})
	}
}
