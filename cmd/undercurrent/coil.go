package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"math/cmplx"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
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
// (coilSteadyWarning). A log that gives its field columns a field unit
// itself is refused (checkLog), and after the conversion the field is
// checked for a unit or a coil constant gone wrong (fieldCheck).

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
	// mapped: the field column's source was named with --column.
	mapped [3]bool
	// declared: the field column's unit was given, by --unit or by the
	// name --column maps it to.
	declared [3]bool

	// Set by load.
	table *calibrate.CoilResponse
}

func (c *coilFlags) add(fs *pflag.FlagSet) {
	fs.StringVar(&c.spec, "coil", "", "the field columns hold the voltages of induction coils (one per axis, alike) following Faraday's law V = -N A μ dB/dt: `turns=N,area=A[,mu=M]` (area the mean turn area in m², mu the core's apparent relative permeability, default 1); needs --freq; the columns are read in volts unless --unit says bx=mV,by=mV,bz=mV (V, mV, uV or nV, one unit for all three)")
	fs.StringVar(&c.response, "coil-response", "", "as --coil, for coils with a measured response: the CSV table `FILE` with the header frequency_hz,sensitivity_v_per_nt,phase_deg (or sensitivity_v_per_t, sensitivity_mv_per_nt), phase_deg how far the voltage leads the field (-90 for the ideal law), commas or semicolons between the fields; interpolated at each window's frequency, and it must cover --freq")
}

// on reports whether a coil was given.
func (c *coilFlags) on() bool { return c.spec != "" || c.response != "" }

// check parses --coil, refuses what a coil log cannot take (a DC fit, a
// magnetometer calibration, a base-station correction) and takes the
// field columns' voltage units out of the input flags (takeUnits).
func (c *coilFlags) check(o *locateOptions) error {
	c.ideal, c.table = nil, nil
	c.scale, c.unit = [3]float64{1, 1, 1}, [3]string{"V", "V", "V"}
	c.mapped, c.declared = [3]bool{}, [3]bool{}
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
	case o.calibration != "" || len(o.calPerLog) > 0:
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
	named := [3]string{} // the --column entry that gave an axis its unit
	for _, entry := range append(append([]string(nil), rf.columns...), rf.columnsOld...) {
		for _, p := range strings.Split(entry, ",") {
			k, name, _ := strings.Cut(p, "=")
			ax := fieldAxis(k)
			if ax < 0 {
				continue
			}
			c.mapped[ax] = true
			if given[ax] {
				continue
			}
			u := unitSuffix(name)
			// In a name only the proper spelling counts ("bx_v" may be
			// anything).
			if s, ok := voltScale(u); ok && strings.HasSuffix(u, "V") {
				c.scale[ax], c.unit[ax], named[ax] = s, u, strings.TrimSpace(p)
				continue
			}
			if magneticUnits[u] {
				return usageErrorf("--column %s: the column's name says %s, but with a coil (--coil or --coil-response) the field columns hold the coils' voltages; if they really are volts, give their unit with --unit %s=V (or mV, uV, nV)", strings.TrimSpace(p), u, strings.ToLower(strings.TrimSpace(k)))
			}
		}
	}
	for ax := range 3 {
		c.declared[ax] = given[ax] || named[ax] != ""
	}
	// The three coils are alike and logged alike: one voltage unit for
	// the three columns. A unit given for one or two of them leaves the
	// others in volts, which is almost always a unit forgotten.
	if c.scale[0] != c.scale[1] || c.scale[1] != c.scale[2] {
		flag, eg := "--column", "mV"
		var parts []string
		for ax, name := range []string{"bx", "by", "bz"} {
			switch {
			case given[ax]:
				flag, eg = "--unit", c.unit[ax]
				parts = append(parts, fmt.Sprintf("%s in %s (--unit)", name, c.unit[ax]))
			case named[ax] != "":
				eg = c.unit[ax]
				parts = append(parts, fmt.Sprintf("%s in %s (--column %s)", name, c.unit[ax], named[ax]))
			default:
				parts = append(parts, name+" in V (no unit given)")
			}
		}
		return usageErrorf("%s: with a coil (--coil or --coil-response) the three field columns hold the voltages of alike coils in one unit, but they would be read in different units: %s; give all three the same unit, as --unit bx=%s,by=%s,bz=%s",
			flag, strings.Join(parts, ", "), eg, eg, eg)
	}
	return nil
}

// magneticUnits are the field units a column name may end in, as ingest
// reads them.
var magneticUnits = map[string]bool{"nT": true, "pT": true, "uT": true, "µT": true, "μT": true, "mT": true, "T": true, "G": true, "mG": true}

// unitSuffix returns the unit suffix of a column name, as ingest splits
// it (ingest.SplitUnit): "Bx_mV", "Bx mV", "Bx (mV)", "Bx[mV]" give "mV";
// "" when none.
func unitSuffix(name string) string {
	_, u := ingest.SplitUnit(name)
	return u
}

// checkLog refuses a coil log that gives its own field columns a
// magnetic unit, for the field columns whose voltage unit was not given
// (by --unit, or by a volt suffix in the name --column maps them to); opts
// are the options the log is read with. A log says so in three ways:
//
//   - an IAGA-2002 file, whose field is nT by the format's definition;
//   - an Arrow IPC or Parquet file in ingest's canonical form, as
//     undercurrent convert and simulate write it: its schema metadata
//     carries ingest.MetaFrame, and its bx, by, bz columns are nT by that
//     form's definition (ingest's package documentation);
//   - a field column found by its name, without --column, whose name ends
//     in a field unit ("Bx_nT", "Bx (uT)"), which ingest reads as that
//     unit and locate would read as volts.
//
// The first two are seen from the file's first bytes and its schema; the
// third by opening the log with the mapping bx=bx (ingest finds a column
// by its name, else the field column it found carries a unit suffix: the
// only suffixes by which ingest takes a column for bx are field units).
// Errors opening the log are left to the reading that follows.
func (c *coilFlags) checkLog(path string, opts []ingest.Option) error {
	var open []int // the axes to check
	for ax := range 3 {
		if !c.declared[ax] && !c.mapped[ax] {
			open = append(open, ax)
		}
	}
	if len(open) == 0 {
		return nil
	}
	const advice = "with a coil (--coil or --coil-response) the field columns hold the coils' voltages; if this log's really are volts, give their unit with --unit bx=V,by=V,bz=V (or mV, uV, nV)"
	format, meta := logSchema(path)
	switch format {
	case ingest.FormatIAGA:
		return usageErrorf("%s: an IAGA-2002 file holds a magnetometer's field in nT (the format says so), not a coil's voltages: leave out --coil and --coil-response; %s", path, advice)
	case ingest.FormatArrowFile, ingest.FormatArrowStream, ingest.FormatParquet:
		if _, ok := meta[ingest.MetaFrame]; ok {
			return usageErrorf("%s: the file's metadata (%s) says it is in undercurrent's canonical form, as undercurrent convert and simulate write it, whose field columns bx, by, bz are in nT: it holds a magnetometer's field, not a coil's voltages; %s", path, ingest.MetaFrame, advice)
		}
	}
	// Positions given as WGS84 with --origin mean would be read through
	// to find the origin: a fixed one spares that.
	probe := append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))
	r, err := ingest.Open(path, probe...)
	if err != nil {
		return nil
	}
	r.Release()
	for _, ax := range open {
		name := []string{ingest.ColBx, ingest.ColBy, ingest.ColBz}[ax]
		r, err := ingest.Open(path, append(probe, ingest.WithColumns(name+"="+name))...)
		if err == nil {
			r.Release()
			continue
		}
		// The name and its unit, from ingest's mapping (which reads the
		// log through; this is the way to a refusal).
		col, unit := "", ""
		if in, err := ingest.Inspect(path, probe...); err == nil {
			for _, m := range in.Columns {
				if m.Column == name {
					col, unit = m.Source, unitSuffix(m.Source)
				}
			}
		}
		if col == "" {
			return usageErrorf("%s: the log's %s column is named with a field unit (as %s_nT): it holds a magnetometer's field, not a coil's voltages; %s", path, name, name, advice)
		}
		return usageErrorf("%s: the column %s (read as %s) is named in %s, a field unit: it holds a magnetometer's field, not a coil's voltages; %s", path, col, name, unit, advice)
	}
	return nil
}

// logSchema returns the format of the log at path, as ingest detects it
// from the first bytes, and for an Arrow IPC or Parquet file its schema
// metadata (nil when it cannot be read: the reading that follows reports
// that).
func logSchema(path string) (format ingest.Format, meta map[string]string) {
	f, err := os.Open(path)
	if err != nil {
		return "", nil
	}
	defer f.Close()
	head := make([]byte, 4096)
	n, _ := io.ReadFull(f, head)
	format = ingest.DetectFormat(head[:n])
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return format, nil
	}
	defer func() {
		// The Arrow and Parquet libraries may panic on a corrupt file.
		if recover() != nil {
			meta = nil
		}
	}()
	var sc *arrow.Schema
	switch format {
	case ingest.FormatArrowFile:
		r, err := ipc.NewFileReader(f)
		if err != nil {
			return format, nil
		}
		defer r.Close()
		sc = r.Schema()
	case ingest.FormatArrowStream:
		r, err := ipc.NewReader(f)
		if err != nil {
			return format, nil
		}
		defer r.Release()
		sc = r.Schema()
	case ingest.FormatParquet:
		pf, err := file.NewParquetReader(f)
		if err != nil {
			return format, nil
		}
		defer pf.Close()
		fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
		if err != nil {
			return format, nil
		}
		if sc, err = fr.Schema(); err != nil {
			return format, nil
		}
	default:
		return format, nil
	}
	meta = map[string]string{}
	md := sc.Metadata()
	for i, k := range md.Keys() {
		meta[k] = md.Values()[i]
	}
	return format, meta
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

// load reads the response table of --coil-response, refuses one that does
// not cover the survey frequency freq (--freq) before any log is read, and
// records the table among the document's inputs.
func (c *coilFlags) load(doc *report.Document, freq float64) error {
	if c.response == "" {
		return nil
	}
	t, err := calibrate.LoadCoilResponse(c.response)
	if err != nil {
		msg := strings.TrimPrefix(err.Error(), "calibrate: ")
		msg = strings.TrimPrefix(msg, "coil response ")
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("%s: cannot read: no such file (--coil-response, the coil's response table: frequency_hz,sensitivity_v_per_nt,phase_deg)", c.response)
		}
		if !strings.HasPrefix(msg, c.response) {
			msg = c.response + ": " + msg
		}
		return fmt.Errorf("--coil-response %s", msg)
	}
	lo, hi := t.Freq[0], t.Freq[len(t.Freq)-1]
	if freq > 0 && (freq < lo || freq > hi) {
		return usageErrorf("--coil-response %s: the table covers %g-%g Hz, which does not reach the survey frequency --freq %g Hz, and the response is not extrapolated: add rows around %g Hz (a row on each side of it, with room for the frequency's drift), or check --freq", c.response, lo, hi, freq, freq)
	}
	c.table = t
	doc.Inputs = append(doc.Inputs, fileInput("coil-response", c.response, 0))
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
// window at its own frequency. path is the log, for messages. A window
// whose frequency (estimated from the log) falls outside a response table
// is refused here, worded for the command line.
func (c *coilFlags) convert(path string, ws []calibrate.Window) error {
	if c.ideal != nil {
		if err := calibrate.CoilWindows(ws, *c.ideal); err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		return nil
	}
	t := c.table
	lo, hi := t.Freq[0], t.Freq[len(t.Freq)-1]
	for _, w := range ws {
		if w.Freq >= lo && w.Freq <= hi {
			continue
		}
		side, edge := "below", lo
		if w.Freq > hi {
			side, edge = "above", hi
		}
		return fmt.Errorf("%s: the signal's frequency, estimated from the log at %s Hz, lies %s the coil response table %s (--coil-response), which covers %g-%g Hz, and the response is not extrapolated: add a row %s %g Hz to the table (the frequency drifts a little about --freq), or check that --freq is the frequency the log holds",
			path, calibrate.FreqText(w.Freq, lo, hi), side, c.response, lo, hi, side, edge)
	}
	if err := calibrate.SensitivityWindows(ws, t); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	return nil
}

// The AC field of a buried conductor at the sensors, RMS: a cable's field
// is μ0 I/(2π r) = 2e-7 T·m/A × I/r (Ampère's law for a long straight
// line), so 1 mT needs 5000 A at 1 m and 0.1 T needs 500 kA; a survey's
// fields are nanotesla to tens of microtesla.
const (
	// coilImplausibleNT: beyond this (1 mT) in any window locate warns.
	coilImplausibleNT = 1e6
	// coilImpossibleNT: beyond this (0.1 T) for the windows' median
	// locate refuses the log, as it refuses a magnetometer log's median
	// |B| (implausibleHighNT).
	coilImpossibleNT = implausibleHighNT
)

// fieldCheck looks at the field of the windows of one log after the
// coil's conversion (nT, RMS phasors): it returns an error when their
// median magnitude is above coilImpossibleNT and a warning when any is
// above coilImplausibleNT; path names the log.
func (c *coilFlags) fieldCheck(path string, ws []calibrate.Window) (string, error) {
	if len(ws) == 0 {
		return "", nil
	}
	mags := make([]float64, 0, len(ws))
	for _, w := range ws {
		m := math.Sqrt(sq(cmplx.Abs(w.B[0])) + sq(cmplx.Abs(w.B[1])) + sq(cmplx.Abs(w.B[2])))
		if !math.IsNaN(m) {
			mags = append(mags, m)
		}
	}
	if len(mags) == 0 {
		return "", nil
	}
	sort.Float64s(mags)
	med, top := mags[len(mags)/2], mags[len(mags)-1]
	if !(top > coilImplausibleNT) {
		return "", nil
	}
	why := fmt.Sprintf("a unit or a coil constant is probably wrong: the field columns were read in %s%s and converted by %s", c.unitsText(), c.unitSource(), c.constantText())
	if c.response == "" {
		why += "; a unit left out reads millivolts as volts, a thousand times too large"
	} else {
		why += "; a unit left out reads millivolts as volts, a thousand times too large, and a table's sensitivity in V/nT under the heading sensitivity_v_per_t gives a field a thousand million times too large"
	}
	if med > coilImpossibleNT {
		return "", fmt.Errorf("%s: after the coil's conversion the AC field at the sensors is %s RMS (the median of the windows), above 0.1 T, which no buried conductor gives (500 kA at 1 m): %s. Refused", path, teslaText(med), why)
	}
	return fmt.Sprintf("%s: after the coil's conversion the AC field at the sensors reaches %s RMS, over 1 mT, which a buried conductor gives only with 5000 A at 1 m: %s", path, teslaText(top), why), nil
}

func sq(x float64) float64 { return x * x }

// teslaText words a field in nT in the unit that suits it: nT, µT, mT or T.
func teslaText(nT float64) string {
	switch a := math.Abs(nT); {
	case a >= 1e9:
		return calibrate.PlainDigits(nT*1e-9, 3) + " T"
	case a >= 1e6:
		return calibrate.PlainDigits(nT*1e-6, 3) + " mT"
	case a >= 1e3:
		return calibrate.PlainDigits(nT*1e-3, 3) + " µT"
	}
	return calibrate.PlainDigits(nT, 3) + " nT"
}

// unitSource says where the field columns' unit came from, for messages.
func (c *coilFlags) unitSource() string {
	switch {
	case c.declared == [3]bool{}:
		return " (no unit given: volts)"
	case c.declared != [3]bool{true, true, true}:
		return ""
	}
	return " (as given)"
}

// constantText words the coil's response model, for messages.
func (c *coilFlags) constantText() string {
	if c.ideal != nil {
		return "--coil " + c.spec
	}
	return "the response table " + c.response + " (--coil-response)"
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
		at = fmt.Sprintf("; at %s Hz the coil gives %s V/T (%s mV/nT), the voltage's phase %.1f° from the field's",
			calibrate.PlainDigits(freq, 4), calibrate.PlainDigits(cmplx.Abs(h), 4), calibrate.PlainDigits(cmplx.Abs(h)*1e-6, 4), cmplx.Phase(h)*180/math.Pi)
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

// correction records the coil in the document, as its calibration (what
// turned the readings into field), with the coil's constants and its
// response at the demodulation frequency freq.
func (c *coilFlags) correction(freq float64) *report.Correction {
	cr := &report.CoilResponse{FrequencyHz: freq, Unit: c.unitsText()}
	if c.ideal != nil {
		cr.Turns, cr.AreaM2, cr.Mu = c.ideal.Turns, c.ideal.Area, c.ideal.Mu
		if cr.Mu == 0 {
			cr.Mu = 1
		}
	}
	if h, err := c.sensitivity().Sensitivity(freq); err == nil {
		cr.SensitivityVPerT, cr.PhaseDeg = cmplx.Abs(h), cmplx.Phase(h)*180/math.Pi
	}
	return &report.Correction{File: c.response, Summary: c.summary(freq), Coil: cr}
}

// coilSteadyRatio is how many times its variation the steady part of a
// coil log's field columns may be before locate warns. A coil's output has
// no steady part beyond its amplifier's offset, small beside the signal
// near a conductor; a magnetometer log read as a coil's has the Earth's
// field, 22000-67000 nT, against variations of tens to thousands of nT:
// the demo's walk over a 42 A cable has 49000 nT steady against a median
// distance of 2460 nT from it, a ratio of 20.
const coilSteadyRatio = 5

// coilSteadyWarning returns a warning when the field columns of a coil log
// (in volts) hold a steady value over coilSteadyRatio times their
// variation about it (the median distance from the columns' medians), as
// a magnetometer log given as a coil's does; "" otherwise.
func coilSteadyWarning(path string, s *ingest.Samples) string {
	steady, rms, ok := steadyPart(s)
	if !ok || !(steady > coilSteadyRatio*rms) {
		return ""
	}
	return fmt.Sprintf("%s: the field columns hold a steady %.4g V (their medians) against a variation of %.3g V about it: a coil's output has no steady part (a coil senses only a changing field), so this looks like a magnetometer's log, whose field is not in volts; if it is, leave out --coil and --coil-response (an amplifier's offset this large is possible but unusual)",
		path, steady, rms)
}

// steadyPart returns the magnitude of the field columns' medians (their
// steady part) and their variation about it (the median distance from
// the medians); false when a column holds no number.
func steadyPart(s *ingest.Samples) (steady, variation float64, ok bool) {
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
			return 0, 0, false
		}
		sort.Float64s(v)
		med[k] = v[len(v)/2]
	}
	// The variation is the median distance from the medians (robust): the
	// root mean square counted a walked survey's strong AC field near the
	// cable, and the demo's magnetometer log given as a coil's (49 µT
	// steady, 3.9 µT RMS about it) passed unremarked (found in review).
	dist := make([]float64, 0, s.Len())
	for i := range s.Len() {
		d0, d1, d2 := s.Bx[i]-med[0], s.By[i]-med[1], s.Bz[i]-med[2]
		if d := math.Sqrt(d0*d0 + d1*d1 + d2*d2); !math.IsNaN(d) {
			dist = append(dist, d)
		}
	}
	if len(dist) == 0 {
		return 0, 0, false
	}
	sort.Float64s(dist)
	return math.Sqrt(med[0]*med[0] + med[1]*med[1] + med[2]*med[2]), dist[len(dist)/2], true
}
