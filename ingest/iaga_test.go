package ingest

import (
	"math"
	"path/filepath"
	"strings"
	"testing"
	"undercurrent/ingest/ingesttest"
)

// The real files are INTERMAGNET observatory data distributed by the USGS
// (public domain); see ../shared/data/iaga2002/SOURCE.md.

func TestIAGARealFiles(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	cases := []struct {
		file     string
		rows     int // data lines in the file (wc -l minus header lines)
		first    float64
		elements string
		frame    Frame
		missing  int // rows with a missing field value
		station  string
	}{
		{"bou20141101vmin.min", 1440, 1414800000, "HDZF", FrameENU, 0, "Boulder"},
		{"bou20141102vmin.min", 1440, 1414886400, "HDZF", FrameENU, 0, "Boulder"},
		{"BOU20200101vsec.sec", 901, 1577836800, "HEZF", FrameENU, 0, "Boulder"},
		{"BOU202005adj.min", 61, 1589991300, "HENULNUL", FrameENU, 61, "Boulder"},
		{"LLO20200106vsec.sec", 14401, 1578268800, "UVWNUL", FrameSensor, 0, ""},
	}
	for _, tc := range cases {
		t.Run(tc.file, func(t *testing.T) {
			mem := checked(t)
			s, err := ReadSamples(filepath.Join(dir, tc.file), WithAllocator(mem), WithBatchSize(1000))
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != tc.rows {
				t.Errorf("rows = %d, want %d", s.Len(), tc.rows)
			}
			if s.Time[0] != tc.first {
				t.Errorf("first time = %v, want %v", s.Time[0], tc.first)
			}
			if s.Meta["elements"] != tc.elements {
				t.Errorf("elements = %q, want %q", s.Meta["elements"], tc.elements)
			}
			if s.Frame != tc.frame {
				t.Errorf("frame = %v, want %v", s.Frame, tc.frame)
			}
			if s.Meta["station_name"] != tc.station {
				t.Errorf("station = %q, want %q", s.Meta["station_name"], tc.station)
			}
			got := 0
			for i := range s.Time {
				if math.IsNaN(s.Bx[i]) || math.IsNaN(s.By[i]) || math.IsNaN(s.Bz[i]) {
					got++
				}
				if i > 0 && s.Time[i] <= s.Time[i-1] {
					t.Fatalf("row %d: time %v after %v", i, s.Time[i], s.Time[i-1])
				}
			}
			if got != tc.missing {
				t.Errorf("rows with missing values = %d, want %d", got, tc.missing)
			}
			if s.X != nil {
				t.Error("an observatory file has no positions")
			}
		})
	}
}

func TestIAGAConversions(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	// First row of bou20141101vmin.min: H 20873.75 nT, D -9.99 arc-min,
	// Z 47477.30 nT, variation data about DECBAS 5527 (552.7 arc-min east).
	// In the baseline frame east = H sin D, north = H cos D, up = -Z; turned
	// to geographic axes D becomes 552.7 + D arc-min (IAGA-2002 format
	// description, INTERMAGNET technical manual: DECBAS is the baseline
	// declination in tenths of minutes east).
	for _, tc := range []struct {
		keep bool
		d    float64 // arc-min
	}{{true, -9.99}, {false, 552.7 - 9.99}} {
		s, err := ReadSamples(filepath.Join(dir, "bou20141101vmin.min"), WithIAGABaselineFrame(tc.keep))
		if err != nil {
			t.Fatal(err)
		}
		d := tc.d / 60 * math.Pi / 180
		want := [3]float64{20873.75 * math.Sin(d), 20873.75 * math.Cos(d), -47477.30}
		got := [3]float64{s.Bx[0], s.By[0], s.Bz[0]}
		for i := range got {
			if math.Abs(got[i]-want[i]) > 1e-9 {
				t.Errorf("HDZ row 0, baseline frame kept %v: ENU %v, want %v", tc.keep, got, want)
			}
		}
		if s.Meta["decbas"] != "5527" || s.Meta["geodetic_latitude"] != "40.137" || s.Meta["station"] != "BOU" || s.Meta["longitude"] != "254.764" {
			t.Errorf("header fields: %v", s.Meta)
		}
		if want := map[bool]string{true: IAGABaselineKept, false: IAGAGeographic}[tc.keep]; s.Meta["horizontal_frame"] != want {
			t.Errorf("baseline frame kept %v: horizontal_frame %q, want %q", tc.keep, s.Meta["horizontal_frame"], want)
		}
	}
	// First row of BOU20200101vsec.sec: H 20826.85, E -86.75, Z 46874.62,
	// DECBAS 5527: H points 552.7 arc-min east of north, E at right angles
	// east of it.
	s, err := ReadSamples(filepath.Join(dir, "BOU20200101vsec.sec"), WithIAGABaselineFrame(true))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != -86.75 || s.By[0] != 20826.85 || s.Bz[0] != -46874.62 || s.F[0] != 51815.05 {
		t.Errorf("HEZ row 0 in the baseline frame: %v %v %v F %v", s.Bx[0], s.By[0], s.Bz[0], s.F[0])
	}
	s, err = ReadSamples(filepath.Join(dir, "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	d0 := 552.7 / 60 * math.Pi / 180
	e := 20826.85*math.Sin(d0) - 86.75*math.Cos(d0)
	n := 20826.85*math.Cos(d0) + 86.75*math.Sin(d0)
	if math.Abs(s.Bx[0]-e) > 1e-9 || math.Abs(s.By[0]-n) > 1e-9 || s.Bz[0] != -46874.62 {
		t.Errorf("HEZ row 0 turned: %v %v %v, want %v %v", s.Bx[0], s.By[0], s.Bz[0], e, n)
	}
	// LLO: three header lines, UVW kept in the instrument's axes, F NUL.
	s, err = ReadSamples(filepath.Join(dir, "LLO20200106vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 8330.27 || s.By[0] != -18968.24 || s.Bz[0] != 39293.09 || s.F != nil {
		t.Errorf("UVW row 0: %v %v %v F %v", s.Bx[0], s.By[0], s.Bz[0], s.F != nil)
	}
	if s.Meta["iaga_code"] != "LLO" || s.Meta["reported"] != "UVWNUL" {
		t.Errorf("LLO header: %v", s.Meta)
	}
}

// TestIAGAScalarVersusVector compares the scalar F with the vector
// magnitude. SOURCE.md says the adjusted Boulder file holds X Y Z F with F
// minus |B| a few nT; the file as shipped reports HE NUL NUL (Z and F are
// 99999.00 in every row), so for it the test checks that they read as
// missing. The variation files do carry F: variation data hold the vector
// components about a baseline, so F - |B| is a baseline offset (about
// 520 nT at Boulder) that must stay steady to within the few nT of
// SOURCE.md over a file.
func TestIAGAScalarVersusVector(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	const fewNT = 3.0 // SOURCE.md: "a few nT"
	s, err := ReadSamples(filepath.Join(dir, "BOU202005adj.min"))
	if err != nil {
		t.Fatal(err)
	}
	if s.F != nil {
		t.Error("adjusted file: F column read although its element is NUL")
	}
	for i := range s.Bz {
		if !math.IsNaN(s.Bz[i]) {
			t.Fatalf("adjusted file row %d: Z = %v, want missing", i, s.Bz[i])
		}
	}
	if s.Meta["missing_rows"] != "61" {
		t.Errorf("missing_rows = %q, want 61", s.Meta["missing_rows"])
	}
	// The last row is missing in all four elements.
	n := s.Len() - 1
	if !math.IsNaN(s.Bx[n]) || !math.IsNaN(s.By[n]) {
		t.Errorf("last row: %v %v, want missing", s.Bx[n], s.By[n])
	}
	for _, f := range []string{"bou20141101vmin.min", "bou20141102vmin.min", "BOU20200101vsec.sec"} {
		s, err := ReadSamples(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range s.Time {
			d := s.F[i] - math.Sqrt(s.Bx[i]*s.Bx[i]+s.By[i]*s.By[i]+s.Bz[i]*s.Bz[i])
			lo, hi = math.Min(lo, d), math.Max(hi, d)
		}
		if hi-lo > fewNT {
			t.Errorf("%s: F - |B| spans %.3f to %.3f nT", f, lo, hi)
		}
	}
}

func TestIAGAErrors(t *testing.T) {
	head := " Format                 IAGA-2002                                    |\n IAGA CODE              HFN                                          |\n"
	cols := "DATE       TIME         DOY     HFNX      HFNY      HFNZ      HFNF   |\n"
	row := "2024-03-01 00:00:00.000 061     17500.00   -450.00  46000.00  49200.00\n"
	cases := []struct {
		name, text, want string
	}{
		{"no column line", head, "without a DATE TIME DOY column line"},
		{"bad value", head + cols + strings.Replace(row, "-450.00", "-45o.00", 1), `:4: column HFNY: "-45o.00" is not a number`},
		{"short row", head + cols + row[:40] + "\n", ":4: IAGA-2002 data line needs"},
		{"backwards", head + cols + row + strings.Replace(row, "00:00:00", "00:00:00", 1) + strings.Replace(row, "2024-03-01 00:00:00.000 061", "2024-02-29 00:00:00.000 060", 1), ":6: column DATE TIME: time goes backwards"},
		{"bad date", head + cols + strings.Replace(row, "2024-03-01", "2024-13-01", 1), `:4: column DATE TIME: "2024-13-01 00:00:00.000" is not an IAGA-2002 date and time`},
		{"unknown elements", head + strings.Replace(cols, "HFNX      HFNY      HFNZ", "HFND      HFNI      HFNF", 1) + row, `element set "DIF" is not supported`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			mem := checked(t)
			p := writeFile(t, "hfn.min", tc.text)
			_, err := ReadSamples(p, WithAllocator(mem))
			wantErr(t, err, tc.want)
		})
	}
	// 99999.00 (missing) and 88888.00 (not recorded) read as NaN, not as
	// errors (IAGA-2002 format description, INTERMAGNET technical manual).
	gap := strings.Replace(strings.Replace(row, "17500.00", "99999.00", 1), "49200.00", "88888.00", 1)
	p := writeFile(t, "hfn.min", head+cols+gap)
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(s.By[0]) || !math.IsNaN(s.F[0]) || s.Bx[0] != -450 || s.Meta["missing_rows"] != "1" {
		t.Errorf("missing markers: by %v f %v bx %v meta %v", s.By[0], s.F[0], s.Bx[0], s.Meta)
	}
	// XYZ: east = Y, north = X, up = -Z.
	p = writeFile(t, "hfn.min", head+cols+row)
	s, err = ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != -450 || s.By[0] != 17500 || s.Bz[0] != -46000 {
		t.Errorf("XYZ: %v %v %v", s.Bx[0], s.By[0], s.Bz[0])
	}
}

// TestIAGABaselineDeclination checks the turn of variation data by DECBAS
// on every row of the real Boulder files: it keeps the horizontal intensity,
// puts the declination at DECBAS + D (H D Z), and lands on a declination of
// the right sign and size for Boulder. The last is from memory (the
// declination at Boulder was about 8 to 9 degrees east in 2014-2020, as the
// IGRF gives it), so the band is wide: it catches a turn the wrong way
// (about -9 degrees), none (about 0) or a DECBAS read in the wrong unit.
func TestIAGABaselineDeclination(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	for _, f := range []string{"bou20141101vmin.min", "bou20141102vmin.min", "BOU20200101vsec.sec"} {
		kept, err := ReadSamples(filepath.Join(dir, f), WithIAGABaselineFrame(true))
		if err != nil {
			t.Fatal(err)
		}
		s, err := ReadSamples(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		hdz := s.Meta["elements"] == "HDZF"
		var mean float64
		for i := range s.Time {
			h0 := math.Hypot(kept.Bx[i], kept.By[i])
			h := math.Hypot(s.Bx[i], s.By[i])
			if math.Abs(h-h0) > 1e-11*h0 {
				t.Fatalf("%s row %d: horizontal intensity %v, baseline frame %v", f, i, h, h0)
			}
			d := math.Atan2(s.Bx[i], s.By[i]) * 180 / math.Pi * 60 // arc-min east
			if hdz {
				// The file's D column, recovered from the baseline frame.
				d0 := math.Atan2(kept.Bx[i], kept.By[i]) * 180 / math.Pi * 60
				if math.Abs(d-(552.7+d0)) > 1e-8 {
					t.Fatalf("%s row %d: declination %v arc-min, want DECBAS 552.7 + D %v", f, i, d, d0)
				}
			}
			mean += d / 60 / float64(s.Len())
		}
		if mean < 7.5 || mean > 10 {
			t.Errorf("%s: mean declination %.3f deg, want about 8 to 9 deg east (Boulder)", f, mean)
		}
	}
}

// TestIAGABaselineRules covers when DECBAS is applied: variation data only,
// never definitive data, and a DECBAS that is not a declination in tenths
// of minutes is an error naming its line (unless the baseline frame is kept).
func TestIAGABaselineRules(t *testing.T) {
	head := func(typ, decbas string) string {
		return " Format                 IAGA-2002                                    |\n" +
			" IAGA CODE              HFN                                          |\n" +
			" Data Type              " + typ + "\n" +
			" # DECBAS               " + decbas + "    (Baseline declination value in       |\n"
	}
	cols := "DATE       TIME         DOY     HFNH      HFNE      HFNZ      HFNF   |\n"
	row := "2024-03-01 00:00:00.000 061     20000.00    100.00  46000.00  50000.00\n"
	// DECBAS 5400: 540 arc-min = 9 degrees east.
	s, err := ReadSamples(writeFile(t, "hfn.sec", head("variation", "5400")+cols+row))
	if err != nil {
		t.Fatal(err)
	}
	sn, cs := math.Sincos(9 * math.Pi / 180)
	if e, n := 20000*sn+100*cs, 20000*cs-100*sn; math.Abs(s.Bx[0]-e) > 1e-9 || math.Abs(s.By[0]-n) > 1e-9 {
		t.Errorf("variation HEZ: %v %v, want %v %v", s.Bx[0], s.By[0], e, n)
	}
	s, err = ReadSamples(writeFile(t, "hfn.sec", head("definitive", "5400")+cols+row))
	if err != nil {
		t.Fatal(err)
	}
	// Not turned, and marked as read in the observatory's H E axes.
	if s.Bx[0] != 100 || s.By[0] != 20000 || s.Meta["horizontal_frame"] != IAGAHENotTurned {
		t.Errorf("definitive HEZ turned: %v %v %q", s.Bx[0], s.By[0], s.Meta["horizontal_frame"])
	}
	// Variation data without DECBAS stay in the baseline frame, marked so.
	noDecbas := strings.Replace(head("variation", "5400"), " # DECBAS               5400    (Baseline declination value in       |\n", "", 1)
	s, err = ReadSamples(writeFile(t, "hfn.sec", noDecbas+cols+row))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 100 || s.By[0] != 20000 || s.Meta["horizontal_frame"] != IAGABaselineNoDECBAS {
		t.Errorf("variation HEZ without DECBAS: %v %v %q", s.Bx[0], s.By[0], s.Meta["horizontal_frame"])
	}
	for _, bad := range []string{"55x7", "216001", "-1"} {
		p := writeFile(t, "hfn.sec", head("variation", bad)+cols+row)
		_, err := ReadSamples(p)
		wantErr(t, err, `hfn.sec:4: column DECBAS: IAGA-2002 DECBAS "`+bad+`" is not a baseline declination`)
		// The refusal names the option as the other refusals do, and
		// the flag, not the Go package (found in review).
		if msg := err.Error(); !strings.Contains(msg, "on the command line --iaga-baseline-frame") || strings.Contains(msg, "ingest.With") {
			t.Errorf("DECBAS %q: error %q: want the flag named, not the Go package", bad, msg)
		}
		if _, err := ReadSamples(p, WithIAGABaselineFrame(true)); err != nil {
			t.Errorf("DECBAS %q with the baseline frame kept: %v", bad, err)
		}
	}
}
