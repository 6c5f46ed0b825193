package calibrate

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"undercurrent/ingest/ingesttest"

	"undercurrent/ingest"
)

func TestBaseCorrectBoulderSelf(t *testing.T) {
	// Real Boulder (BOU) 1-minute variation data, 1 and 2 November 2014
	// (INTERMAGNET / USGS). Correcting a day's record with itself must
	// leave exactly the reference value (zero departure) at every minute,
	// and the day's range in H must match DOMAIN.md: "34-81 nT daily range
	// in H, up to 8 nT/min" for Boulder that November week (the published
	// figures are whole nT, so we compare after rounding).
	for _, name := range []string{"bou20141101vmin.min", "bou20141102vmin.min"} {
		t.Run(name, func(t *testing.T) {
			path := ingesttest.IAGAFile(t, name)
			base, err := ingest.ReadSamples(path)
			if err != nil {
				t.Fatal(err)
			}
			rover, err := ingest.ReadSamples(path)
			if err != nil {
				t.Fatal(err)
			}
			if base.Len() != 1440 {
				t.Fatalf("%d rows, want 1440 minutes", base.Len())
			}
			rep, err := BaseCorrect(rover, base, nil)
			if err != nil {
				t.Fatal(err)
			}
			if rep.Outside != 0 || rep.InGap != 0 || len(rep.Warnings) != 0 {
				t.Errorf("outside %d, in gap %d, warnings %q: want none", rep.Outside, rep.InGap, rep.Warnings)
			}
			cols := [3][]float64{rover.Bx, rover.By, rover.Bz}
			for k := 0; k < 3; k++ {
				for i, v := range cols[k] {
					// The subtraction v - (v - ref) rounds at 1e-11 nT on 5e4 nT.
					if d := v - rep.Reference[k]; math.Abs(d) > 1e-9 {
						t.Fatalf("row %d axis %d: residual departure %g nT, want 0", i, k, d)
					}
				}
			}
			if r := math.Round(rep.RangeH); r < 34 || r > 81 {
				t.Errorf("daily range in H %.2f nT, outside DOMAIN.md's 34-81 nT", rep.RangeH)
			}
			// Rate of change of H, minute to minute: up to 8 nT/min.
			var maxRate float64
			for i := 1; i < base.Len(); i++ {
				h0, h1 := math.Hypot(base.Bx[i-1], base.By[i-1]), math.Hypot(base.Bx[i], base.By[i])
				if dt := base.Time[i] - base.Time[i-1]; dt == 60 {
					maxRate = math.Max(maxRate, math.Abs(h1-h0))
				}
			}
			if math.Round(maxRate) > 8 {
				t.Errorf("largest change of H %.2f nT/min, DOMAIN.md says up to 8", maxRate)
			}
		})
	}
}

func TestBaseCorrectBoulderPartial(t *testing.T) {
	// A rover spanning the evening of 1 November into 2 November, against a
	// base of 1 November only: refused by default (the rows an hour past the
	// base's end would get a value held for an hour); with the hold allowed,
	// corrected where covered, held and warned beyond.
	base, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	day2, err := ingest.ReadSamples(ingesttest.IAGAFile(t, "bou20141102vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	rover := &ingest.Samples{Source: "fenwick-lane-night.csv"}
	for i := 1380; i < 1440; i++ { // 23:00-23:59 on the 1st
		rover.Time = append(rover.Time, base.Time[i]+30)
	}
	for i := 0; i < 60; i++ { // 00:00-00:59 on the 2nd
		rover.Time = append(rover.Time, day2.Time[i]+30)
	}
	rover.Bx = make([]float64, len(rover.Time))
	rover.By = make([]float64, len(rover.Time))
	rover.Bz = make([]float64, len(rover.Time))
	if _, err := BaseCorrect(rover, base, &BaseSettings{RefMode: "first"}); err == nil ||
		!strings.Contains(err.Error(), "56 of 120 readings, the first at 2014-11-02T00:04:30Z, lie more than 300 s outside it") ||
		!strings.Contains(err.Error(), "--base-hold") {
		t.Errorf("err = %v, want the rows beyond five base intervals (300 s) refused", err)
	}
	if rover.Bz[0] != 0 {
		t.Error("a refused correction changed the log")
	}
	if _, err := BaseCorrect(rover, base, &BaseSettings{RefMode: "first", MaxHold: 3700}); err != nil {
		t.Errorf("an hour's hold allowed: %v", err)
	}
	for i := range rover.Bz {
		rover.Bx[i], rover.By[i], rover.Bz[i] = 0, 0, 0
	}
	rep, err := BaseCorrect(rover, base, &BaseSettings{RefMode: "first", MaxHold: -1})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Covered != 59 || rep.Outside != 61 {
		t.Errorf("covered %d, outside %d; want 59 and 61", rep.Covered, rep.Outside)
	}
	if len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "does not cover") || !strings.Contains(rep.Warnings[0], "2014-11-02T00:59:30Z") {
		t.Errorf("warnings %q", rep.Warnings)
	}
	// Halfway between two minutes the correction is the mean departure.
	want := -(0.5*(base.Bz[1380]+base.Bz[1381]) - base.Bz[0])
	if math.Abs(rover.Bz[0]-want) > 1e-9 {
		t.Errorf("interpolated correction %.6f, want %.6f", rover.Bz[0], want)
	}
	// No overlap at all is an error naming both spans.
	rover2 := &ingest.Samples{Source: "later.csv", Time: day2.Time, Bx: day2.Bx, By: day2.By, Bz: day2.Bz}
	if _, err := BaseCorrect(rover2, base, nil); err == nil || !strings.Contains(err.Error(), "does not overlap") {
		t.Errorf("err = %v, want a no-overlap error", err)
	}
}

func TestBaseCorrectColumnsSynthetic(t *testing.T) {
	// A base departure linear in time is interpolated exactly; a missing
	// base value (NaN, as ingest reads IAGA 99999) is skipped.
	bt := []float64{0, 10, 20, 30, 40}
	bb := [3][]float64{
		{100, 110, 120, 130, 140},
		{0, 0, math.NaN(), 0, 0},
		{-5, -5, -5, -5, -5},
	}
	rt := []float64{5, 15, 25, 35}
	rb := [3][]float64{{1, 1, 1, 1}, {2, 2, 2, 2}, {3, 3, 3, 3}}
	ref := [3]float64{100, 0, -5}
	rep, err := BaseCorrectColumns("rover", rt, rb, "base", bt, bb, &BaseSettings{Reference: &ref})
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{1 - 5, 1 - 15, 1 - 25, 1 - 35} {
		if math.Abs(rb[0][i]-want) > 1e-12 || rb[1][i] != 2 || rb[2][i] != 3 {
			t.Errorf("row %d: (%g, %g, %g), want (%g, 2, 3)", i, rb[0][i], rb[1][i], rb[2][i], want)
		}
	}
	// The NaN leaves a 20 s gap in by, within the default 5 × 10 s.
	if rep.InGap != 0 || rep.Covered != 4 {
		t.Errorf("in gap %d, covered %d", rep.InGap, rep.Covered)
	}
	// Gaps longer than the default limit: TestBaseGap* in
	// base_checks_test.go.
	if _, err := BaseCorrectColumns("rover", rt, rb, "base.csv", []float64{0, 10, 10, 30, 40}, bb, nil); err == nil || !strings.Contains(err.Error(), "base.csv: data row 3 (counting from 1)") {
		t.Errorf("err = %v, want one naming base.csv data row 3", err)
	}
}

// A base record of observatory variation data whose header gives no
// baseline declination stays in the baseline frame (ingest), and the
// correction warns that its east and north are not geographic; the Boulder
// files, which give DECBAS, draw no such warning (TestBaseCorrectBoulderSelf).
func TestBaseCorrectWarnsBaselineFrame(t *testing.T) {
	warnings := hfnBaseSelfWarnings(t, "variation", "hfn20240301vmin.min")
	if len(warnings) != 1 || !strings.Contains(warnings[0], "gives no baseline declination (DECBAS)") {
		t.Errorf("warnings %q, want one about the baseline frame", warnings)
	}
}

// hfnBaseSelfWarnings writes a five-minute IAGA-2002 record of station HFN
// in H E Z with the given Data Type to a file of the given name, corrects it
// against itself as base and returns the correction's warnings.
func hfnBaseSelfWarnings(t *testing.T, dataType, name string) []string {
	t.Helper()
	text := " Format                 IAGA-2002                                    |\n" +
		" IAGA CODE              HFN                                          |\n" +
		fmt.Sprintf(" Data Type              %-45s|\n", dataType) +
		"DATE       TIME         DOY     HFNH      HFNE      HFNZ      HFNF   |\n"
	for i := range 5 {
		text += fmt.Sprintf("2024-03-01 00:0%d:00.000 061     %.2f    100.00  46000.00  50000.00\n", i, 20000+float64(i))
	}
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	base, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	rover, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := BaseCorrect(rover, base, nil)
	if err != nil {
		t.Fatal(err)
	}
	return rep.Warnings
}
