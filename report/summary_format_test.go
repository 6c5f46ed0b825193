package report

import (
	"bytes"
	"html"
	"strings"
	"testing"
)

// htmlText is the page as a reader sees its text: tags dropped, entities
// decoded.
func htmlText(t *testing.T, d *Document) string {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	var b strings.Builder
	in := false
	for _, r := range s {
		switch {
		case r == '<':
			in = true
		case r == '>':
			in = false
		case !in:
			b.WriteRune(r)
		}
	}
	return html.UnescapeString(b.String())
}

// TestSpan: a range is written with both ends to the same decimals, and as
// one value when the ends agree at that precision. The reviewed reports
// read "Depth ... 1.10 to 1.10 m" and "0.700 to 1.34 m".
func TestSpan(t *testing.T) {
	for _, tc := range []struct {
		lo, hi float64
		want   string
		one    bool
	}{
		{1.1, 1.1004, "1.10", true},
		{0.7, 1.34, "0.70 to 1.34", false},
		{1.65, 1.85, "1.65 to 1.85", false},
		{0.45, 0.62, "0.450 to 0.620", false},
		{9.96, 12.3, "10.0 to 12.3", false},
	} {
		got, one := span(tc.lo, tc.hi)
		if got != tc.want || one != tc.one {
			t.Errorf("span(%g, %g) = %q, %v; want %q, %v", tc.lo, tc.hi, got, one, tc.want, tc.one)
		}
	}
}

// TestWhereHasUnits: a local position names its unit ("E 59.9 N 4.5" did
// not).
func TestWhereHasUnits(t *testing.T) {
	if got, want := en([3]float64{59.94, 4.46, -1}), "E 59.9 m, N 4.5 m"; got != want {
		t.Errorf("en = %q, want %q", got, want)
	}
}

// TestSmallSigmasKeepTheirDigits: sigmas under a millimetre or a
// milliampere are written to two significant digits, never as "<0.001"
// (JCGM 100:2008, GUM section 7.2.6: quote a standard uncertainty to at
// most two significant digits, and the estimate to match; section 7.2.2
// writes (100.02147 ± 0.00035) g). The reviewed Kestrel Moor step had a
// trend of -0.000332 ± 0.0000133 A/m in its JSON, a 25-sigma decay, shown
// as "0.000 ± <0.001 A/m".
func TestSmallSigmasKeepTheirDigits(t *testing.T) {
	if got, want := valueText(Value{Name: "trend", Value: -0.000332, Sigma: 0.0000133, Unit: "A/m"}), "trend -0.000332 ± 0.000013 A/m"; got != want {
		t.Errorf("valueText = %q, want %q", got, want)
	}
	d, err := Build(Document{Site: "Harrow Fen substation"}, twoCables(false), &BuildSettings{Noise: 2})
	if err != nil {
		t.Fatal(err)
	}
	for i := range d.Groups {
		for j := range d.Groups[i].Sources {
			d.Groups[i].Sources[j].DepthSigma = 0.00027
		}
	}
	for i := range d.Route.Stations {
		d.Route.Stations[i].DepthSigma = 0.00027
	}
	page := htmlText(t, d)
	if strings.Contains(page, "<0.001") {
		t.Errorf("page writes a known sigma as a bound:\n%s", around(page, "<0.001"))
	}
	if want := "depth ± 0.00027 m"; !strings.Contains(page, want) {
		t.Errorf("page lacks %q:\n%s", want, around(page, "Fit uncertainty"))
	}
}

// around returns some text of page around the first s, for a failure
// message.
func around(page, s string) string {
	i := strings.Index(page, s)
	if i < 0 {
		return "(not found)"
	}
	return page[max(0, i-200):min(len(page), i+300)]
}

// TestSummaryDepthAndReturnConductor: the summary says in words that a
// further conductor carries its current the other way (as the
// two-conductors scenario's east feeder, testdata/scenarios/two-conductors.toml,
// -20 A beside 30 A), gives its depth, and writes a depth that is the same
// at every station once, not as "1.20 to 1.20 m".
func TestSummaryDepthAndReturnConductor(t *testing.T) {
	for _, back := range []bool{false, true} {
		fits := twoCables(true)
		for _, f := range fits {
			f.Result.Sources[0].Depth = 1.2
			if back {
				f.Result.Sources[1].Current = -f.Result.Sources[1].Current
			}
		}
		d, err := Build(Document{Site: "Harrow Fen substation"}, fits, &BuildSettings{Noise: 2})
		if err != nil {
			t.Fatal(err)
		}
		if len(d.Conductors) != 1 {
			t.Fatalf("%d further conductors, want 1", len(d.Conductors))
		}
		page := htmlText(t, d)
		if want := "Conductor 1: depth below the sensors is 1.20 m at every station."; !strings.Contains(page, want) {
			t.Errorf("page lacks %q:\n%s", want, around(page, "depth below"))
		}
		if strings.Contains(page, "1.20 to 1.20") {
			t.Error("page writes a constant depth as a range")
		}
		line := trackHeadline(d, &d.Conductors[0])
		opp := strings.Contains(line, "flowing the opposite way to conductor 1")
		same := strings.Contains(line, "flowing the same way as conductor 1")
		if opp != back || same == back {
			t.Errorf("reversed %v: %s", back, line)
		}
		if !strings.Contains(line, "; depth below the sensors 1.") || !strings.Contains(line, " m.") {
			t.Errorf("no depth for conductor 2: %s", line)
		}
		if !strings.Contains(page, line) {
			t.Errorf("page lacks the headline %q", line)
		}
	}
}
