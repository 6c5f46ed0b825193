package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// backgroundScenario writes an invented walked DC survey whose Earth's
// field was taken off, leaving the fixed background field (nT, east,
// north, up): five 4 m-spaced traverses over one line conductor carrying
// current A at 1.1 m below the surface.
func backgroundScenario(t *testing.T, dir, name string, field [3]float64, noise, current, length float64) string {
	t.Helper()
	p := filepath.Join(dir, name+".toml")
	sc := fmt.Sprintf(`name = %q
site = "Alder Row yard"
seed = 11
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [%g, %g, %g]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = %g
[survey]
count = 5
spacing_m = 4.0
first_at_m = 2.0
length_m = %g
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.0, -1.1]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = %g
`, name, field[0], field[1], field[2], noise, length, current)
	if err := os.WriteFile(p, []byte(sc), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// A walked DC survey with the Earth's field taken off (a model or a
// reference sensor's field subtracted, leaving a fixed background of a
// few hundred nT, or a gradiometer's offset of tens) is steady in size
// like a total field in mG or uT read as nT, but its field neither turns
// in the sensor's axes nor is the Earth's field at the log's origin read
// in that unit: it is fitted, with a warning that names both readings and
// puts --unit bx=nT,... beside the other unit's. Before, both logs were
// refused as "probably in mG" (or uT), and the --unit the refusal gave
// made every current 100 (or 1000) times too large with every fit
// "sound" (found in review). The currents are checked against the
// simulated truth.
func TestLocateSurveyBackgroundRemoved(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name    string
		field   [3]float64
		noise   float64
		current float64
		length  float64
		unit    string
		origin  string
	}{
		{"resid670m", [3]float64{400, -300, 450}, 1, 0.5, 60, "mG", ""},
		{"resid40w", [3]float64{20, -15, 30}, 0.2, 0.02, 30, "uT", ""},
		// The same 674 nT background with an origin in northern England,
		// where the Earth's field is about 17 000 nT north and 47 000 nT
		// down: read in mG it is not that field.
		{"resid670m-origin", [3]float64{400, -300, 450}, 1, 0.5, 60, "mG", "# undercurrent.origin: 54.3125 -2.0883 312\n"},
	} {
		sc := backgroundScenario(t, dir, c.name, c.field, c.noise, c.current, c.length)
		log := filepath.Join(dir, c.name+".csv")
		mustCLI(t, "simulate", sc, "-o", log)
		if c.origin != "" {
			data, err := os.ReadFile(log)
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(log, append([]byte(c.origin), data...), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		code, stdout, stderr := cli(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", log)
		if code != 0 {
			t.Errorf("%s: exit %d, stderr:\n%s\nwant it fitted", c.name, code, stderr)
			continue
		}
		var doc resultDoc
		if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
			t.Fatalf("%s: locate --json: %v\n%.300s", c.name, err, stdout)
		}
		if len(doc.Groups) != 5 {
			t.Fatalf("%s: %d groups, want 5", c.name, len(doc.Groups))
		}
		for _, g := range doc.Groups {
			if len(g.Sources) != 1 {
				t.Fatalf("%s %s: %d sources", c.name, g.Key, len(g.Sources))
			}
			if got := g.Sources[0].Current; math.Abs(got-c.current) > 0.05*c.current {
				t.Errorf("%s %s: current %.5g A, want the simulated %g A within 5%%", c.name, g.Key, got, c.current)
			}
		}
		var warned string
		for _, w := range doc.Warnings {
			if strings.HasPrefix(w, log+": median |B|") {
				if warned != "" {
					t.Errorf("%s: two band warnings:\n%s\n%s", c.name, warned, w)
				}
				warned = w
			}
		}
		for _, want := range []string{"--unit bx=nT,by=nT,bz=nT", "--unit bx=" + c.unit + ",by=" + c.unit + ",bz=" + c.unit, "Earth's field taken off"} {
			if !strings.Contains(warned, want) {
				t.Errorf("%s: band warning %q lacks %q", c.name, warned, want)
			}
		}
	}
}

// The IGRF-14 dipole (dipoleEarthField) at Boulder, 40.137 N 254.763 E,
// is within earthMatch of the field the USGS observatory there measured:
// H 20826.85 nT and Z 46874.64 nT in the first reading of
// ../shared/data/iaga2002/BOU20200101vsec.sec (SOURCE.md). The refusal of
// a log in uT with an origin rests on this agreement.
func TestDipoleEarthFieldBoulder(t *testing.T) {
	h, z := dipoleEarthField(40.137, 254.763)
	const bh, bz = 20826.85, 46874.64
	if d := math.Hypot(h-bh, z-bz) / math.Hypot(bh, bz); d > earthMatch {
		t.Errorf("dipole at Boulder: H %.0f, Z %.0f nT; observatory H %.0f, Z %.0f nT: off by %.2f of the field, more than %g", h, z, bh, bz, d, earthMatch)
	}
	bou := &ingest.Geodetic{Lat: 40.137, Lon: 254.763}
	if !earthAt([3]float64{-86.74, bh, -bz}, bou) {
		t.Errorf("Boulder's own field (east, north, up) is not taken for the Earth's field at Boulder")
	}
	// The 674 nT background of TestLocateSurveyBackgroundRemoved read in
	// mG is no Earth's field there.
	if earthAt([3]float64{40000, -30000, 45000}, bou) {
		t.Errorf("a background read in mG is taken for the Earth's field at Boulder")
	}
}

// A walked survey in uT read as nT whose sensor turned with the walker
// (forward, right, down; each second traverse walked the other way, a yaw
// of 180 degrees, reversing forward and right) is refused with no origin
// to compare it with: its field keeps its size while its direction turns,
// which a background left by taking the Earth's field off does not. With
// --unit in uT it gives the nT log's currents. The same log in east,
// north, up with no origin cannot be told from such a background and is
// fitted with the warning naming both readings.
func TestLocateSurveyMicroteslaTurning(t *testing.T) {
	dir := t.TempDir()
	_, sc := scenario(t, "kestrel-moor-step.toml")
	nT := filepath.Join(dir, "survey.csv")
	mustCLI(t, "simulate", sc, "-o", nT)
	want := baseLocateDoc(t, nT)
	write := func(name string, turn bool) string {
		out := filepath.Join(dir, name)
		cols := map[string]int{}
		// Comments (the origin among them) are left out.
		rewriteLines(t, nT, out, func(k int, f []string) [][]string {
			if k == 0 {
				for i, h := range f {
					cols[h] = i
				}
				if turn {
					f = append(f, "roll", "pitch", "yaw")
				}
				return [][]string{f}
			}
			var n int
			fmt.Sscanf(f[cols["group"]], "T%d", &n)
			back := turn && n%2 == 0
			var v [3]float64
			for i, c := range []string{"bx", "by", "bz"} {
				x, err := strconv.ParseFloat(f[cols[c]], 64)
				if err != nil {
					t.Fatal(err)
				}
				v[i] = x * 1e-3
			}
			if turn {
				// The sensor's axes forward, right, down (calibrate's
				// body frame): at a yaw of 0 they are north, east,
				// down; at 180, south, west, down.
				sign := 1.0
				if back {
					sign = -1
				}
				v = [3]float64{sign * v[1], sign * v[0], -v[2]}
			}
			for i, c := range []string{"bx", "by", "bz"} {
				f[cols[c]] = strconv.FormatFloat(v[i], 'g', -1, 64)
			}
			if turn {
				yaw := "0"
				if back {
					yaw = "180"
				}
				f = append(f, "0", "0", yaw)
			}
			return [][]string{f}
		})
		return out
	}
	turned := write("turned-uT.csv", true)
	code, _, stderr := cli(t, "locate", "--frame", "sensor", "--group-by", "group", turned)
	if code != 1 || !strings.Contains(stderr, "turning in the sensor's axes") || !strings.Contains(stderr, "Refused: give their unit with --unit bx=uT,by=uT,bz=uT, or --unit bx=nT,by=nT,bz=nT") {
		t.Errorf("turned uT log: exit %d, stderr:\n%s\nwant it refused for its turning field", code, stderr)
	}
	got := baseLocateDoc(t, "--frame", "sensor", "--unit", "bx=uT,by=uT,bz=uT", turned)
	sameCurrents(t, "turned uT log with --unit", got, want, 1e-3)

	held := write("held-uT.csv", false)
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", held)
	if code != 0 || !strings.Contains(stdout+stderr, "--unit bx=uT,by=uT,bz=uT") || !strings.Contains(stdout+stderr, "Nothing in the log tells them apart") {
		t.Errorf("uT log in east, north, up with no origin: exit %d, output:\n%s%s\nwant it fitted with the two readings' warning", code, stdout, stderr)
	}
}
