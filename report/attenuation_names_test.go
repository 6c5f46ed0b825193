package report

import (
	"bytes"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse/route"
)

// TestAttenuationValueNames: the attenuation finding of a 400 m main
// leaking evenly (1.8 exp(-a x) A, a = 3e-3 per metre, the transmission-
// line model; 21 stations every 20 m with sigmas of 0.003 A, simulated
// truth) gives its rate in every machine output in one fixed unit and
// under plain names: the GeoJSON properties attenuation_pct_per_km and
// attenuation_db_per_km (with their sigmas), the JSON values and the
// findings CSV in %/km and dB/km, the HTML the same; a fall of 100 (1 -
// exp(-3)) = 95.0% per km, positive. Before, a route under 500 m gave
// attenuation_pct_per_100_m and attenuation_db_db_per_100_m, a longer one
// attenuation_pct_per_km and attenuation_db_db_per_km (found in review).
func TestAttenuationValueNames(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 11))
	st := make([]route.Station, 21)
	for i := range st {
		x := float64(i) * 20
		st[i] = route.Station{Key: "T" + string(rune('0'+i/10)) + string(rune('0'+i%10)), Point: [3]float64{x, 0, -1.5}, Dir: [3]float64{1, 0, 0},
			Current: 1.8*math.Exp(-3e-3*x) + 0.003*rng.NormFloat64(), CurrentSigma: 0.003, Depth: 1.5, DepthSigma: 0.003, OK: true}
	}
	r, err := route.Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	d := fenwickLane(false)
	d.Findings = nil
	for _, f := range r.Findings {
		if f.Kind == route.KindAttenuation {
			d.Findings = append(d.Findings, findingOf(f))
		}
	}
	if len(d.Findings) != 1 {
		t.Fatalf("%d attenuation findings, want 1: %+v", len(d.Findings), r.Findings)
	}
	for _, v := range d.Findings[0].Values {
		if v.Unit == "%/km" && math.Abs(v.Value-100*(1-math.Exp(-3))) > 4*v.Sigma {
			t.Errorf("attenuation %.4g ± %.2g %%/km, want 95.02", v.Value, v.Sigma)
		}
	}
	out := func(w func(io.Writer, *Document) error) string {
		var buf bytes.Buffer
		if err := w(&buf, d); err != nil {
			t.Fatal(err)
		}
		return buf.String()
	}
	geo := out(WriteGeoJSON)
	for _, want := range []string{`"attenuation_pct_per_km":`, `"attenuation_sigma_pct_per_km":`, `"attenuation_db_per_km":`, `"attenuation_sigma_db_per_km":`} {
		if !strings.Contains(geo, want) {
			t.Errorf("GeoJSON lacks %s:\n%s", want, geo)
		}
	}
	for name, text := range map[string]string{"GeoJSON": geo, "JSON": out(WriteJSON), "findings CSV": out(WriteFindingsCSV), "HTML": out(WriteHTML)} {
		for _, bad := range []string{"100_m", "100 m\"", "/100 m", "db_db", "(dB)"} {
			if strings.Contains(text, bad) {
				t.Errorf("%s holds %q", name, bad)
			}
		}
	}
	for name, text := range map[string]string{"JSON": out(WriteJSON), "findings CSV": out(WriteFindingsCSV), "HTML": out(WriteHTML)} {
		for _, want := range []string{"%/km", "dB/km"} {
			if !strings.Contains(text, want) {
				t.Errorf("%s lacks %s", name, want)
			}
		}
	}
}
