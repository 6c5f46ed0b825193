package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
)

// readFlags are the options that say how to read a log; inspect and convert
// share them.
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
	// iagaBaseline leaves IAGA-2002 variation data in the baseline frame.
	iagaBaseline bool
	decimalComma bool
}

func (f *readFlags) add(fs *pflag.FlagSet) {
	fs.StringSliceVar(&f.columns, "column", nil, "map canonical columns to the file's names: `CANON=NAME`, e.g. bx=Bx_uT,time=t_s (repeatable)")
	fs.StringSliceVar(&f.units, "unit", nil, "units of columns: `CANON=UNIT`, e.g. bx=uT,time=ms (field nT/uT/mT/G/T, length m/cm/mm/km/ft; repeatable)")
	fs.StringSliceVar(&f.columnsOld, "columns", nil, "same as --column")
	fs.StringSliceVar(&f.unitsOld, "units", nil, "same as --unit")
	_ = fs.MarkHidden("columns")
	_ = fs.MarkHidden("units")
	fs.StringVar(&f.delimiter, "delimiter", "", `CSV delimiter: one character, "tab" or "space" (default: guessed)`)
	fs.StringVar(&f.comment, "comment", "#", "prefix of CSV comment lines")
	fs.StringSliceVar(&f.header, "header", nil, "column names for a CSV file without a header line")
	fs.StringVar(&f.frame, "frame", "enu", "axes of the field and position columns: enu, ned or sensor")
	fs.StringVar(&f.origin, "origin", "first", "origin for WGS84 positions: first, mean or LAT,LON[,HEIGHT]")
	fs.BoolVar(&f.decimalComma, "decimal-comma", false, "CSV numbers write decimals with a comma (12,5); default: detected from the first data row when the delimiter is not a comma; --decimal-comma=false refuses them")
	fs.BoolVar(&f.iagaBaseline, "iaga-baseline-frame", false, "leave IAGA-2002 variation data (H D Z, H E Z) in the observatory's baseline frame instead of turning them to geographic north by the header's DECBAS")
}

func (f *readFlags) options(fs *pflag.FlagSet) ([]ingest.Option, error) {
	var opts []ingest.Option
	f.columns = append(f.columns, f.columnsOld...)
	f.units = append(f.units, f.unitsOld...)
	f.columnsOld, f.unitsOld = nil, nil
	if len(f.columns) > 0 {
		opts = append(opts, ingest.WithColumns(f.columns...))
	}
	if len(f.units) > 0 {
		opts = append(opts, ingest.WithUnits(f.units...))
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
	if fs.Changed("comment") {
		opts = append(opts, ingest.WithComment(f.comment))
	}
	if len(f.header) > 0 {
		opts = append(opts, ingest.WithHeader(f.header...))
	}
	if f.iagaBaseline {
		opts = append(opts, ingest.WithIAGABaselineFrame(true))
	}
	if fs.Changed("decimal-comma") {
		opts = append(opts, ingest.WithDecimalComma(f.decimalComma))
	}
	if fs.Changed("frame") {
		fr, err := ingest.ParseFrame(f.frame)
		if err != nil {
			return nil, usageErrorf("--frame %q: want enu, ned or sensor", f.frame)
		}
		opts = append(opts, ingest.WithFrame(fr))
	}
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
		if v[0] < -90 || v[0] > 90 || v[1] < -180 || v[1] > 360 {
			return nil, usageErrorf("--origin %q: latitude or longitude out of range", o)
		}
		opts = append(opts, ingest.WithOrigin(ingest.Geodetic{Lat: v[0], Lon: v[1], H: v[2]}))
	}
	return opts, nil
}

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
units look wrong (an Earth field of 0.05 in a column read as nT is not
nanotesla). Missing values and time going backwards are counted here, not
rejected. Field values are shown in nT, positions in metres, ENU.

Examples:
  undercurrent inspect harrow-fen-traverse.csv
  undercurrent inspect --column bx=Bx_uT,by=By_uT,bz=Bz_uT fenwick-lane.csv
  undercurrent inspect --json ../shared/data/iaga2002/bou20141101vmin.min`,
		setFlags: func(fs *pflag.FlagSet) {
			rf.add(fs)
			fs.BoolVar(&asJSON, "json", false, "print machine-readable JSON")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 1 {
				return usageErrorf("inspect takes one FILE, got %d arguments", len(args))
			}
			opts, err := rf.options(fs)
			if err != nil {
				return err
			}
			progress, done := rowProgress(stderr, "reading")
			in, err := ingest.Inspect(args[0], append(opts, progress)...)
			done()
			if err != nil {
				return err
			}
			if asJSON {
				enc := json.NewEncoder(stdout)
				enc.SetIndent("", "  ")
				return enc.Encode(in)
			}
			printInspection(stdout, in)
			return nil
		},
	})
}

func num(v *float64) string {
	if v == nil {
		return "-"
	}
	return strconv.FormatFloat(*v, 'g', 7, 64)
}

func printInspection(w io.Writer, in *ingest.Inspection) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintf(tw, "file\t%s (%s)\n", in.File, in.Format)
	fmt.Fprintf(tw, "rows\t%d\n", in.Rows)
	fmt.Fprintf(tw, "frame\t%s\n", in.Frame)
	if in.Origin != nil {
		fmt.Fprintf(tw, "origin\tlat %.9g, lon %.9g, height %.4g m (WGS84)\n", in.Origin.Lat, in.Origin.Lon, in.Origin.H)
	}
	t := in.Time
	span := fmt.Sprintf("%g to %g s (%g s)", t.Start, t.End, t.Duration)
	if t.StartUTC != "" {
		span = fmt.Sprintf("%s to %s (%g s)", t.StartUTC, t.EndUTC, t.Duration)
	}
	fmt.Fprintf(tw, "time\t%s\n", span)
	if t.Interval > 0 {
		gaps := fmt.Sprintf("%d gaps", t.Gaps)
		if t.GapsAtLeast {
			gaps = fmt.Sprintf("at least %d gaps", t.Gaps)
		}
		if len(t.Largest) > 0 {
			g := t.Largest[0]
			gaps += fmt.Sprintf(", longest %g s after row %d", g.Length, g.Row)
		}
		fmt.Fprintf(tw, "sampling\tmedian step %.6g s (%.6g Hz); %s\n", t.Interval, t.Rate, gaps)
	}
	if t.Backwards > 0 || t.Repeated > 0 {
		fmt.Fprintf(tw, "order\t%d steps backwards, %d repeated times\n", t.Backwards, t.Repeated)
	}
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "column\tsource\tunit\tmin\tmax\tmean\tmissing\t")
	for _, c := range in.Columns {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%d\t\n", c.Column, c.Source, c.Unit, num(c.Min), num(c.Max), num(c.Mean), c.Missing)
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
