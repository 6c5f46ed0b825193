package main

import (
	"math"
	"strings"
	"testing"
)

// TestLocateShallowCrossing: a service cable crossing the route 0.35 m
// below ground (crossing-service.toml) shows in one traverse's fit as a
// second line, too few to follow as a conductor of its own. Before, its
// cover went unchecked and the report said "0 warnings" beside a route
// whose own cover was fine; now a shallow-cover warning names it, with its
// cover within four sigma (plus the 2 cm the line fit may miss at a
// traverse it crosses obliquely) of the truth. With a 0.3 m minimum it is
// clear and nothing is said.
func TestLocateShallowCrossing(t *testing.T) {
	_, doc := locateJSON(t, "crossing-service.toml", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6")
	var found int
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" {
			continue
		}
		if !strings.Contains(f.Message, "further line source") || f.Severity != "warning" {
			t.Errorf("a cover finding that is not the crossing's warning: %s %s", f.Severity, f.Message)
			continue
		}
		found++
		for _, v := range f.Values {
			if v.Name == "cover" && !(math.Abs(v.Value-0.35) <= kSigma*v.Sigma+0.02) {
				t.Errorf("crossing's cover %.4f ± %.4f m, true 0.35 m", v.Value, v.Sigma)
			}
			if v.Name == "azimuth" && math.Abs(v.Value-30) > 3 {
				t.Errorf("crossing's azimuth %.1f degrees, true 30", v.Value)
			}
		}
	}
	if found == 0 {
		t.Errorf("no cover warning for the crossing service: %+v", doc.Findings)
	}
	_, doc = locateJSON(t, "crossing-service.toml", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.3")
	for _, f := range doc.Findings {
		if f.Kind == "shallow-cover" {
			t.Errorf("a cover finding with a 0.3 m minimum: %s", f.Message)
		}
	}
}
