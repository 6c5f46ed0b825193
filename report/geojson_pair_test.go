package report

import (
	"bytes"
	"math"
	"strconv"
	"testing"
)

// TestGeoJSONPairConductorAzimuth: the Points of an unresolved
// go-and-return pair's two lines ("feature": "pair conductor") give the
// pair's azimuth and its sigma, as results.csv and the crew report do
// (README: the two lines' own positions mean nothing), not each line's
// own fitted bearing without a sigma. Fixture: pairBesideCableFits, a
// balanced pair 0.2 m apart at 0.6 m beside a cable.
func TestGeoJSONPairConductorAzimuth(t *testing.T) {
	d, err := Build(Document{Title: "Sallow Hythe feeder"}, pairBesideCableFits(t, 1, 0.6), &BuildSettings{MinCover: 0.8})
	if err != nil {
		t.Fatal(err)
	}
	type key struct {
		group  string
		source int
	}
	csvAz := map[key][2]string{}
	for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
		n, _ := strconv.Atoi(row["source"])
		csvAz[key{row["group"], n}] = [2]string{row["azimuth_deg"], row["azimuth_sigma_deg"]}
	}
	pairs := 0
	for _, f := range geoFeatures(t, d) {
		pr := f.Properties
		if pr["feature"] != "pair conductor" {
			continue
		}
		pairs++
		g := pr["group"].(string)
		n := int(pr["source"].(float64))
		var p *Pair
		for i := range d.Groups {
			if d.Groups[i].Key == g {
				p = d.Groups[i].Pair
			}
		}
		if p == nil || (n-1 != p.Sources[0] && n-1 != p.Sources[1]) {
			t.Fatalf("%s source %d is called a pair conductor, but is none", g, n)
		}
		az, _ := pr["azimuth_deg"].(float64)
		sig, _ := pr["azimuth_sigma_deg"].(float64)
		if math.Abs(az-p.Azimuth) > 0.005 || !(p.AzimuthSigma > 0) || math.Abs(sig-p.AzimuthSigma) > 1e-5*p.AzimuthSigma {
			t.Errorf("%s source %d: azimuth %v ± %v, want the pair's %.3f ± %.4g", g, n, pr["azimuth_deg"], pr["azimuth_sigma_deg"], p.Azimuth, p.AzimuthSigma)
		}
		c := csvAz[key{g, n}]
		cAz, _ := strconv.ParseFloat(c[0], 64)
		cSig, _ := strconv.ParseFloat(c[1], 64)
		if math.Abs(cAz-az) > 0.005 || math.Abs(cSig-sig) > 1e-5*sig {
			t.Errorf("%s source %d: GeoJSON azimuth %v ± %v, results.csv %s ± %s", g, n, az, sig, c[0], c[1])
		}
		for _, k := range []string{"current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg"} {
			if _, has := pr[k]; has {
				t.Errorf("%s source %d: pair conductor has %s, which is not determined", g, n, k)
			}
		}
	}
	if pairs < 8 {
		t.Fatalf("%d pair conductor Points, want the two lines of most of the 7 groups: the fixture does not exercise the case", pairs)
	}
}
