package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// TestLocateFarObservatoryBaseWarned checks that an observatory's record
// from another continent, given as --base, is warned of with its distance,
// and that the same record placed near the survey is not. Before, the
// Boulder record was taken as the base of a survey in northern England
// without a word, although the daily variation there, 7 hours of local
// time away, is not the survey's. The base is the real Boulder 1-second
// file BOU20200101vsec.sec (INTERMAGNET data from the USGS,
// ../shared/data/iaga2002/SOURCE.md; its header places the observatory at
// 40.137° N, 254.763° E); the survey is the simulated Kestrel Moor spur
// (origin 54.3125° N, 2.0883° W), started when the file starts. The
// distance expected is worked here by the spherical law of cosines, a
// formula apart from the code's haversine (from memory, Boulder to northern
// England is about 7,200 km). The near copy has its header moved to
// 55.314° N, 356.794° E (about 130 km from the survey). Both places are
// printed with longitudes from -180 to 180 (254.763° E is -105.237°):
// before, the file's 254.763 stood beside the survey's -2.088 (found in
// review).
func TestLocateFarObservatoryBaseWarned(t *testing.T) {
	dir := t.TempDir()
	survey := kestrelSurvey2020(t, dir)

	far := ingesttest.IAGAFile(t, "BOU20200101vsec.sec")
	real, err := os.ReadFile(far)
	if err != nil {
		t.Fatal(err)
	}
	lat := regexp.MustCompile(`(?m)^( Geodetic Latitude +)40\.137`)
	lon := regexp.MustCompile(`(?m)^( Geodetic Longitude +)254\.763`)
	if !lat.Match(real) || !lon.Match(real) {
		t.Fatal("the Boulder file's header does not give 40.137, 254.763")
	}
	near := filepath.Join(dir, "bou-moved-near.sec")
	moved := lon.ReplaceAll(lat.ReplaceAll(real, []byte("${1}55.314")), []byte("${1}356.794"))
	if err := os.WriteFile(near, moved, 0o644); err != nil {
		t.Fatal(err)
	}

	rad := math.Pi / 180
	cosLaw := func(la1, lo1, la2, lo2 float64) float64 {
		c := math.Sin(la1*rad)*math.Sin(la2*rad) + math.Cos(la1*rad)*math.Cos(la2*rad)*math.Cos((lo2-lo1)*rad)
		return 6371 * math.Acos(c)
	}
	wantFar := cosLaw(54.3125, -2.0883, 40.137, 254.763)
	if wantNear := cosLaw(54.3125, -2.0883, 55.314, 356.794); wantNear > 300 {
		t.Fatalf("the near copy is %.0f km away, not near", wantNear)
	}

	code, stdout, stderr := cli(t, "locate", "--group-by", "group", "--base", far, survey)
	out := stdout + stderr
	if code != 0 {
		t.Fatalf("far base: exit %d\n%s", code, out)
	}
	m := regexp.MustCompile(`base record \S+ \(Boulder, BOU\) lies at latitude 40\.137°, longitude -105\.237°, (\d+) km from the survey \(latitude 54\.31\d°, longitude -2\.08\d°\)`).FindStringSubmatch(out)
	if m == nil {
		t.Fatalf("no warning that the Boulder base is far from the survey:\n%s", out)
	}
	km, _ := strconv.ParseFloat(m[1], 64)
	if math.Abs(km-wantFar) > 0.01*wantFar {
		t.Errorf("the base is said to be %.0f km away, want %.0f km within 1%%", km, wantFar)
	}
	if !strings.Contains(out, "hours of local time apart") {
		t.Errorf("the warning does not give the local time between them:\n%s", out)
	}

	code, stdout, stderr = cli(t, "locate", "--group-by", "group", "--base", near, survey)
	out = stdout + stderr
	if code != 0 {
		t.Fatalf("near base: exit %d\n%s", code, out)
	}
	if strings.Contains(out, "km from the survey (latitude") {
		t.Errorf("a base about 130 km away is warned of as far:\n%s", out)
	}
}
