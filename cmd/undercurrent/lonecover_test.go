package main

import (
	"math"
	"strings"
	"testing"
)

// TestLocateShallowCrossing: a service cable crossing the route 0.35 m
// below ground (crossing-service.toml) shows in some traverses' fits as a
// second line, too few to follow as a conductor of its own. Before, its
// cover went unchecked and the report said "0 warnings" beside a route
// whose own cover was fine; now a shallow-cover warning names it, with its
// cover within four sigma (plus the 2 cm the line fit may miss at a
// traverse it crosses obliquely) of the truth, and its azimuth within 3
// degrees (or four sigma) of the true 30. The service runs 60 degrees from
// square to the traverses; since a single traverse's azimuth is searched
// 80 degrees either side of square (it was 60), traverses whose line it
// crosses just past an end (T08) or 8 m past (T05, T09) fit it too, the
// last two loosely (cover 0.29 ± 0.16 m): those may give a caution where
// the cover's interval reaches the minimum, but every cover finding is the
// service's. With a 0.3 m minimum no warning is given. The four
// traverses that show it are now linked into one further conductor
// (TestLocateCrossingServiceFollowed), whose cover findings are checked
// the same way; cut to T01-T06, the log shows it on two traverses, too
// few to follow, and the lone line's finding is given.
func TestLocateShallowCrossing(t *testing.T) {
	check := func(f docFinding) {
		t.Helper()
		if !strings.Contains(f.Message, "further line source") && f.Conductor != 2 {
			t.Errorf("a cover finding that is not the crossing's: %s %s", f.Severity, f.Message)
			return
		}
		for _, v := range f.Values {
			if v.Name == "cover" && !(math.Abs(v.Value-0.35) <= kSigma*v.Sigma+0.02) {
				t.Errorf("crossing's cover %.4f ± %.4f m, true 0.35 m", v.Value, v.Sigma)
			}
			if v.Name == "azimuth" && math.Abs(v.Value-30) > math.Max(3, kSigma*v.Sigma) {
				t.Errorf("crossing's azimuth %.1f ± %.1f degrees, true 30", v.Value, v.Sigma)
			}
		}
	}
	_, doc := locateJSON(t, "crossing-service.toml", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6")
	var found int
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" {
			continue
		}
		check(f)
		if f.Severity == "warning" {
			found++
		}
	}
	if found == 0 {
		t.Errorf("no cover warning for the crossing service: %+v", doc.Findings)
	}
	doc = locateJSONGroups(t, "crossing-service.toml", []string{"T01", "T02", "T03", "T04", "T05", "T06"}, "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6")
	found = 0
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" {
			continue
		}
		check(f)
		if strings.Contains(f.Message, "further line source") {
			found++
		}
	}
	if found == 0 {
		t.Errorf("no lone line's cover finding for the crossing service seen on two traverses: %+v", doc.Findings)
	}
	_, doc = locateJSON(t, "crossing-service.toml", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.3")
	for _, f := range doc.Findings {
		if f.Kind != "shallow-cover" {
			continue
		}
		if f.Severity == "warning" {
			t.Errorf("a cover warning with a 0.3 m minimum: %s", f.Message)
		}
		check(f)
	}
}

// TestLocateCrossingNoiseGiven: the crossing scenario located with its
// true reading noise (--noise 2). The infinite crossing service puts a
// weak, nearly uniform field on traverses far from it, and the fits kept
// extra lines to absorb it: a 1425 A line 110 m down (the depth bound) and
// an 893 A line 87 m down became the route's conductor at T05 and T09,
// with false steps; and magnetised "objects" were placed 0.2 m above the
// ground, at the top of the object search (found in review). An extra line
// deeper than three times the survey's half-width is refused by the count's
// guard, and an object pinned at the search's top is not accepted: every
// route station is the 30 A feeder near its 1.3 m, no step is reported,
// and no object lies above the ground.
func TestLocateCrossingNoiseGiven(t *testing.T) {
	sc, doc := locateJSON(t, "crossing-service.toml", "--noise", "2", "--group-by", "group", "--sensor-height", "0.3")
	feeder := sc.Conductors[0]
	if feeder.Current != 30 {
		t.Fatalf("the scenario's first conductor carries %g A, want the 30 A feeder", feeder.Current)
	}
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) == 0 {
			continue
		}
		s := g.Sources[0]
		if s.Kind == "line" && (math.Abs(math.Abs(s.Current)-30) > 16 || s.Depth > 3) {
			t.Errorf("%s: the route's conductor is %.4g A at %.3g m, not the 30 A feeder at 1.3 m", g.Key, s.Current, s.Depth)
		}
	}
	for _, f := range doc.Findings {
		switch f.Kind {
		case "current-step":
			t.Errorf("a step where there is none: %s", f.Message)
		case "dipole-anomaly":
			for _, v := range f.Values {
				if v.Name == "depth below ground" && v.Value < 0 {
					t.Errorf("an object above the ground: %s", f.Message)
				}
			}
		}
	}
}
