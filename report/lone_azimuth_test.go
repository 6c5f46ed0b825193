package report

import (
	"bytes"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestLoneLineAzimuthSigma: the cover finding about a further line no
// track follows gives its azimuth with the sigma of the line's fitted
// azimuth (inverse's covariance, Source.AzimuthSigma), in results.json's
// values, findings.csv's "name = value ± sigma unit" and the GeoJSON's
// azimuth_sigma_deg, as README promises a one-sigma uncertainty on every
// number. Fixture as TestLoneLineFinding: a service 0.6 m below sensors
// 0.3 m up, crossing at 120° ± 0.5°.
func TestLoneLineAzimuthSigma(t *testing.T) {
	fits := twoCables(false)
	g := &fits[4]
	main := g.Result.Sources[0]
	right := [3]float64{main.Dir[1], -main.Dir[0], 0}
	c := main.Point
	g.Result.Sources = append(g.Result.Sources, inverse.SourceEstimate{
		Kind:  "line",
		Point: [3]float64{c[0] + 3*right[0], c[1] + 3*right[1], -0.6}, Dir: [3]float64{right[0], right[1], 0},
		Current: 15, CurrentSigma: 0.2, Depth: 0.6, DepthSigma: 0.02,
		Offset: 3, OffsetSigma: 0.02, Azimuth: 120, AzimuthSigma: 0.5,
		Identifiable: inverse.Identifiable{Current: true, Depth: true, Offset: true, Azimuth: true, Dip: true},
	})
	d, err := Build(Document{Title: "Harrow Fen substation feeders"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	var lone *Finding
	for i := range d.Findings {
		if d.Findings[i].Lone && d.Findings[i].Kind == "shallow-cover" {
			lone = &d.Findings[i]
		}
	}
	if lone == nil {
		t.Fatal("no cover finding about the lone line")
	}
	var az *Value
	for i := range lone.Values {
		if lone.Values[i].Name == "azimuth" {
			az = &lone.Values[i]
		}
	}
	if az == nil || az.Sigma != 0.5 {
		t.Fatalf("the lone line's azimuth %+v, want its fit's sigma 0.5°", az)
	}
	var buf bytes.Buffer
	if err := WriteFindingsCSV(&buf, d); err != nil {
		t.Fatal(err)
	}
	if want := "azimuth = " + PlusMinus(az.Value, 0.5) + " deg"; !strings.Contains(buf.String(), want) {
		t.Errorf("findings.csv lacks %q", want)
	}
	found := false
	for _, f := range geoFeatures(t, d) {
		if f.Properties["feature"] == "finding" && f.Properties["lone_line"] == true {
			found = true
			if s, _ := f.Properties["azimuth_sigma_deg"].(float64); s != 0.5 {
				t.Errorf("GeoJSON lone finding azimuth_sigma_deg %v, want 0.5", f.Properties["azimuth_sigma_deg"])
			}
		}
	}
	if !found {
		t.Error("no lone-line finding in the GeoJSON")
	}
}
