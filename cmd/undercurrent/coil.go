package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/report"
)

// Induction-coil logs for locate: the field columns hold the voltages of
// three induction coils (one per axis, alike), which locate demodulates
// like a magnetometer's field and then converts window by window to field,
// each at its own frequency, before the fit (calibrate.CoilWindows for the
// ideal law, calibrate.SensitivityWindows for a measured response). A coil
// senses only a changing field, so it needs --freq; the Earth-field check
// of the readings' magnitude does not apply to volts, and a log whose
// columns hold a large steady value draws a warning instead
// (coilSteadyWarning).

// coilFlags are locate's induction-coil options.
type coilFlags struct {
	spec     string // --coil
	response string // --coil-response

	// Set by check.
	ideal *calibrate.Coil // the ideal law, from --coil
	// Set by check (takeUnits): volts per unit of each field column, and
	// the units' names.
	scale [3]float64
	unit  [3]string

	// Set by load.
	table *calibrate.CoilResponse
}

func (c *coilFlags) add(fs *pflag.FlagSet) {
	fs.StringVar(&c.spec, "coil", "", "the field columns hold the voltages of induction coils (one per axis, alike) following Faraday's law V = -N A μ dB/dt: `turns=N,area=A[,mu=M]` (area the mean turn area in m², mu the core's apparent relative permeability, default 1); needs --freq; the columns are read in volts unless --unit says bx=mV,by=mV,bz=mV (V, mV, uV or nV)")
	fs.StringVar(&c.response, "coil-response", "", "as --coil, for coils with a measured response: the CSV table `FILE` with the header frequency_hz,sensitivity_v_per_nt,phase_deg (or sensitivity_v_per_t, sensitivity_mv_per_nt), phase_deg how far the voltage leads the field (-90 for the ideal law); interpolated at each window's frequency")
}

// on reports whether a coil was given.
func (c *coilFlags) on() bool { return c.spec != "" || c.response != "" }

// check parses --coil, refuses what a coil log cannot take (a DC fit, a
// magnetometer calibration, a base-station correction) and takes the
// field columns' voltage units out of the input flags (takeUnits).
func (c *coilFlags) check(o *locateOptions) error {
	c.ideal, c.table = nil, nil
	c.scale, c.unit = [3]float64{1, 1, 1}, [3]string{"V", "V", "V"}
	if !c.on() {
		return nil
	}
	flag := "--coil"
	if c.spec == "" {
		flag = "--coil-response"
	}
	switch {
	case c.spec != "" && c.response != "":
		return usageErrorf("give --coil (the ideal law) or --coil-response (a measured response), not both")
	case o.freq == 0:
		return usageErrorf("%s: an induction coil senses only a changing field, so a coil log has no DC field to fit: give the AC frequency with --freq", flag)
	case o.calibration != "":
		return usageErrorf("%s and --calibration: a calibration from \"undercurrent calibrate\" corrects a magnetometer's offsets and scales against the Earth's field, which a coil does not sense; the coil's own response is --coil or --coil-response", flag)
	case o.base != "":
		return usageErrorf("%s and --base: the base-station correction removes the slow daily change of the Earth's field, which a coil does not sense (and an AC field is immune to it); leave out --base", flag)
	}
	if c.spec != "" {
		coil, err := parseCoilSpec(c.spec)
		if err != nil {
			return err
		}
		c.ideal = &coil
	}
	return c.takeUnits(&o.read)
}

// parseCoilSpec parses --coil turns=N,area=A[,mu=M].
func parseCoilSpec(spec string) (calibrate.Coil, error) {
	var coil calibrate.Coil
	seen := map[string]bool{}
	for _, p := range strings.Split(spec, ",") {
		k, v, ok := strings.Cut(p, "=")
		k = strings.ToLower(strings.TrimSpace(k))
		if !ok || k == "" {
			return coil, usageErrorf("--coil %q: %q is not KEY=VALUE (want turns=N,area=A[,mu=M], area in m²)", spec, strings.TrimSpace(p))
		}
		var dst *float64
		switch k {
		case "turns":
			dst = &coil.Turns
		case "area":
			dst = &coil.Area
		case "mu":
			dst = &coil.Mu
		default:
			return coil, usageErrorf("--coil %q: unknown key %q (want turns, area in m² and optionally mu)", spec, k)
		}
		if seen[k] {
			return coil, usageErrorf("--coil %q: %s given twice", spec, k)
		}
		seen[k] = true
		x, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
		if err != nil {
			return coil, usageErrorf("--coil %q: %s=%q is not a number", spec, k, strings.TrimSpace(v))
		}
		if !(x > 0) || math.IsInf(x, 0) {
			return coil, usageErrorf("--coil %q: %s=%s: want a positive number", spec, k, strings.TrimSpace(v))
		}
		*dst = x
	}
	for _, k := range []string{"turns", "area"} {
		if !seen[k] {
			return coil, usageErrorf("--coil %q: no %s= (want turns=N,area=A[,mu=M], area in m²)", spec, k)
		}
	}
	return coil, nil
}

// voltScale returns the volts in one unit u of a coil's output (V, mV,
// uV, µV, nV; lower case too), and false for anything else.
func voltScale(u string) (float64, bool) {
	switch strings.TrimSpace(u) {
	case "V", "v":
		return 1, true
	case "mV", "mv":
		return 1e-3, true
	case "uV", "uv", "µV", "μV":
		return 1e-6, true
	case "nV", "nv":
		return 1e-9, true
	}
	return 0, false
}

// fieldAxis returns 0, 1 or 2 for the canonical field columns bx, by, bz,
// and -1 for any other name.
func fieldAxis(name string) int {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case ingest.ColBx:
		return 0
	case ingest.ColBy:
		return 1
	case ingest.ColBz:
		return 2
	}
	return -1
}

// takeUnits takes the field columns' units out of --unit (ingest knows no
// volts; locate scales the columns itself, and reads them in the unit they
// are written in, see readOptions) and sets the volts per unit of each. A
// field column without a --unit takes the unit suffix of the name --column
// maps it to ("bx=Bx_mV"), else volts. A field unit (nT ...) for a coil's
// column is refused.
func (c *coilFlags) takeUnits(rf *readFlags) error {
	given := [3]bool{}
	var keep []string
	for _, entry := range append(append([]string(nil), rf.units...), rf.unitsOld...) {
		for _, p := range strings.Split(entry, ",") {
			k, v, _ := strings.Cut(p, "=")
			ax := fieldAxis(k)
			if ax < 0 {
				keep = append(keep, p)
				continue
			}
			s, ok := voltScale(v)
			if !ok {
				return usageErrorf("--unit %s: with a coil (--coil or --coil-response) the field columns hold the coils' voltages: give their unit as V, mV, uV or nV", strings.TrimSpace(p))
			}
			c.scale[ax], c.unit[ax], given[ax] = s, strings.TrimSpace(v), true
		}
	}
	rf.units, rf.unitsOld = keep, nil
	for _, entry := range append(append([]string(nil), rf.columns...), rf.columnsOld...) {
		for _, p := range strings.Split(entry, ",") {
			k, name, _ := strings.Cut(p, "=")
			ax := fieldAxis(k)
			if ax < 0 || given[ax] {
				continue
			}
			u := unitSuffix(name)
			// In a name only the proper spelling counts ("bx_v" may be
			// anything).
			if s, ok := voltScale(u); ok && strings.HasSuffix(u, "V") {
				c.scale[ax], c.unit[ax] = s, u
				continue
			}
			if magneticUnits[u] {
				return usageErrorf("--column %s: the column's name says %s, but with a coil (--coil or --coil-response) the field columns hold the coils' voltages; if they really are volts, give their unit with --unit %s=V (or mV, uV, nV)", strings.TrimSpace(p), u, strings.ToLower(strings.TrimSpace(k)))
			}
		}
	}
	return nil
}

// magneticUnits are the field units a column name may end in, as ingest
// reads them.
var magneticUnits = map[string]bool{"nT": true, "pT": true, "uT": true, "µT": true, "μT": true, "mT": true, "T": true, "G": true, "mG": true}

// unitSuffix returns the unit suffix of a column name, as ingest splits
// it: "Bx_mV", "Bx mV", "Bx (mV)", "Bx[mV]" give "mV"; "" when none.
func unitSuffix(name string) string {
	n := strings.TrimSpace(name)
	if strings.HasSuffix(n, ")") || strings.HasSuffix(n, "]") {
		open := "("
		if n[len(n)-1] == ']' {
			open = "["
		}
		if i := strings.LastIndex(n, open); i > 0 {
			return strings.TrimSpace(n[i+1 : len(n)-1])
		}
	}
	if i := strings.LastIndexAny(n, "_ "); i > 0 {
		return n[i+1:]
	}
	return ""
}

// readOptions are the ingest options a coil log adds: its field columns
// read as the numbers written (whatever a name's suffix says; locate
// scales them to volts, toVolts).
func (c *coilFlags) readOptions() []ingest.Option {
	if !c.on() {
		return nil
	}
	return []ingest.Option{ingest.WithUnits(ingest.ColBx+"=nT", ingest.ColBy+"=nT", ingest.ColBz+"=nT")}
}

// load reads the response table of --coil-response and records the coil
// in the document (as its calibration: what turned the readings into
// field).
func (c *coilFlags) load(doc *report.Document) error {
	if c.response != "" {
		t, err := calibrate.LoadCoilResponse(c.response)
		if err != nil {
			return err
		}
		c.table = t
		doc.Inputs = append(doc.Inputs, fileInput("coil-response", c.response, 0))
	}
	return nil
}

// sensitivity is the coil's response model.
func (c *coilFlags) sensitivity() calibrate.CoilSensitivity {
	if c.ideal != nil {
		return *c.ideal
	}
	return c.table
}

// toVolts scales the field columns of s to volts.
func (c *coilFlags) toVolts(s *ingest.Samples) {
	for k, col := range [][]float64{s.Bx, s.By, s.Bz} {
		if c.scale[k] == 1 {
			continue
		}
		for i := range col {
			col[i] *= c.scale[k]
		}
	}
}

// convert turns demodulated windows of coil voltages into field, each
// window at its own frequency.
func (c *coilFlags) convert(ws []calibrate.Window) error {
	if c.ideal != nil {
		return calibrate.CoilWindows(ws, *c.ideal)
	}
	return calibrate.SensitivityWindows(ws, c.table)
}

// unitsText words the field columns' units: "mV", or per axis when they
// differ.
func (c *coilFlags) unitsText() string {
	if c.unit[0] == c.unit[1] && c.unit[1] == c.unit[2] {
		return c.unit[0]
	}
	return fmt.Sprintf("bx %s, by %s, bz %s", c.unit[0], c.unit[1], c.unit[2])
}

// summary says in one line, for the report, what the coil was and what
// was done with it; freq is the demodulation frequency.
func (c *coilFlags) summary(freq float64) string {
	at := ""
	if h, err := c.sensitivity().Sensitivity(freq); err == nil {
		at = fmt.Sprintf("; at %g Hz the coil gives %.4g V/T (%.4g mV/nT), the voltage's phase %.1f° from the field's", freq, cmplx.Abs(h), cmplx.Abs(h)*1e-6, cmplx.Phase(h)*180/math.Pi)
	}
	if c.ideal != nil {
		mu := c.ideal.Mu
		if mu == 0 {
			mu = 1
		}
		return fmt.Sprintf("induction coil (--coil %s): %g turns of mean area %g m², core permeability %g; the field columns' voltages (%s) were demodulated and each window converted to field at its own frequency by Faraday's law, B = i V/(N A μ ω)%s",
			c.spec, c.ideal.Turns, c.ideal.Area, mu, c.unitsText(), at)
	}
	t := c.table
	return fmt.Sprintf("induction coil with the measured response in %s (%d frequencies, %g-%g Hz): the field columns' voltages (%s) were demodulated and each window converted to field at its own frequency, B = V/H, with the response H interpolated there%s",
		c.response, len(t.Freq), t.Freq[0], t.Freq[len(t.Freq)-1], c.unitsText(), at)
}

// coilSteadyRatio is how many times its variation the steady part of a
// coil log's field columns may be before locate warns. A coil's output has
// no steady part beyond its amplifier's offset, small beside the signal
// near a conductor; a magnetometer log read as a coil's has the Earth's
// field, 22000-67000 nT, against variations of tens to thousands of nT.
const coilSteadyRatio = 20

// coilSteadyWarning returns a warning when the field columns of a coil log
// (in volts) hold a steady value over coilSteadyRatio times their
// variation about it (the root mean square of the departures from the
// columns' medians), as a magnetometer log given as a coil's does; ""
// otherwise.
func coilSteadyWarning(path string, s *ingest.Samples) string {
	var med [3]float64
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	for k, col := range cols {
		v := make([]float64, 0, len(col))
		for _, x := range col {
			if !math.IsNaN(x) {
				v = append(v, x)
			}
		}
		if len(v) == 0 {
			return ""
		}
		sort.Float64s(v)
		med[k] = v[len(v)/2]
	}
	var ss float64
	n := 0
	for i := range s.Len() {
		d0, d1, d2 := s.Bx[i]-med[0], s.By[i]-med[1], s.Bz[i]-med[2]
		if d := d0*d0 + d1*d1 + d2*d2; !math.IsNaN(d) {
			ss += d
			n++
		}
	}
	steady := math.Sqrt(med[0]*med[0] + med[1]*med[1] + med[2]*med[2])
	if n == 0 {
		return ""
	}
	rms := math.Sqrt(ss / float64(n))
	if !(steady > coilSteadyRatio*rms) {
		return ""
	}
	return fmt.Sprintf("%s: the field columns hold a steady %.4g V (their medians) against a variation of %.3g V about it: a coil's output has no steady part (a coil senses only a changing field), so this looks like a magnetometer's log, whose field is not in volts; if it is, leave out --coil and --coil-response (an amplifier's offset this large is possible but unusual)",
		path, steady, rms)
}
