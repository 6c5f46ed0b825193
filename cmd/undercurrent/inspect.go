package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/spf13/pflag"

	"undercurrent/ingest"
	"undercurrent/report"
)

func init() {
	var rf readFlags
	var asJSON bool
	register(&command{
		name:    "inspect",
		usage:   "[flags] FILE",
		summary: "describe a log: columns and their mapping, time span, sampling, gaps, ranges, missing values",
		long: `Inspect reads a log once (CSV, Arrow IPC file or stream, Parquet or
IAGA-2002; the format is detected from the content) and reports the rows,
how each canonical column (time, x, y, z, bx, by, bz, group, ...) was
found and in which unit, the time span, the median sampling interval and
the gaps, the range of every column, missing values, and a guess when the
units look wrong (the Earth's field, about 50000 nT, reads as 0.00005 in
tesla and 0.05 in millitesla: a median |B| of 0.00005 in columns labelled
nT is probably in tesla). Missing values and time going backwards are
counted here, not rejected: --time-order says how time should run (time
going backwards between groups is then counted as allowed with
per-group), and the gaps of a log not in time order are counted in time
order; an Arrow IPC stream cut short is read too, and the warning says
whether the other commands read it (--allow-unterminated). A CSV file's
last line without a line end that looks cut short is left out with a
warning, here as by the other commands. A log without a time column (a calibration
log, which calibrate reads) is described with "time: none", without the
sampling. The table gives each column's unit in the file
and the unit of the values shown, after conversion: fields in nT,
positions in metres ENU, times in seconds (as UTC dates when they are Unix
times).

In the examples, survey.csv is the survey log of the walk-through in
README.md, and testdata/examples/kestrel-moor-logger.csv an invented
logger's traverse with its field in uT under its own column names;
testdata/examples/harrow-fen-base.min is an invented base station's
minute record in IAGA-2002 (an observatory's own file reads the same).

Examples:
  undercurrent inspect survey.csv
  undercurrent inspect --column bx=fluxE,by=fluxN,bz=fluxU --unit bx=uT,by=uT,bz=uT testdata/examples/kestrel-moor-logger.csv
  undercurrent inspect --json testdata/examples/harrow-fen-base.min`,
		setFlags: func(fs *pflag.FlagSet) {
			rf.add(fs)
			fs.BoolVar(&asJSON, "json", false, "print machine-readable JSON")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 1 {
				return usageErrorf("inspect takes one FILE, got %s", plural(len(args), "argument"))
			}
			opts, err := rf.options(fs)
			if err != nil {
				return err
			}
			if err := rf.checkIAGA("FILE", args[0]); err != nil {
				return err
			}
			originWarns, err := rf.checkOriginNear(args, opts)
			if err != nil {
				return err
			}
			// A log without time (a calibration log, which calibrate
			// reads) is described too, saying it has none.
			opts = append(opts, ingest.WithTimeOptional(true))
			progress, done := rowProgress(stderr, "reading")
			in, err := inspectCtx(ctx, args[0], append(opts, progress)...)
			done()
			if err != nil {
				return err
			}
			if in.Rows == 0 {
				in.Warnings = append(in.Warnings, "no readings: the file holds no data rows")
			}
			// ingest.Inspect reads any order and an unterminated stream;
			// what the flags allow is said, and an unsorted log's gaps
			// are counted in time order.
			order, _ := ingest.ParseTimeOrder(rf.timeOrder) // checked by options
			if err := inspectOrder(ctx, args[0], opts, order, rf.timeOrder, in); err != nil {
				return err
			}
			noteUnterminated(in, rf.allowUnterminated)
			if w := inspectGridWarning(in); w != "" {
				in.Warnings = append(in.Warnings, w)
			}
			for i, w := range in.Warnings {
				in.Warnings[i] = cliWording(w)
			}
			in.Warnings = append(in.Warnings, originWarns...)
			if asJSON {
				enc := json.NewEncoder(stdout)
				enc.SetIndent("", "  ")
				return enc.Encode(inspectionJSON(in))
			}
			printInspection(stdout, in)
			return nil
		},
	})
}

// canonicalUnits are the units of the values ingest gives each canonical
// column, whatever the file's unit.
var canonicalUnits = map[string]string{
	ingest.ColTime: "s", ingest.ColX: "m", ingest.ColY: "m", ingest.ColZ: "m",
	ingest.ColBx: "nT", ingest.ColBy: "nT", ingest.ColBz: "nT", ingest.ColF: "nT",
	ingest.ColTemp: "C", ingest.ColRoll: "deg", ingest.ColPitch: "deg", ingest.ColYaw: "deg",
	ingest.ColSigmaPlan: "m", ingest.ColSigmaUp: "m",
}

// inspectedColumn is a column of inspect's JSON: ingest's statistics with
// the unit of the values (min, max, mean) beside the unit in the file
// ("unit").
type inspectedColumn struct {
	ingest.ColumnStats
	ValuesUnit string `json:"values_unit,omitempty"`
}

// inspectSchemaVersion is the version of inspect's JSON
// ("schema_version"). Version 1 is the first to carry it, with the tool
// block and the durations named with their unit (duration_s,
// interval_s, rate_hz, length_s) beside the older names, which it still
// writes (deprecated: they go in version 2). It grows when a field is
// renamed, removed or changes meaning, not for a field added.
const inspectSchemaVersion = 1

// inspectedLog is inspect's JSON: ingest.Inspection with its version
// and the tool that wrote it (as results.json gives them), the columns'
// value units, the origin named as results.json names it, and each gap's
// data row counted from 1 beside ingest's 0-based row.
type inspectedLog struct {
	SchemaVersion int         `json:"schema_version"`
	Tool          report.Tool `json:"tool"`
	*ingest.Inspection
	Origin  *inspectedOrigin  `json:"origin,omitempty"`
	Columns []inspectedColumn `json:"columns"`
	Time    inspectedTime     `json:"time"`
}

// inspectedOrigin is the WGS84 origin with the member names of
// results.json's frame.origin (report.Origin): lat_deg, lon_deg, height_m.
type inspectedOrigin struct {
	Lat float64 `json:"lat_deg"`
	Lon float64 `json:"lon_deg"`
	H   float64 `json:"height_m"`
}

// inspectedTime is ingest.TimeStats with inspectedGap gaps, and its
// duration, interval and rate under names that carry their unit as the
// result document's do (duration, interval and rate, without one, are
// deprecated).
type inspectedTime struct {
	ingest.TimeStats
	DurationS float64        `json:"duration_s"`
	IntervalS float64        `json:"interval_s"`
	RateHz    float64        `json:"rate_hz"`
	Largest   []inspectedGap `json:"largest_gaps"`
}

// inspectedGap is a gap with DataRow, the data row it follows counted
// from 1 (the first reading is data row 1), as the text output says it;
// ingest's row counts from 0. LengthS is its length, s (length, without
// the unit, is deprecated).
type inspectedGap struct {
	ingest.Gap
	LengthS float64 `json:"length_s"`
	DataRow int     `json:"after_data_row"`
}

func inspectionJSON(in *ingest.Inspection) inspectedLog {
	out := inspectedLog{SchemaVersion: inspectSchemaVersion, Tool: report.Tool{Name: "undercurrent", Version: toolVersion(), Build: buildText()},
		Inspection: in, Columns: []inspectedColumn{}}
	if o := in.Origin; o != nil {
		out.Origin = &inspectedOrigin{Lat: o.Lat, Lon: o.Lon, H: o.H}
	}
	for _, c := range in.Columns {
		vu := canonicalUnits[c.Column]
		if c.Column == ingest.ColTime && in.NoTime {
			vu = "" // no time column: no values
		}
		out.Columns = append(out.Columns, inspectedColumn{ColumnStats: c, ValuesUnit: vu})
	}
	out.Time = inspectedTime{TimeStats: in.Time, DurationS: in.Time.Duration, IntervalS: in.Time.Interval, RateHz: in.Time.Rate, Largest: []inspectedGap{}}
	for _, g := range in.Time.Largest {
		out.Time.Largest = append(out.Time.Largest, inspectedGap{Gap: g, LengthS: g.Length, DataRow: g.Row + 1})
	}
	return out
}

// num formats a value with up to seven significant digits.
func num(v *float64) string {
	if v == nil {
		return "-"
	}
	return strconv.FormatFloat(*v, 'g', 7, 64)
}

// short formats a duration or rate with up to four significant digits
// (times read from files carry rounding noise in the last digits).
func short(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// plural returns "n word" or "n words".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// utcTime formats Unix seconds as ISO 8601 UTC, rounded (not truncated)
// to the millisecond shown.
func utcTime(t float64) string {
	sec := math.Floor(t)
	return time.Unix(int64(sec), int64(math.Round((t-sec)*1e9))).UTC().Round(time.Millisecond).Format("2006-01-02T15:04:05.999Z")
}

// noTimeNote is what inspect says of a log without a time column.
const noTimeNote = "the log has no time column: it is fit for calibrate only (locate, convert and replay need time)"

func printInspection(w io.Writer, in *ingest.Inspection) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintf(tw, "file\t%s (%s)\n", in.File, in.Format)
	rows := strconv.Itoa(in.Rows)
	if in.Rows == 0 {
		rows += " (no readings)"
	}
	fmt.Fprintf(tw, "rows\t%s\n", rows)
	fmt.Fprintf(tw, "frame\t%s\n", in.Frame)
	if in.Origin != nil {
		fmt.Fprintf(tw, "origin\tlat %.9g, lon %.9g, height %.4g m (WGS84)\n", in.Origin.Lat, in.Origin.Lon, in.Origin.H)
	}
	t := in.Time
	epoch := t.StartUTC != ""
	switch {
	case in.NoTime:
		fmt.Fprintf(tw, "time\tnone: %s\n", noTimeNote)
	case in.Rows == 0:
		fmt.Fprintf(tw, "time\t-\n")
	case epoch:
		fmt.Fprintf(tw, "time\t%s to %s (%s s)\n", utcTime(t.Start), utcTime(t.End), num(&t.Duration))
	default:
		fmt.Fprintf(tw, "time\t%s to %s s (%s s)\n", num(&t.Start), num(&t.End), num(&t.Duration))
	}
	if t.Interval > 0 {
		gaps := plural(t.Gaps, "gap")
		if t.GapsAtLeast {
			gaps = "at least " + gaps
		}
		if len(t.Largest) > 0 {
			g := t.Largest[0]
			// Data rows count the readings from 1, below the header and
			// any comment lines: not file lines, which ingest's errors
			// give.
			gaps += fmt.Sprintf(", longest %s s after data row %d of %d", short(g.Length), g.Row+1, in.Rows)
		}
		step := "median step" // a quantised log's is its sampling's (warned)
		if t.Quantum != nil && t.Quantum.Uniform {
			step = "sample interval"
		}
		fmt.Fprintf(tw, "sampling\t%s %s s (%s Hz); %s\n", step, short(t.Interval), short(t.Rate), gaps)
	}
	if t.Backwards > 0 || t.Repeated > 0 {
		fmt.Fprintf(tw, "order\t%s backwards, %s\n", plural(t.Backwards, "step"), plural(t.Repeated, "repeated time"))
	}
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "column\tsource\tunit in file\tvalues in\tmin\tmax\tmean\tmissing\t")
	for _, c := range in.Columns {
		vu := canonicalUnits[c.Column]
		mn, mx, mean := num(c.Min), num(c.Max), num(c.Mean)
		if c.Column == ingest.ColTime && epoch {
			vu = "UTC"
			for _, p := range []struct {
				s *string
				v *float64
			}{{&mn, c.Min}, {&mx, c.Max}, {&mean, c.Mean}} {
				if p.v != nil {
					*p.s = utcTime(*p.v)
				}
			}
		}
		if vu == "" || (c.Column == ingest.ColTime && in.NoTime) {
			vu = "-"
		}
		fu := c.Unit
		if fu == "" {
			fu = "-"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%d\t\n", c.Column, c.Source, fu, vu, mn, mx, mean, c.Missing)
	}
	tw.Flush()
	if len(in.Unused) > 0 {
		fmt.Fprintf(w, "\nunused columns: %s\n", strings.Join(in.Unused, ", "))
	}
	if len(in.Meta) > 0 {
		fmt.Fprintln(w, "\nheader:")
		keys := make([]string, 0, len(in.Meta))
		for k := range in.Meta {
			keys = append(keys, k)
		}
		sortStrings(keys)
		for _, k := range keys {
			fmt.Fprintf(w, "  %s: %s\n", k, in.Meta[k])
		}
	}
	if len(in.Warnings) > 0 {
		fmt.Fprintln(w, "\nwarnings:")
		for _, s := range in.Warnings {
			fmt.Fprintf(w, "  - %s\n", s)
		}
	}
}

func sortStrings(s []string) {
	for i := 1; i < len(s); i++ {
		for j := i; j > 0 && s[j] < s[j-1]; j-- {
			s[j], s[j-1] = s[j-1], s[j]
		}
	}
}

// unterminatedWarning matches ingest's warnings for an Arrow IPC stream
// read without its end-of-stream marker. (A CSV file's last line cut
// short is left out by every command alike.)
var unterminatedWarning = regexp.MustCompile(`Arrow IPC stream (stops at byte [0-9]+, .*without its end-of-stream marker|is cut short)`)

// noteUnterminated adds to the warning for an Arrow IPC stream cut short
// (which inspect reads all the same, to describe it) whether the other
// commands will read it: only with --allow-unterminated.
func noteUnterminated(in *ingest.Inspection, allowed bool) {
	for i, w := range in.Warnings {
		if !unterminatedWarning.MatchString(w) {
			continue
		}
		if allowed {
			in.Warnings[i] = w + " (--allow-unterminated: the other commands read it too)"
		} else {
			in.Warnings[i] = w + "; inspect reads it regardless, but the other commands refuse it unless --allow-unterminated"
		}
	}
}

// backwardsWarning is ingest.Inspect's warning for time going backwards,
// which inspectOrder replaces.
var backwardsWarning = regexp.MustCompile(`^time: goes backwards [0-9]+ times \(an error unless allowed\)$`)

// inspectOrder counts the log's time order as --time-order says (order,
// named flag) and, when its times are not in order, its gaps in time
// order, replacing ingest.Inspect's counts in in: ingest counts every
// step from one row to the next, so that two swapped rows made two gaps
// and a backward step, and a log of sensors logged one after another,
// declared per-group, still read "an error unless allowed". It reads the
// times (and groups) a second time, only when they do not run forward
// throughout (or, per group, repeat).
func inspectOrder(ctx context.Context, path string, opts []ingest.Option, order ingest.TimeOrder, flag string, in *ingest.Inspection) error {
	ts := &in.Time
	if in.NoTime || in.Rows == 0 || ts.Backwards == 0 && (order != ingest.TimeOrderedPerGroup || ts.Repeated == 0) {
		return nil
	}
	if isPipe(path) {
		// A pipe is read once: its steps stay counted in file order.
		in.Warnings = append(in.Warnings, "time: the log is read from a pipe, once, so its gaps and steps back are counted in file order, not in time order; inspect a saved copy for the counts in time order")
		return nil
	}
	times, groups, naive, err := readTimes(ctx, path, opts)
	if err != nil {
		return err
	}
	// A step back that looks like the hour repeated when the clocks go
	// back, in times written without their UTC offset: per-group or any
	// order would read the repeated hour an hour early, so per-group is
	// not advised for it (found in review).
	clock := ""
	if naive {
		clock = clockChangeNote(times)
	}
	// per-group without a group column: ingest reads the log as one
	// stretch that must run forward, and suggesting per-group is no help.
	noGroup := groups == nil && order == ingest.TimeOrderedPerGroup
	if noGroup {
		order = ingest.TimeOrdered // as ingest reads it without a group column
	}
	// The rows of each stretch that must run forward: the whole log, or
	// each group's rows.
	byGroup := map[int32][]int{}
	var keys []int32
	for i, t := range times {
		if math.IsNaN(t) {
			continue
		}
		g := int32(0)
		if order == ingest.TimeOrderedPerGroup {
			g = groups[i]
		}
		if _, ok := byGroup[g]; !ok {
			keys = append(keys, g)
		}
		byGroup[g] = append(byGroup[g], i)
	}
	// Order within each stretch, in file order.
	var back, backGroups int
	for _, k := range keys {
		rows := byGroup[k]
		for j := 1; j < len(rows); j++ {
			if times[rows[j]] < times[rows[j-1]] {
				back++
			}
		}
	}
	// A repeated time is one a row shares with the row before it of its
	// own group, whatever the order asked for: sensors logged on shared
	// stamps repeat nothing (as ingest.Inspect counts them).
	repeated := 0
	last := map[int32]float64{}
	for i, t := range times {
		if math.IsNaN(t) {
			continue
		}
		g := int32(0)
		if groups != nil {
			g = groups[i]
		}
		if p, ok := last[g]; ok && t == p {
			repeated++
		}
		last[g] = t
	}
	if order == ingest.TimeOrderedPerGroup {
		backGroups = ts.Backwards - back // steps back from one group to the next
	}
	// Gaps in time order within each stretch (with any order, the whole
	// log sorted).
	var steps []float64
	var cand []ingest.Gap
	for _, k := range keys {
		rows := append([]int(nil), byGroup[k]...)
		sort.SliceStable(rows, func(a, b int) bool { return times[rows[a]] < times[rows[b]] })
		for j := 1; j < len(rows); j++ {
			if d := times[rows[j]] - times[rows[j-1]]; d > 0 {
				steps = append(steps, d)
				cand = append(cand, ingest.Gap{Row: rows[j-1], Start: times[rows[j-1]], Length: d})
			}
		}
	}
	ts.Gaps, ts.GapsAtLeast, ts.Largest = 0, false, []ingest.Gap{}
	if len(steps) > 0 {
		sorted := append([]float64(nil), steps...)
		sort.Float64s(sorted)
		ts.Interval = sorted[len(sorted)/2]
		ts.Rate = 1 / ts.Interval
		sort.SliceStable(cand, func(a, b int) bool { return cand[a].Length > cand[b].Length })
		for _, g := range cand {
			if g.Length > ingest.GapFactor*ts.Interval {
				ts.Gaps++
				if len(ts.Largest) < 10 {
					ts.Largest = append(ts.Largest, g)
				}
			}
		}
	}
	total := ts.Backwards
	ts.Backwards, ts.Repeated = back, repeated
	var warn string
	switch {
	case noGroup:
		if back > 0 {
			warn = fmt.Sprintf("time: goes backwards %s: --time-order %s asks for time forward within each group, but the log has no group column (map one with --column group=NAME), so it must run forward throughout: convert, locate and calibrate refuse the log (--time-order any allows it); gaps are counted in time order", timesWord(back), flag)
		}
	case order == ingest.TimeAnyOrder:
		warn = fmt.Sprintf("time: goes backwards %s, as --time-order any allows; gaps are counted in time order", timesWord(total))
		if clock != "" {
			warn += "; but " + clock
		}
	case order == ingest.TimeOrderedPerGroup:
		switch {
		case back > 0:
			warn = fmt.Sprintf("time: goes backwards %s within a group: convert, locate, calibrate and replay refuse it with --time-order per-group (--time-order any allows it); gaps are counted in time order within each group", timesWord(back))
		case backGroups > 0:
			warn = fmt.Sprintf("time: goes backwards %s from one group to the next, as --time-order per-group allows; within each group it runs forward", timesWord(backGroups))
			if clock != "" {
				warn += "; but " + clock
			}
		}
	default:
		warn = fmt.Sprintf("time: goes backwards %s: convert, locate and calibrate refuse the log unless --time-order says otherwise (per-group: forward within each group; any); gaps are counted in time order", timesWord(back))
		switch {
		case clock != "":
			warn += "; " + clock
		case groups != nil && back > 0 && perGroupForward(times, groups):
			warn += "; within each group it runs forward, so --time-order per-group reads it"
		}
	}
	kept := in.Warnings[:0]
	for _, w := range in.Warnings {
		if !backwardsWarning.MatchString(w) {
			kept = append(kept, w)
		}
	}
	in.Warnings = kept
	if warn != "" {
		in.Warnings = append(in.Warnings, warn)
	}
	return nil
}

// timesWord is "once", "twice" or "N times".
func timesWord(n int) string {
	switch n {
	case 1:
		return "once"
	case 2:
		return "twice"
	}
	return fmt.Sprintf("%d times", n)
}

// perGroupForward reports whether time runs forward (or repeats) within
// every group, in file order.
func perGroupForward(times []float64, groups []int32) bool {
	last := map[int32]float64{}
	for i, t := range times {
		if math.IsNaN(t) {
			continue
		}
		if p, ok := last[groups[i]]; ok && t < p {
			return false
		}
		last[groups[i]] = t
	}
	return true
}

// clockChangeNote words the first step back in times (file order, seconds
// read from local times written without their UTC offset) that looks like
// the hour repeated when the clocks go back (ingest.ClockChangeBack); ""
// when there is none.
func clockChangeNote(times []float64) string {
	prev := math.NaN()
	for _, t := range times {
		if math.IsNaN(t) {
			continue
		}
		if t < prev && ingest.ClockChangeBack(t, prev) {
			f := func(v float64) string { return time.Unix(int64(math.Floor(v)), 0).UTC().Format("2006-01-02T15:04:05") }
			return fmt.Sprintf("the step back from %s to %s looks like local times without their offset across the night the clocks went back an hour (the reader's warning on the time column says more): read in any order or per group, the repeated hour's readings would be placed an hour early",
				f(prev), f(t))
		}
		prev = t
	}
	return ""
}

// readTimes reads the time column of the log at path (NaN where missing)
// and its group column as small integers (nil when it has none), in any
// order, with the read options opts; naive: its times were written
// without a UTC offset (ingest.TimeBasis).
func readTimes(ctx context.Context, path string, opts []ingest.Option) (times []float64, groups []int32, naive bool, err error) {
	opts = append(append([]ingest.Option(nil), opts...), ingest.WithAllowMissing(true), ingest.WithTimeOrder(ingest.TimeAnyOrder),
		ingest.WithAllowUnterminatedStream(true), ingest.WithOrigin(ingest.Geodetic{}))
	r, err := ingest.Open(path, opts...)
	if err != nil {
		return nil, nil, false, err
	}
	defer r.Release()
	ids := map[string]int32{}
	for r.Next() {
		if err := ctx.Err(); err != nil {
			return nil, nil, false, err
		}
		rec := r.RecordBatch()
		for i, f := range rec.Schema().Fields() {
			col := rec.Column(i)
			switch f.Name {
			case ingest.ColTime:
				fa, ok := col.(*array.Float64)
				if !ok {
					return nil, nil, false, fmt.Errorf("%s: time column has type %s, want float64", path, col.DataType())
				}
				times = append(times, fa.Float64Values()...)
			case ingest.ColGroup:
				for j := 0; j < col.Len(); j++ {
					v := ""
					if !col.IsNull(j) {
						v = col.ValueStr(j)
					}
					id, ok := ids[v]
					if !ok {
						id = int32(len(ids))
						ids[strings.Clone(v)] = id
					}
					groups = append(groups, id)
				}
			}
		}
	}
	if err := r.Err(); err != nil {
		return nil, nil, false, err
	}
	naive, _ = ingest.TimeBasis(r)
	return times, groups, naive, nil
}

// inspectGridWarning is what inspect says of positions that look like a
// projected grid's eastings and northings, as locate does
// (localGeoJSONWarning, gridUnderOrigin): x, y none of which lies within
// originGridM of the origin of an origin line (which locate refuses), or
// within originFarWarnM (which locate warns of), or centred over
// gridLikeM from a log without one (which locate cannot place on a map).
// Found in review: inspect said nothing of grid coordinates at all.
func inspectGridWarning(in *ingest.Inspection) string {
	var xs, ys *ingest.ColumnStats
	geo := false
	for i, c := range in.Columns {
		switch c.Column {
		case ingest.ColX:
			xs = &in.Columns[i]
			geo = strings.HasPrefix(c.Source, "WGS84 ")
		case ingest.ColY:
			ys = &in.Columns[i]
		}
	}
	if xs == nil || ys == nil || geo || xs.Mean == nil || ys.Mean == nil || xs.Min == nil || xs.Max == nil || ys.Min == nil || ys.Max == nil {
		return ""
	}
	b := planBox{xmin: *xs.Min, xmax: *xs.Max, ymin: *ys.Min, ymax: *ys.Max, e: *xs.Mean, n: *ys.Mean}
	switch {
	case in.Origin != nil && b.nearest() > originGridM:
		return gridUnderOriginText(b) + " (locate refuses it)"
	case in.Origin != nil && b.nearest() > originFarWarnM:
		return farFromOriginText(b)
	case in.Origin == nil && math.Hypot(b.e, b.n) > gridLikeM:
		return fmt.Sprintf("the readings are centred about %.0f m east, %.0f m north: they look like a projected grid's eastings and northings (a national grid or UTM), "+
			"which locate cannot place on a map; give the log latitude and longitude (lat, lon and height columns) to have it placed (an origin line is for metres from a nearby point, not for grid coordinates)", b.e, b.n)
	}
	return ""
}
