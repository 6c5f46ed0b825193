package calibrate

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

func TestCoilFaraday(t *testing.T) {
	// DOMAIN.md (Calibration, verified): N = 1000, A = 1 cm², 50 Hz and a
	// 1 µT peak field give 3.14159e-5 V peak (air core).
	coil := Coil{Turns: 1000, Area: 1e-4}
	b, err := CoilToField([]float64{3.14159e-5}, coil, 50)
	if err != nil {
		t.Fatal(err)
	}
	// The published voltage has six significant figures.
	if math.Abs(b[0]-1000) > 1e-5*1000 {
		t.Errorf("field %.6f nT, want 1000", b[0])
	}
	// A core of apparent permeability 100 gives 100 times the voltage.
	b, _ = CoilToField([]float64{3.14159e-3}, Coil{Turns: 1000, Area: 1e-4, Mu: 100}, 50)
	if math.Abs(b[0]-1000) > 1e-2 {
		t.Errorf("with core: field %.6f nT, want 1000", b[0])
	}
	// Phasor: B = i V/(NAω): the field leads the voltage by 90 degrees.
	p, err := CoilPhasor(complex(3.14159e-5, 0), coil, 50)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(cmplx.Abs(p)-1000) > 1e-2 || math.Abs(cmplx.Phase(p)-math.Pi/2) > 1e-12 {
		t.Errorf("phasor %v, want 1000 nT at +90 degrees", p)
	}
	if _, err := CoilToField([]float64{1}, Coil{Turns: 0, Area: 1}, 50); err == nil {
		t.Error("zero turns: want an error")
	}
}

func ExampleCoilToField() {
	// A 1000-turn, 1 cm² air coil reads 31.4 µV peak at 50 Hz.
	b, err := CoilToField([]float64{31.4159e-6}, Coil{Turns: 1000, Area: 1e-4}, 50)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.1f nT peak\n", b[0])
	// Output: 1000.0 nT peak
}

func TestCoilWindows(t *testing.T) {
	// A coil log demodulated in volts, converted window by window: the same
	// DOMAIN.md check value (31.4159 µV peak ↔ 1 µT peak at 50 Hz), as RMS.
	ws := []Window{{Freq: 50, B: [3]complex128{complex(3.14159e-5/math.Sqrt2, 0)}, Sigma: [3]float64{1e-7}}}
	if err := CoilWindows(ws, Coil{Turns: 1000, Area: 1e-4}); err != nil {
		t.Fatal(err)
	}
	if got := cmplx.Abs(ws[0].B[0]) * math.Sqrt2; math.Abs(got-1000) > 1e-2 {
		t.Errorf("peak field %.4f nT, want 1000", got)
	}
	if math.Abs(ws[0].Sigma[0]-1e-7/3.14159e-5*1000) > 1e-3 {
		t.Errorf("sigma %.6f nT not scaled with the field", ws[0].Sigma[0])
	}
	if err := CoilWindows([]Window{{Freq: 0}}, Coil{Turns: 1, Area: 1}); err == nil {
		t.Error("zero frequency: want an error")
	}
}

// idealTable is a response table of the DOMAIN.md check coil (N = 1000,
// A = 1 cm², air core) written from the ideal law, in V per nT.
const idealTable = `# an air coil, 1000 turns of 1 cm²
frequency_hz,sensitivity_v_per_nt,phase_deg
10,6.283185307179586e-09,-90
1000,6.283185307179586e-07,-90
`

func TestCoilResponseIdeal(t *testing.T) {
	r, err := ReadCoilResponse(strings.NewReader(idealTable), "ideal.csv")
	if err != nil {
		t.Fatal(err)
	}
	coil := Coil{Turns: 1000, Area: 1e-4}
	// DOMAIN.md (Calibration, verified): 1 µT peak at 50 Hz gives
	// 3.14159e-5 V peak. The table holds 10 and 1000 Hz only: log-log
	// interpolation is exact for the ideal |H| ∝ f.
	h, err := r.Sensitivity(50)
	if err != nil {
		t.Fatal(err)
	}
	if v := cmplx.Abs(h) * 1e-6; math.Abs(v-3.14159e-5) > 1e-5*3.14159e-5 {
		t.Errorf("table: %.6g V peak for 1 µT peak at 50 Hz, want 3.14159e-5", v)
	}
	for _, f := range []float64{10, 16.7, 50, 60, 512, 1000} {
		got, err := r.Sensitivity(f)
		if err != nil {
			t.Fatal(err)
		}
		want, _ := coil.Sensitivity(f)
		if cmplx.Abs(got-want) > 1e-12*cmplx.Abs(want) {
			t.Errorf("%g Hz: table %v V/T, ideal law %v", f, got, want)
		}
	}
	// Converting windows with the table agrees with CoilWindows.
	ws := []Window{{Freq: 50, B: [3]complex128{complex(2e-5, 1e-5), complex(-3e-6, 0), complex(0, 4e-6)}, Sigma: [3]float64{1e-7, 2e-7, 3e-7}}}
	wt := append([]Window(nil), ws...)
	if err := CoilWindows(ws, coil); err != nil {
		t.Fatal(err)
	}
	if err := SensitivityWindows(wt, r); err != nil {
		t.Fatal(err)
	}
	for k := range 3 {
		if cmplx.Abs(ws[0].B[k]-wt[0].B[k]) > 1e-12*cmplx.Abs(ws[0].B[k]) || math.Abs(ws[0].Sigma[k]-wt[0].Sigma[k]) > 1e-12*ws[0].Sigma[k] {
			t.Errorf("axis %d: table gives %v ± %g nT, CoilWindows %v ± %g nT", k, wt[0].B[k], wt[0].Sigma[k], ws[0].B[k], ws[0].Sigma[k])
		}
	}
}

func TestCoilResponseTable(t *testing.T) {
	// Units by the column's name: 31.4159 V/T = 3.14159e-8 V/nT =
	// 3.14159e-5 mV/nT, the DOMAIN.md coil at 50 Hz.
	for col, v := range map[string]string{"sensitivity_v_per_t": "31.4159", "sensitivity_v_per_nt": "3.14159e-8", "sensitivity_mv_per_nt": "3.14159e-5"} {
		r, err := ReadCoilResponse(strings.NewReader("frequency_hz,"+col+",phase_deg\n50,"+v+",-90\n60,"+v+",-90\n"), "t.csv")
		if err != nil {
			t.Fatal(err)
		}
		if h, _ := r.Sensitivity(50); math.Abs(cmplx.Abs(h)-31.4159) > 1e-9 {
			t.Errorf("%s: %g V/T, want 31.4159", col, cmplx.Abs(h))
		}
	}
	// Phases wrapped at ±180° are unwrapped: 170° then -170° is a 20°
	// step, so half-way (in log f) lies 180°, not 0°.
	r, err := ReadCoilResponse(strings.NewReader("frequency_hz,sensitivity_v_per_t,phase_deg\n100,1,170\n400,4,-170\n"), "wrap.csv")
	if err != nil {
		t.Fatal(err)
	}
	h, err := r.Sensitivity(200)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(cmplx.Abs(h)-2) > 1e-12 || math.Abs(math.Abs(cmplx.Phase(h))-math.Pi) > 1e-9 {
		t.Errorf("200 Hz: |H| %g at %g°, want 2 at 180°", cmplx.Abs(h), cmplx.Phase(h)*180/math.Pi)
	}
	if _, err := r.Sensitivity(50); err == nil || !strings.Contains(err.Error(), "outside the table's 100-400 Hz") {
		t.Errorf("50 Hz outside the table: %v", err)
	}
	if err := SensitivityWindows([]Window{{Freq: 200}, {Freq: 500}}, r); err == nil || !strings.Contains(err.Error(), "window 1") {
		t.Errorf("a window outside the table: %v", err)
	}
	for name, c := range map[string]struct{ text, want string }{
		"empty":      {"", "empty"},
		"header":     {"f,s,p\n50,1,-90\n60,1,-90\n", "header"},
		"unit":       {"frequency_hz,sensitivity,phase_deg\n50,1,-90\n60,1,-90\n", "header"},
		"one row":    {"frequency_hz,sensitivity_v_per_t,phase_deg\n50,1,-90\n", "at least two"},
		"decreasing": {"frequency_hz,sensitivity_v_per_t,phase_deg\n60,1,-90\n50,1,-90\n", "t.csv:3: frequency 50 Hz after 60 Hz"},
		"negative":   {"frequency_hz,sensitivity_v_per_t,phase_deg\n50,-1,-90\n60,1,-90\n", "positive sensitivity"},
		"number":     {"frequency_hz,sensitivity_v_per_t,phase_deg\n50,1,-90\n60,x,-90\n", `sensitivity_v_per_t "x"`},
		"columns":    {"frequency_hz,sensitivity_v_per_t,phase_deg\n50,1\n", "2 values"},
	} {
		_, err := ReadCoilResponse(strings.NewReader(c.text), "t.csv")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one saying %q", name, err, c.want)
		}
	}
}

func ExampleReadCoilResponse() {
	// A coil whose response was measured at three frequencies; at 50 Hz it
	// is interpolated between the 10 and 100 Hz rows.
	table := `frequency_hz,sensitivity_mv_per_nt,phase_deg
10,0.0090,-88
100,0.0900,-90
1000,0.8500,-99
`
	r, err := ReadCoilResponse(strings.NewReader(table), "coil-response.csv")
	if err != nil {
		fmt.Println(err)
		return
	}
	h, _ := r.Sensitivity(50)
	fmt.Printf("%.4f mV/nT at %.1f degrees\n", cmplx.Abs(h)*1e-6, cmplx.Phase(h)*180/math.Pi)
	// Output: 0.0450 mV/nT at -89.4 degrees
}

// TestCoilResponseSpreadsheet: a table as a spreadsheet exports it, with a
// UTF-8 byte order mark (U+FEFF, EF BB BF; The Unicode Standard, 23.8) and
// semicolons between the fields, with decimal commas or points, reads as
// the same table with commas.
func TestCoilResponseSpreadsheet(t *testing.T) {
	want, err := ReadCoilResponse(strings.NewReader(idealTable), "ideal.csv")
	if err != nil {
		t.Fatal(err)
	}
	semi := strings.ReplaceAll(idealTable, ",", ";")
	for name, text := range map[string]string{
		"byte order mark":       "\xef\xbb\xbf" + idealTable,
		"semicolons":            semi,
		"mark and semicolons":   "\xef\xbb\xbf" + semi,
		"semicolons and commas": strings.ReplaceAll(strings.ReplaceAll(semi, "6.283185307179586e", "6,283185307179586e"), "-90", "-90,0"),
		"header after comments": "\xef\xbb\xbf# exported\n\n" + strings.TrimPrefix(semi, "# an air coil, 1000 turns of 1 cm²\n"),
	} {
		got, err := ReadCoilResponse(strings.NewReader(text), "sheet.csv")
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("%s: %v, want %v", name, got, want)
		}
	}
	// A comma table keeps the comma as the delimiter, so a decimal comma
	// there is a fourth field.
	if _, err := ReadCoilResponse(strings.NewReader("frequency_hz,sensitivity_v_per_t,phase_deg\n50,1,5,-90\n60,2,-90\n"), "t.csv"); err == nil || !strings.Contains(err.Error(), "4 values") {
		t.Errorf("a decimal comma in a comma table: %v", err)
	}
}

// TestCoilResponseMessages: counts take the singular, and a frequency
// outside the table is given to four digits, or as many more as tell it
// from the table's edge.
func TestCoilResponseMessages(t *testing.T) {
	_, err := ReadCoilResponse(strings.NewReader("frequency_hz,sensitivity_v_per_t,phase_deg\n50,1,-90\n"), "t.csv")
	if err == nil || !strings.Contains(err.Error(), "t.csv: one row: want at least two") {
		t.Errorf("one row: %v", err)
	}
	_, err = ReadCoilResponse(strings.NewReader("frequency_hz,sensitivity_v_per_t,phase_deg\n"), "t.csv")
	if err == nil || !strings.Contains(err.Error(), "t.csv: no rows") {
		t.Errorf("no rows: %v", err)
	}
	r := &CoilResponse{Freq: []float64{100, 400}, Sens: []float64{1, 4}, Phase: []float64{-90, -90}}
	for f, want := range map[float64]string{
		50.05080048416262: "50.05 Hz is outside the table's 100-400 Hz",
		99.99871:          "99.999 Hz is outside",
		400.0012:          "400.001 Hz is outside",
		12345.678:         "12350 Hz is outside",
	} {
		if _, err := r.Sensitivity(f); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%v Hz: %v, want %q", f, err, want)
		}
	}
}
