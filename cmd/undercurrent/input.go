package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
)

// readFlags are the options that say how to read a log. Every command that
// reads logs (inspect, convert, locate, calibrate, replay) declares them
// with add, so that they take the same input flags.
type readFlags struct {
	columns []string
	units   []string
	// columnsOld and unitsOld hold the plural spellings --columns and
	// --units, kept as hidden aliases of --column and --unit.
	columnsOld []string
	unitsOld   []string
	delimiter  string
	comment    string
	header     []string
	frame      string
	origin     string
	// fixedOrigin is --origin LAT,LON[,HEIGHT] as options read it; nil
	// for first or mean.
	fixedOrigin *ingest.Geodetic
	// iagaBaseline leaves IAGA-2002 variation data in the baseline frame.
	iagaBaseline bool
	decimalComma bool
	// dropMissing drops rows with a missing value (addMissing).
	dropMissing bool
	// allowUnterminated reads an Arrow IPC stream file that stops without
	// its end-of-stream marker (a copy cut short), with a warning.
	allowUnterminated bool
	// timeOrder is how time must run through a log: ordered, per-group
	// or any.
	timeOrder string
	// timeOffset is the UTC offset of text times written without one
	// (--time-offset); dateOrder the order of day, month and year in
	// dates such as 21/04/2026 (--date-order).
	timeOffset, dateOrder string
	// timeZone is the IANA zone of times written without an offset
	// (--time-zone), whose offset follows the zone's changes of the
	// clocks.
	timeZone string
	// layout lists the flags given (by options) that describe a CSV
	// log's layout or a log's columns, units and axes, none of which
	// applies to an IAGA-2002 file (checkIAGA).
	layout []string
}

// layoutFlags are the flags of readFlags that an IAGA-2002 file's format
// fixes for it (its columns, their axes and unit, and its text layout).
var layoutFlags = []string{"column", "columns", "unit", "units", "frame", "header", "delimiter", "comment", "decimal-comma"}

// checkIAGA refuses, before any work, the layout flags (see layout) for
// an input that is an IAGA-2002 file, as locate refuses --base-column,
// --base-unit and --base-frame for an IAGA-2002 base: before, inspect
// and convert dropped them without a word, and a user who believed a
// unit or frame fix had been made was told so by silence. Only a regular
// file is looked at (a pipe's first bytes cannot be read twice).
func (f *readFlags) checkIAGA(name, path string) error {
	return f.checkIAGAAll(name, []string{path})
}

// checkIAGAAll is checkIAGA for a command reading several logs (locate):
// the layout flags are refused only when every log is an IAGA-2002 file,
// since in a run that mixes formats they describe the other logs. name
// names the argument, path the first log in the message.
func (f *readFlags) checkIAGAAll(name string, paths []string) error {
	if len(f.layout) == 0 || len(paths) == 0 {
		return nil
	}
	for _, p := range paths {
		if !isIAGAFile(p) {
			return nil
		}
	}
	what := fmt.Sprintf("%s %s: it is an IAGA-2002 file, whose format fixes its columns, their axes (its elements) and their unit (nT)", name, paths[0])
	if len(paths) > 1 {
		what = fmt.Sprintf("%ss %s and %s: every one is an IAGA-2002 file, whose format fixes its columns, their axes (its elements) and their unit (nT)", name, paths[0], plural(len(paths)-1, "other"))
	}
	flags := make([]string, len(f.layout))
	for i, l := range f.layout {
		flags[i] = "--" + l
	}
	verb := "does"
	if len(flags) > 1 {
		verb = "do"
	}
	return usageErrorf("%s %s not apply to %s", strings.Join(flags, ", "), verb, what)
}

// isIAGAFile tells whether path is a regular file in the IAGA-2002 format.
// A pipe or a missing file is not looked at (a pipe's first bytes cannot
// be read twice; a missing file is reported by the reader).
func isIAGAFile(path string) bool {
	if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
		return false
	}
	format, _ := logSchema(path)
	return format == ingest.FormatIAGA
}

// fieldUnits lists the field units ingest accepts, for help texts.
var fieldUnits = ingest.FieldUnits

func (f *readFlags) add(fs *pflag.FlagSet) {
	fs.StringSliceVar(&f.columns, "column", nil, "map canonical columns to the file's names: `CANON=NAME`, e.g. bx=Bx_uT,time=t_s,group=traverse (repeatable; a name holding a comma is given as it is, --column 'bx=Field X, nT': a part after a comma without = continues the name; time=DATE+TIME joins a date column and a time-of-day column with a space before the time is parsed, as in time=Datum+Uhrzeit, CSV only)")
	fs.StringSliceVar(&f.units, "unit", nil, "units of columns: `CANON=UNIT`, e.g. bx=uT,time=ms (field "+fieldUnits+", each also with the size of a count before it for logs in counts, as bx=0.1nT or bx=100pT, or V/mV/uV/nV for induction coils with locate --coil; length m/cm/mm/km/ft; time s/ms/us/ns, or UTC for timestamps without a zone that are UTC; repeatable)")
	fs.StringSliceVar(&f.columnsOld, "columns", nil, "same as --column")
	fs.StringSliceVar(&f.unitsOld, "units", nil, "same as --unit")
	_ = fs.MarkHidden("columns")
	_ = fs.MarkHidden("units")
	fs.StringVar(&f.delimiter, "delimiter", "", `CSV delimiter: one character, "tab" or "space" (default: guessed)`)
	fs.StringVar(&f.comment, "comment", "#", "prefix of CSV comment lines")
	fs.StringSliceVar(&f.header, "header", nil, "column names for a CSV file without a header line")
	fs.StringVar(&f.frame, "frame", "enu", "axes of the field and position columns: enu, ned or sensor")
	fs.StringVar(&f.origin, "origin", "first", "origin for WGS84 positions: first, mean or LAT,LON[,HEIGHT]")
	fs.BoolVar(&f.decimalComma, "decimal-comma", false, "CSV numbers write decimals with a comma (12,5); default: detected, when the delimiter is not a comma, from the first data row with a number written with a decimal comma or point; --decimal-comma=false refuses them")
	fs.BoolVar(&f.allowUnterminated, "allow-unterminated", false, "read an Arrow IPC stream file that stops without its end-of-stream marker (a copy cut short or a writer stopped mid-run): the rows before the cut, with a warning (a CSV file's last line that looks cut short is left out with a warning, with this flag or without)")
	fs.StringVar(&f.timeOrder, "time-order", "ordered", "how time must run through a log: ordered, per-group (within each value of the group column: sensors or traverses logged one after another) or any")
	fs.StringVar(&f.timeOffset, "time-offset", "", "UTC offset of text times (and Arrow/Parquet timestamps) written without one, as +01:00, -05:30, +0100 or Z: they are read as that zone's local times instead of as UTC with a warning; times that carry their own offset keep it; one offset for the whole log (across a change of the clocks use --time-zone)")
	fs.StringVar(&f.timeZone, "time-zone", "", "IANA time zone of times written without a UTC offset, as Europe/Berlin or America/New_York: text times and Arrow/Parquet timestamps without a zone are read as its local times, at the offset in force then, so a log across a change of the clocks reads right; the hour repeated when the clocks go back is read keeping the log's times in order (first at summer time's offset, after the step back at standard time's), with a warning; a time the clocks skipped is refused; times with their own offset keep it, numbers (seconds) are not changed, each with a warning; not with --time-offset")
	fs.StringVar(&f.dateOrder, "date-order", "", "order of day, month and year in text dates such as 21/04/2026 09:40:00.000, 21.04.2026 09:40 or 4/21/2026 9:40:05: dmy, mdy or ymd (default: such dates are refused)")
	fs.BoolVar(&f.iagaBaseline, "iaga-baseline-frame", false, "leave IAGA-2002 variation data (H D Z, H E Z; a base-station log too) in the observatory's baseline frame instead of turning them to geographic north by the header's DECBAS; H E Z data of other types (adjusted, definitive), which are never turned, are then read without a warning")
}

// addMissing declares --drop-missing, for the commands that need every
// value of a row (inspect counts missing values and convert carries them).
func (f *readFlags) addMissing(fs *pflag.FlagSet) {
	fs.BoolVar(&f.dropMissing, "drop-missing", false, "drop rows with a missing value (an empty cell, NaN, NA, N/A, #N/A, null, None, - or --, in any case) in time, position or field, with a warning, instead of refusing the log")
}

// options turns the flags into ingest options; fs may be nil (no flag
// given).
func (f *readFlags) options(fs *pflag.FlagSet) ([]ingest.Option, error) {
	changed := func(name string) bool { return fs != nil && fs.Changed(name) }
	f.layout = nil
	for _, l := range layoutFlags {
		if changed(l) {
			f.layout = append(f.layout, l)
		}
	}
	var opts []ingest.Option
	f.columns = append(f.columns, f.columnsOld...)
	f.units = append(f.units, f.unitsOld...)
	f.columnsOld, f.unitsOld = nil, nil
	if len(f.columns) > 0 {
		opts = append(opts, ingest.WithColumns(f.columns...))
		if err := checkOption("--column", "column mapping ", ingest.WithColumns(f.columns...)); err != nil {
			return nil, err
		}
	}
	if p, ok := voltageUnit(f.units); ok {
		return nil, usageErrorf("--unit %s is a voltage: field columns in volts are induction coils' output, which only locate reads, given the coil with --coil turns=N,area=A[,mu=M] (or --coil-response FILE) and the AC frequency with --freq", p)
	}
	if len(f.units) > 0 {
		opts = append(opts, ingest.WithUnits(f.units...))
		if err := checkOption("--unit", "unit ", ingest.WithUnits(f.units...)); err != nil {
			return nil, err
		}
	}
	switch d := f.delimiter; d {
	case "":
	case "tab", `\t`:
		opts = append(opts, ingest.WithDelimiter('\t'))
	case "space", " ":
		opts = append(opts, ingest.WithDelimiter(' '))
	default:
		if len(d) != 1 {
			return nil, usageErrorf("--delimiter %q: want one character, tab or space", d)
		}
		opts = append(opts, ingest.WithDelimiter(rune(d[0])))
	}
	if changed("comment") {
		opts = append(opts, ingest.WithComment(f.comment))
	}
	if len(f.header) > 0 {
		opts = append(opts, ingest.WithHeader(f.header...))
	}
	if f.iagaBaseline {
		opts = append(opts, ingest.WithIAGABaselineFrame(true))
	}
	if changed("decimal-comma") {
		opts = append(opts, ingest.WithDecimalComma(f.decimalComma))
	}
	if changed("frame") {
		fr, err := ingest.ParseFrame(f.frame)
		if err != nil {
			return nil, usageErrorf("--frame %q: want enu, ned or sensor", f.frame)
		}
		opts = append(opts, ingest.WithFrame(fr))
	}
	f.fixedOrigin = nil
	switch o := strings.TrimSpace(f.origin); o {
	case "first", "":
	case "mean":
		opts = append(opts, ingest.WithOriginMean())
	default:
		parts := strings.Split(o, ",")
		var v [3]float64
		if len(parts) < 2 || len(parts) > 3 {
			return nil, usageErrorf("--origin %q: want first, mean or LAT,LON[,HEIGHT]", o)
		}
		for i, p := range parts {
			x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil {
				return nil, usageErrorf("--origin %q: %q is not a number", o, p)
			}
			v[i] = x
		}
		if err := checkOriginValues(o, v); err != nil {
			return nil, err
		}
		g := ingest.Geodetic{Lat: v[0], Lon: v[1], H: v[2]}
		f.fixedOrigin = &g
		opts = append(opts, ingest.WithOrigin(g))
	}
	if f.dropMissing {
		opts = append(opts, ingest.WithAllowMissing(true))
	}
	if f.allowUnterminated {
		opts = append(opts, ingest.WithAllowUnterminatedStream(true))
	}
	if changed("time-order") {
		o, err := ingest.ParseTimeOrder(f.timeOrder)
		if err != nil {
			return nil, usageErrorf("--time-order %q: want ordered, per-group or any", f.timeOrder)
		}
		opts = append(opts, ingest.WithTimeOrder(o))
	}
	if changed("time-zone") {
		if changed("time-offset") {
			return nil, usageErrorf("--time-zone %s and --time-offset %s: give one (the zone, when the log crosses a change of the clocks)", f.timeZone, f.timeOffset)
		}
		loc, err := ingest.LoadTimeZone(f.timeZone)
		if err != nil {
			return nil, usageErrorf("--time-zone %s", strings.TrimPrefix(err.Error(), "ingest: time zone "))
		}
		opts = append(opts, ingest.WithTimeZone(loc))
	}
	if changed("time-offset") {
		off, err := ingest.ParseTimeOffset(f.timeOffset)
		if err != nil {
			return nil, usageErrorf("--time-offset %s", strings.TrimPrefix(err.Error(), "ingest: time offset "))
		}
		opts = append(opts, ingest.WithTimeOffset(off))
	}
	if changed("date-order") {
		o, err := ingest.ParseDateOrder(f.dateOrder)
		if err != nil {
			return nil, usageErrorf("--date-order %q: want dmy (21/04/2026), mdy (4/21/2026) or ymd (2026/04/21)", f.dateOrder)
		}
		opts = append(opts, ingest.WithDateOrder(o))
	}
	return opts, nil
}

// checkOption refuses a flag value that ingest refuses as an option (an
// unknown canonical column in --column, an unknown unit in --unit) as a
// usage error, before any file is read. ingest checks its options when a
// log is opened, before the file itself: opening no file with the option
// alone gives either the option's error or an *ingest.Error about the
// file. prefix is the start of ingest's message, replaced by the flag.
func checkOption(flag, prefix string, opt ingest.Option) error {
	r, err := ingest.Open("", opt)
	if err == nil {
		r.Release()
		return nil
	}
	var fe *ingest.Error
	if errors.As(err, &fe) {
		return nil // the option is good; only the (absent) file is not
	}
	msg := strings.TrimPrefix(err.Error(), "ingest: ")
	return usageErrorf("%s %s", flag, strings.TrimPrefix(msg, prefix))
}

// baseOptions are the ingest options for a base-station log (locate
// --base): missing values are allowed (a base log is only interpolated,
// and its gaps are reported), and the flags that say how far to trust a
// file apply to it as to the survey logs: --allow-unterminated,
// --time-order and --iaga-baseline-frame; --date-order too. The flags that describe the
// survey logs' layout (--column, --unit, --header, --delimiter, --comment,
// --decimal-comma, --frame, --origin) do not: a base log comes from
// another instrument, usually in another format. An IAGA-2002 base whose
// east and north are not geographic is warned of once, by the base
// correction (calibrate.BaseFrameWarning), which says what that means for
// the correction: the reader's own warning of it is left out.
func (f *readFlags) baseOptions(fs *pflag.FlagSet) []ingest.Option {
	// The base log's positions are not used: no warning that its
	// latitude and longitude come without a height.
	opts := []ingest.Option{ingest.WithAllowMissing(true), ingest.WithIAGABaselineFrame(f.iagaBaseline), ingest.WithIAGAFrameWarning(false), ingest.WithHeightWarning(false)}
	if f.allowUnterminated {
		opts = append(opts, ingest.WithAllowUnterminatedStream(true))
	}
	if fs != nil && fs.Changed("time-order") {
		if o, err := ingest.ParseTimeOrder(f.timeOrder); err == nil {
			opts = append(opts, ingest.WithTimeOrder(o))
		}
	}
	// --date-order applies to the base too (--base-date-order, applied
	// after it, overrides it): a date in a local order is refused
	// without one, so no base read before is read otherwise now.
	// --time-offset and --time-zone do not: a base log is often another instrument's,
	// kept in UTC, and one named "Time (UTC)" would be refused with it.
	if fs != nil && fs.Changed("date-order") {
		if o, err := ingest.ParseDateOrder(f.dateOrder); err == nil {
			opts = append(opts, ingest.WithDateOrder(o))
		}
	}
	return opts
}

// sortByTime puts the rows of s in time order (a stable sort, so rows at
// the same time keep their order) and returns how many rows step back in
// time in the file (0: nothing moved). It returns the original row index
// of each row in order, for messages.
func sortByTime(s *ingest.Samples) (back int, orig []int) {
	n := s.Len()
	orig = make([]int, n)
	for i := range orig {
		orig[i] = i
	}
	for i := 1; i < n; i++ {
		if s.Time[i] < s.Time[i-1] {
			back++
		}
	}
	if back == 0 {
		return 0, orig
	}
	sort.SliceStable(orig, func(a, b int) bool { return s.Time[orig[a]] < s.Time[orig[b]] })
	permuteRows(s, orig)
	return back, orig
}

// permuteRows puts the rows of s in the order orig (the original row
// index of each row in its new place).
func permuteRows(s *ingest.Samples, orig []int) {
	n := len(orig)
	perm := func(v []float64) []float64 {
		if v == nil {
			return nil
		}
		out := make([]float64, n)
		for i, j := range orig {
			out[i] = v[j]
		}
		return out
	}
	for _, p := range []*[]float64{&s.Time, &s.X, &s.Y, &s.Z, &s.Bx, &s.By, &s.Bz, &s.Temp, &s.Roll, &s.Pitch, &s.Yaw, &s.Qw, &s.Qx, &s.Qy, &s.Qz, &s.F} {
		*p = perm(*p)
	}
	if s.Group != nil {
		g := make([]string, n)
		for i, j := range orig {
			g[i] = s.Group[j]
		}
		s.Group = g
	}
}

// sortGroupRows puts the rows of a survey log s in time order within each
// group (of its group column; the whole log without one) when time goes
// back within one, as --time-order any lets it: each group's rows
// together, the groups in the order of their first rows, and rows at the
// same time in the log's order. It returns how many rows step back in time
// from the row before of their group (0: nothing moved). AC demodulation
// takes a group's rows in the order given, from its sample rate on: a log
// shuffled within its traverses was refused as sampled at 0.163 Hz (its
// rate measured from steps between rows in file order) although it was
// logged at 500 Hz, and the pauses that part the walks of a traverse and
// the DC noise estimates read the order given too (found in review).
func sortGroupRows(s *ingest.Samples) int {
	n := s.Len()
	if s.NoTime || n < 2 {
		return 0
	}
	key := func(i int) string {
		if s.Group == nil {
			return ""
		}
		return s.Group[i]
	}
	last := map[string]float64{}
	rank := map[string]int{}
	back := 0
	for i := range n {
		k := key(i)
		if t, ok := last[k]; ok && s.Time[i] < t {
			back++
		}
		if _, ok := rank[k]; !ok {
			rank[k] = len(rank)
		}
		last[k] = s.Time[i]
	}
	if back == 0 {
		return 0
	}
	orig := make([]int, n)
	for i := range orig {
		orig[i] = i
	}
	sort.SliceStable(orig, func(a, b int) bool {
		ra, rb := rank[key(orig[a])], rank[key(orig[b])]
		if ra != rb {
			return ra < rb
		}
		return s.Time[orig[a]] < s.Time[orig[b]]
	})
	permuteRows(s, orig)
	return back
}

// fieldUnitGiven reports whether --unit named the unit of a field column,
// which overrides the refusal of an implausible field magnitude.
func (f *readFlags) fieldUnitGiven() bool {
	for _, u := range append(append([]string(nil), f.units...), f.unitsOld...) {
		for _, p := range strings.Split(u, ",") {
			k, _, _ := strings.Cut(p, "=")
			switch strings.ToLower(strings.TrimSpace(k)) {
			case ingest.ColBx, ingest.ColBy, ingest.ColBz:
				return true
			}
		}
	}
	return false
}

// ctxReader stops a reader at the end of the current batch once ctx is
// done (Ctrl-C, SIGTERM); Err then reports the context's error.
type ctxReader struct {
	ingest.Reader
	ctx context.Context
	err error
}

func (c *ctxReader) Next() bool {
	if err := c.ctx.Err(); err != nil {
		c.err = err
		return false
	}
	return c.Reader.Next()
}

func (c *ctxReader) Err() error {
	if c.err != nil {
		return c.err
	}
	return c.Reader.Err()
}

// readSamples reads a whole log like ingest.ReadSamples, stopping between
// batches when ctx is done.
func readSamples(ctx context.Context, path string, opts ...ingest.Option) (*ingest.Samples, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	// Open reads the whole log first for --origin mean. WithContext: a
	// read waiting on an idle pipe gives way to Ctrl-C or SIGTERM.
	opts = append(opts[:len(opts):len(opts)], ingest.WithContext(ctx))
	r, err := await(ctx, func() (ingest.Reader, error) { return ingest.Open(path, opts...) })
	if err != nil {
		return nil, err
	}
	defer r.Release()
	s, err := ingest.Collect(&ctxReader{Reader: r, ctx: ctx})
	if err != nil {
		// The wrapper hides the reader's file name from Collect ("no
		// data rows").
		var fe *ingest.Error
		if errors.As(err, &fe) && fe.File == "" {
			fe.File = path
		}
		return nil, err
	}
	s.Warnings = ingest.Warnings(r) // the wrapper hides them from Collect
	s.NaiveTime, s.TimeSaidUTC = ingest.TimeBasis(r)
	s.InFrame, s.InFrameStated, _ = ingest.InputFrame(r)
	s.Columns, s.Unread, _ = ingest.InputColumns(r)
	s.Source = path
	return s, nil
}

// dropMissingRows removes the rows of s with a missing (NaN) time,
// position or field value and returns how many it removed. The times of a
// log read without a time column (s.NoTime) are all NaN and not missing.
func dropMissingRows(s *ingest.Samples) int {
	n, _ := dropMissingRowsKept(s)
	return n
}

// dropMissingRowsKept is dropMissingRows that also returns the rows kept
// (0-based data rows of the log as read), nil when none was removed.
func dropMissingRowsKept(s *ingest.Samples) (int, []int) {
	n := s.Len()
	keep := make([]bool, n)
	kept := 0
	for i := range n {
		ok := (s.NoTime || !math.IsNaN(s.Time[i])) && !math.IsNaN(s.Bx[i]) && !math.IsNaN(s.By[i]) && !math.IsNaN(s.Bz[i])
		if s.X != nil {
			ok = ok && !math.IsNaN(s.X[i]) && !math.IsNaN(s.Y[i]) && !math.IsNaN(s.Z[i])
		}
		keep[i] = ok
		if ok {
			kept++
		}
	}
	if kept == n {
		return 0, nil
	}
	rows := make([]int, 0, kept)
	for i, k := range keep {
		if k {
			rows = append(rows, i)
		}
	}
	keepSampleRows(s, keep)
	delete(s.Meta, "missing_rows")
	return n - kept, rows
}

// keepSampleRows keeps the rows of s where keep is true, in order, in every
// column.
func keepSampleRows(s *ingest.Samples, keep []bool) {
	kept := 0
	for _, k := range keep {
		if k {
			kept++
		}
	}
	filter := func(v []float64) []float64 {
		if v == nil {
			return nil
		}
		out := make([]float64, 0, kept)
		for i, x := range v {
			if keep[i] {
				out = append(out, x)
			}
		}
		return out
	}
	for _, p := range []*[]float64{&s.Time, &s.X, &s.Y, &s.Z, &s.Bx, &s.By, &s.Bz, &s.Temp, &s.Roll, &s.Pitch, &s.Yaw, &s.Qw, &s.Qx, &s.Qy, &s.Qz, &s.F} {
		*p = filter(*p)
	}
	if s.Group != nil {
		g := make([]string, 0, kept)
		for i, x := range s.Group {
			if keep[i] {
				g = append(g, x)
			}
		}
		s.Group = g
	}
}

// readLog reads one log with the flags' options, drops rows with missing
// values when --drop-missing was given and checks the field's magnitude
// (checkFieldUnits). It returns the samples and the warnings to pass on.
func (f *readFlags) readLog(ctx context.Context, path string, opts []ingest.Option, checkUnits bool) (*ingest.Samples, []string, error) {
	s, _, warns, err := f.readLogRows(ctx, path, opts, checkUnits)
	return s, warns, err
}

// readLogRows is readLog that also returns, for each reading, its data
// row in the file (0-based, counting the rows --drop-missing dropped);
// nil when no row was dropped (reading i is data row i).
func (f *readFlags) readLogRows(ctx context.Context, path string, opts []ingest.Option, checkUnits bool) (*ingest.Samples, []int, []string, error) {
	s, err := readSamples(ctx, path, opts...)
	if err != nil {
		return nil, nil, nil, err
	}
	var rows []int
	// The reader's own warnings (an unterminated stream read anyway,
	// same-named columns, an IAGA-2002 file without DECBAS).
	var warns []string
	for _, w := range s.Warnings {
		warns = append(warns, cliWording(w))
	}
	if f.dropMissing {
		var n int
		if n, rows = dropMissingRowsKept(s); n > 0 {
			if s.Len() == 0 {
				return nil, nil, nil, fmt.Errorf("%s: every row has a missing value: no readings left", path)
			}
			warns = append(warns, fmt.Sprintf("%s: dropped %d of %d rows with a missing value (--drop-missing)", path, n, n+s.Len()))
		}
	}
	if checkUnits {
		w, err := checkFieldUnits(ctx, path, s.Bx, s.By, s.Bz, opts, f.fieldUnitGiven())
		if err != nil {
			return nil, nil, nil, err
		}
		if w != "" {
			warns = append(warns, w+tooLargeByUnit(s.Bx, s.By, s.Bz))
		}
	}
	return s, rows, warns, nil
}

// The Earth's main field at the surface is about 22 000 to 67 000 nT
// (IGRF; the same band as ingest's inspection, 15 000 to 80 000 nT). A raw
// three-axis log includes it, so its median |B| lies in this band unless
// the unit of the field columns is wrong, or the log has had the Earth's
// field removed (then it can be much smaller, and that is fine).
const earthMinNT, earthMaxNT = 1.5e4, 8e4

// earthBand words the band for messages and help texts.
const earthBand = "the Earth's field band of 15000-80000 nT"

// Beyond these medians a log cannot be read in the unit given, whatever was
// done to it: below 1 pT is under the noise of a single reading of any field
// magnetometer (fluxgates are about 10 pT/sqrt(Hz), optically pumped ones
// about 1 pT/sqrt(Hz)), and above 0.1 T is a hundred times the range of a
// survey fluxgate (about +-1 mT) and two thousand times the Earth's field.
// An Earth field written in tesla but read as nT (2e-5 to 7e-5) falls far
// below; one in nT read as mT (2e10 and up) far above.
const implausibleLowNT, implausibleHighNT = 1e-3, 1e8

// checkFieldUnits looks at the median |B| of the readings (nT). Outside
// the Earth's band it returns a warning, worded as "undercurrent inspect"
// words it (ingest.Inspect reads the log a second time for that, only in
// this case); beyond the implausible bounds it returns an error unless the
// field's unit was given with --unit (unitGiven).
func checkFieldUnits(ctx context.Context, path string, bx, by, bz []float64, opts []ingest.Option, unitGiven bool) (string, error) {
	m, ok := medianMagnitude(bx, by, bz)
	if !ok || (m >= earthMinNT && m <= earthMaxNT) {
		return "", nil
	}
	w := ""
	if isPipe(path) {
		// A pipe is read once: the generic wording below.
	} else if in, err := inspectCtx(ctx, path, opts...); err == nil {
		for _, s := range in.Warnings {
			if strings.HasPrefix(s, "field:") {
				// Without inspect's "field: " label.
				w = strings.TrimPrefix(cliWording(s), "field: ")
				break
			}
		}
	} else if isInterrupt(err) {
		return "", err
	}
	if w == "" {
		why := "a log with the Earth's field removed"
		if m < earthMinNT {
			why = "a zero-field log (a sensor inside a magnetic shield) or " + why
		}
		w = fmt.Sprintf("median |B| is %.4g nT, outside %s: right for %s; otherwise the field columns' unit is wrong (give it with --unit bx=U,by=U,bz=U)", m, earthBand, why)
	}
	if !unitGiven && (m < implausibleLowNT || m > implausibleHighNT) {
		limit := "below 1 pT"
		if m > implausibleHighNT {
			limit = "above 0.1 T"
		}
		return "", fmt.Errorf("%s: %s. Refused: a median |B| %s is impossible for a magnetometer log in the unit read; if that unit really is right, give it with --unit bx=U,by=U,bz=U to go on", path, w, limit)
	}
	return path + ": " + w, nil
}

// medianMagnitude returns the median |B| of the rows with all three
// components (at most 1<<20 of them, spread over the log).
func medianMagnitude(bx, by, bz []float64) (float64, bool) {
	step := max(1, len(bx)/(1<<20))
	var mags []float64
	for i := 0; i < len(bx); i += step {
		m := math.Sqrt(bx[i]*bx[i] + by[i]*by[i] + bz[i]*bz[i])
		if !math.IsNaN(m) {
			mags = append(mags, m)
		}
	}
	if len(mags) == 0 {
		return 0, false
	}
	sort.Float64s(mags)
	return mags[len(mags)/2], true
}

// inspectCtx runs ingest.Inspect, which takes no context, and returns
// early with the context's error when ctx is done (the inspection is left
// to finish in the background; the process is about to exit).
func inspectCtx(ctx context.Context, path string, opts ...ingest.Option) (*ingest.Inspection, error) {
	return await(ctx, func() (*ingest.Inspection, error) { return ingest.Inspect(path, opts...) })
}

// cliWording turns ingest's suggestions ("try units bx=T", "try columns
// lon=...") into the flags that give them.
//
// It also words ingest's messages for the command line: a mapping is given
// with --column, and a count of one takes the singular.
func cliWording(s string) string {
	s = strings.ReplaceAll(s, "(try units ", "(try --unit ")
	s = strings.ReplaceAll(s, "(WithTimeOffset, on the command line --time-offset +01:00)", "with --time-offset +01:00")
	s = strings.ReplaceAll(s, "(WithTimeZone, on the command line --time-zone Europe/Berlin)", "with --time-zone Europe/Berlin")
	s = strings.ReplaceAll(s, "map time to both, DATE+TIME (on the command line --column time=DATE+TIME)", "--column time=DATE+TIME")
	s = strings.ReplaceAll(s, "(try columns ", "(try --column ")
	s = strings.ReplaceAll(s, "the option WithDecimalComma(true), on the command line --decimal-comma", "--decimal-comma")
	s = strings.ReplaceAll(s, "the option WithDecimalComma(false), on the command line --decimal-comma=false", "--decimal-comma=false")
	s = strings.ReplaceAll(s, "(WithFrame(FrameSensor), on the command line --frame sensor)", "(--frame sensor)")
	s = strings.ReplaceAll(s, "(WithFrame, on the command line --frame)", "(--frame)")
	s = mappingHint.ReplaceAllString(s, "with --column $1=NAME")
	s = unitHint.ReplaceAllString(s, "--unit $1=U")
	s = mapUnitHint.ReplaceAllString(s, "($1)")
	return singleBatch.ReplaceAllString(s, "${1}1 record batch$2")
}

// mappingHint matches ingest's advice to map a missing column, naming it.
var mappingHint = regexp.MustCompile(`with a column mapping such as ([a-z]+)=NAME, on the command line --column [a-z]+=NAME`)

// unitHint matches ingest's advice to give a column's unit.
var unitHint = regexp.MustCompile(`a unit option ([a-z]+)=U \(on the command line --unit [a-z]+=U\)`)

// mapUnitHint matches ingest's advice to map a column and give its unit.
var mapUnitHint = regexp.MustCompile(`\(a column mapping .*? and a unit option [a-z]+=U; on the command line (--column .*? --unit [a-z]+=U)\)`)

// singleBatch matches "1 record batches" (and not "11 record batches").
var singleBatch = regexp.MustCompile(`(^|[^0-9.])1 record batches($|[^A-Za-z])`)

// await runs f, which takes no context, in its own goroutine and returns
// its result, or ctx's error as soon as ctx is done. An abandoned f runs
// on in the background, its result unused: the command is about to exit
// without writing anything, and f must not write output itself.
func await[T any](ctx context.Context, f func() (T, error)) (T, error) {
	if err := ctx.Err(); err != nil {
		var zero T
		return zero, err
	}
	type result struct {
		v   T
		err error
	}
	done := make(chan result, 1)
	go func() {
		v, err := f()
		done <- result{v, err}
	}()
	select {
	case r := <-done:
		return r.v, r.err
	case <-ctx.Done():
		var zero T
		return zero, ctx.Err()
	}
}

// voltageUnit returns the first KEY=UNIT of the --unit style values units
// that gives a field axis a voltage unit, trimmed.
func voltageUnit(units []string) (string, bool) {
	for _, u := range units {
		for _, p := range strings.Split(u, ",") {
			k, v, _ := strings.Cut(p, "=")
			if _, volts := voltScale(v); volts && fieldAxis(k) >= 0 {
				return strings.TrimSpace(p), true
			}
		}
	}
	return "", false
}

// checkPositionsRead refuses a survey log read without a column for x or
// y (ingest read it as 0 for every row, Samples.Absent): the readings
// would all lie on one line, and the fits, the route and its chainages
// would be those of positions that are not the readings'. A log without z
// is read with its warning (the sensors at height 0; depths are measured
// below the sensors' mean height by default).
func checkPositionsRead(path string, s *ingest.Samples) error {
	var missing []string
	for _, a := range s.Absent {
		if a == ingest.ColX || a == ingest.ColY {
			missing = append(missing, a)
		}
	}
	if len(missing) == 0 {
		return nil
	}
	m := strings.Join(missing, " and ")
	return fmt.Errorf("%s has no column for %s: every reading would be read at %s = 0, and the fits and the route would be those of positions that are not the readings'; give the position column with --column %s=NAME (see \"undercurrent inspect %s\" for its columns), or, if every reading really lies at %s = 0, write that column into the log",
		path, m, missing[0], missing[0], path, missing[0])
}

// isPipe reports whether path names a pipe or a socket (a named pipe,
// /dev/stdin fed by a pipe): input that can be read only once, from its
// start. A path that cannot be looked up is none.
func isPipe(path string) bool {
	st, err := os.Stat(path)
	return err == nil && st.Mode()&(os.ModeNamedPipe|os.ModeSocket) != 0
}

// pipeReaders are the commands that read each input log once, from its
// start, and so may read it from a pipe.
var pipeReaders = map[string]bool{"inspect": true, "convert": true}

// logFlags are, for each command, the flags that name logs (read more
// than once: a look at the columns first, then the readings); logArgs are
// the commands whose arguments are logs. Every other input (a scenario, a
// site file, a calibration, a coil-response table) is read once, from its
// start, and may come from a pipe or a process substitution.
var (
	logFlags = map[string][]string{
		"locate":    {"base"},
		"calibrate": {"spin", "flip0", "flip180", "zero"},
	}
	logArgs = map[string]bool{"locate": true, "replay": true}
)

// logPaths returns the logs a command was given, with the flags that name
// them and its arguments.
func logPaths(name string, flags *pflag.FlagSet, args []string) map[string]bool {
	in := map[string]bool{}
	for _, n := range logFlags[name] {
		f := flags.Lookup(n)
		if f == nil || !f.Changed {
			continue
		}
		if sa, ok := f.Value.(pflag.SliceValue); ok {
			for _, v := range sa.GetSlice() {
				in[v] = true
			}
		} else {
			in[f.Value.String()] = true
		}
	}
	if logArgs[name] {
		for _, a := range args {
			in[a] = true
		}
	}
	return in
}

// checkPipes refuses a pipe among the logs of a command that reads its
// logs more than once (a look at the columns first, then the readings).
func checkPipes(name string, inputs map[string]bool) error {
	if pipeReaders[name] {
		return nil
	}
	var pipes []string
	for p := range inputs {
		if isPipe(p) {
			pipes = append(pipes, p)
		}
	}
	if len(pipes) == 0 {
		return nil
	}
	sort.Strings(pipes)
	return fmt.Errorf("%s: a pipe, which can be read only once; %s reads a log more than once, so it needs a regular file: save the log to a file first (undercurrent convert %s log.arrows; inspect and convert read pipes)", strings.Join(pipes, ", "), name, pipes[0])
}
