package report

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"
)

// TestHTML checks the crew report as a reader would get it: the cautions
// verbatim, plots as inline SVG, nothing fetched from anywhere. Set
// UNDERCURRENT_HTML_OUT to a file name to keep the page for a look in a
// browser.
func TestHTML(t *testing.T) {
	for _, geo := range []bool{false, true} {
		d := fenwickLane(geo)
		var buf bytes.Buffer
		if err := WriteHTML(&buf, d); err != nil {
			t.Fatal(err)
		}
		page := buf.String()
		if out := os.Getenv("UNDERCURRENT_HTML_OUT"); out != "" && geo {
			if err := os.WriteFile(out, buf.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		for _, c := range Cautions {
			if !strings.Contains(page, c) {
				t.Errorf("page lacks the caution %q", c)
			}
		}
		// Plan view, current, depth and MaxProfilePlots profiles, each
		// drawn wide and narrow (figure).
		if n := strings.Count(page, "<svg"); n != 2*(3+MaxProfilePlots) {
			t.Errorf("page has %d <svg> elements, want %d", n, 2*(3+MaxProfilePlots))
		}
		if strings.Contains(page, "<?xml") {
			t.Error("page has an XML prolog inside the HTML")
		}
		for _, bad := range []string{"<script", "<link", "<img", "@import", "url("} {
			if strings.Contains(page, bad) {
				t.Errorf("page contains %q: it must be self-contained", bad)
			}
		}
		// Only the SVG namespace may look like a URL.
		for _, u := range regexp.MustCompile(`https?://[^"' )]+`).FindAllString(page, -1) {
			if u != "http://www.w3.org/2000/svg" && u != "http://www.w3.org/1999/xlink" {
				t.Errorf("page refers to %s", u)
			}
		}
		for _, want := range []string{
			"Fenwick Lane cable route", "Harrow Fen substation",
			"hard iron (12.1, -8.4, 30.2) nT removed", // calibration applied
			"diurnal departure removed",               // base station
			"NEC Table 300.5",                         // minimum cover named
			"current leaving the conductor",           // the step finding
			"T07", "T08",
			"minimum cover 0.60 m", // line on the depth plot
		} {
			if !strings.Contains(page, want) {
				t.Errorf("page lacks %q", want)
			}
		}
		if geo && !strings.Contains(page, "52.4719") {
			t.Error("geo-referenced page lacks the origin")
		}
	}
}

// A single ungrouped fit has no route: the page still says what was found
// and plots the plan view and the one profile.
func TestHTMLSingleGroup(t *testing.T) {
	full := fenwickLane(false)
	g := full.Groups[0]
	g.Key, g.Chainage = "", nil
	d := &Document{SchemaVersion: SchemaVersion, Tool: full.Tool, Frame: Frame{Kind: FrameLocalENU},
		DepthReference: DepthReference{Kind: DepthBelowSensors}, Signal: Signal{Mode: SignalDC}, Groups: []Group{g}}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	if n := strings.Count(page, "<svg"); n != 4 {
		t.Errorf("page has %d <svg> elements, want 4 (plan and profile, each wide and narrow)", n)
	}
	if !strings.Contains(page, "Conductor 1: 83.73 ± 0.60 A") || !strings.Contains(page, "No findings") {
		t.Errorf("summary does not state the conductor:\n%s", page[strings.Index(page, "<h2>Summary"):][:600])
	}
}

func TestFitNotes(t *testing.T) {
	d := fenwickLane(false)
	d.Groups[0].Notes = []string{"robust weights applied"}
	d.Groups[2].Notes = []string{"robust weights applied"}
	d.Groups[5].Sources[0].Notes = []string{"dip held at 0.0 deg"}
	got := fitNotes(d)
	want := []string{"robust weights applied (2 groups: T01, T03)", "dip held at 0.0 deg (1 group: T06)"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("notes %q, want %q", got, want)
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "<li>robust weights applied (2 groups: T01, T03)</li>") {
		t.Error("page lacks the fit notes")
	}
}

func TestWriteFiles(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out", "fenwick")
	d := fenwickLane(true)
	if err := WriteFiles(dir, d); err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{FileJSON, FileCSV, FileGeoJSON, FileHTML} {
		st, err := os.Stat(filepath.Join(dir, name))
		if err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", name, err)
		}
	}
	f, err := os.Open(filepath.Join(dir, FileJSON))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	back, err := ReadJSON(f, FileJSON)
	if err != nil || !reflect.DeepEqual(back, profilesRounded(d)) {
		t.Errorf("results.json does not read back: %v", err)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 5 {
		t.Errorf("%d entries in the output directory, want 5 (no temporary files left)", len(entries))
	}
}

// An invalid document leaves no directory behind.
func TestWriteFilesInvalid(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "never")
	d := fenwickLane(false)
	d.Groups[3].RMS = math.NaN()
	err := WriteFiles(dir, d)
	if err == nil || !strings.Contains(err.Error(), `groups[3] (key "T04").rms_nt is NaN`) {
		t.Errorf("error %v", err)
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Errorf("output directory exists after a failed write: %v", err)
	}
}

func TestWriteFilesNotADirectory(t *testing.T) {
	path := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(path, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := WriteFiles(path, fenwickLane(false)); err == nil || !strings.Contains(err.Error(), "not a directory") {
		t.Errorf("error %v", err)
	}
}

// TestHTMLGroundSigma: the crew report's summary gives the least cover with the ground
// level's uncertainty in quadrature (in LeastCover's sentence), and says what the
// cover sigmas include.
func TestHTMLGroundSigma(t *testing.T) {
	for _, tc := range []struct {
		ground      float64
		cover, says string
	}{
		{0, ": 0.545 ± 0.012 m, conductor 1 at", "the fitted depth uncertainties only, which cover the reading noise"},
		// The fixture's shallowest station has a depth sigma of 0.012 m:
		// hypot(0.012, 0.05) = 0.0514, printed to two significant digits.
		{0.05, ": 0.545 ± 0.051 m, conductor 1 at", "combined with 0.050 m (one sigma) for the ground level"},
	} {
		d := fenwickLane(false)
		d.DepthReference.GroundSigma = tc.ground
		var b bytes.Buffer
		if err := WriteHTML(&b, d); err != nil {
			t.Fatal(err)
		}
		for _, want := range []string{tc.cover, tc.says} {
			if !strings.Contains(b.String(), want) {
				t.Errorf("ground sigma %g: the report does not say %q", tc.ground, want)
			}
		}
	}
}

// The settings list says each option of the run once, in words: the
// minimum cover, its code, the AC window and the sensor height are in
// their own rows above it, not repeated as the flags' names.
func TestHTMLSettingsOnce(t *testing.T) {
	d := fenwickLane(false)
	d.Settings = map[string]string{
		"min-cover": "0.6", "cover-code": "NEC Table 300.5", "sensor-height": "0.3", "freq": "50", "window": "0.1",
		"group-by": "traverse", "count": "auto", "robust": "true",
	}
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	i := strings.Index(page, "<h2>Data, corrections and settings</h2>")
	j := strings.Index(page[max(i, 0):], "</dl>")
	if i < 0 || j < 0 {
		t.Fatal("page lacks the settings list")
	}
	list := page[i : i+j]
	for _, bad := range []string{"<dt>min-cover", "<dt>cover-code", "<dt>sensor-height", "<dt>freq", "<dt>window", "<dt>group-by", "<dt>count", "<dt>robust"} {
		if strings.Contains(list, bad) {
			t.Errorf("settings list shows the raw flag %q:\n%s", bad[4:], list)
		}
	}
	if n := strings.Count(list, "NEC Table 300.5"); n != 1 {
		t.Errorf("the cover code appears %d times in the settings list, want once:\n%s", n, list)
	}
	for _, want := range []string{
		"<dt>Minimum cover</dt><dd>0.60 m (NEC Table 300.5)</dd>",
		"<dt>Groups fitted separately, by column</dt><dd>traverse</dd>",
		"<dt>Conductors per group</dt><dd>auto</dd>",
		"<dt>Outlying readings down-weighted</dt><dd>yes</dd>",
	} {
		if !strings.Contains(list, want) {
			t.Errorf("settings list lacks %q:\n%s", want, list)
		}
	}
}
