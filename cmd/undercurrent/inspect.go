package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
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
counted here, not rejected. A log without a time column (a calibration
log, which calibrate reads) is described with "time: none", without the
sampling. The table gives each column's unit in the file
and the unit of the values shown, after conversion: fields in nT,
positions in metres ENU, times in seconds (as UTC dates when they are Unix
times).

In the examples, survey.csv is the survey log of the walk-through in
README.md, and testdata/examples/kestrel-moor-logger.csv an invented
logger's traverse with its field in uT under its own column names;
../shared/data/iaga2002 holds observatory minute files (IAGA-2002, open
data kept beside the repository, not in it): use any IAGA-2002 file.

Examples:
  undercurrent inspect survey.csv
  undercurrent inspect --column bx=fluxE,by=fluxN,bz=fluxU --unit bx=uT,by=uT,bz=uT testdata/examples/kestrel-moor-logger.csv
  undercurrent inspect --json ../shared/data/iaga2002/bou20141101vmin.min`,
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
			for i, w := range in.Warnings {
				in.Warnings[i] = cliWording(w)
			}
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
}

// inspectedColumn is a column of inspect's JSON: ingest's statistics with
// the unit of the values (min, max, mean) beside the unit in the file
// ("unit").
type inspectedColumn struct {
	ingest.ColumnStats
	ValuesUnit string `json:"values_unit,omitempty"`
}

// inspectedLog is inspect's JSON: ingest.Inspection with the columns'
// value units, the origin named as results.json names it, and each gap's
// data row counted from 1 beside ingest's 0-based row.
type inspectedLog struct {
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

// inspectedTime is ingest.TimeStats with inspectedGap gaps.
type inspectedTime struct {
	ingest.TimeStats
	Largest []inspectedGap `json:"largest_gaps"`
}

// inspectedGap is a gap with DataRow, the data row it follows counted
// from 1 (the first reading is data row 1), as the text output says it;
// ingest's row counts from 0.
type inspectedGap struct {
	ingest.Gap
	DataRow int `json:"after_data_row"`
}

func inspectionJSON(in *ingest.Inspection) inspectedLog {
	out := inspectedLog{Inspection: in, Columns: []inspectedColumn{}}
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
	out.Time = inspectedTime{TimeStats: in.Time, Largest: []inspectedGap{}}
	for _, g := range in.Time.Largest {
		out.Time.Largest = append(out.Time.Largest, inspectedGap{Gap: g, DataRow: g.Row + 1})
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
		fmt.Fprintf(tw, "sampling\tmedian step %s s (%s Hz); %s\n", short(t.Interval), short(t.Rate), gaps)
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
