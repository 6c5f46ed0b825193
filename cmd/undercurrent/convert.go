package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
)

func init() {
	var rf readFlags
	var strict, force bool
	register(&command{
		name:    "convert",
		usage:   "[flags] IN OUT",
		summary: "convert a log (also IAGA-2002) to CSV, Arrow IPC or Parquet in canonical columns",
		long: `Convert reads IN (CSV, Arrow IPC file or stream, Parquet or IAGA-2002,
detected from the content), maps it to the canonical columns (time, x, y,
z in metres ENU, bx, by, bz in nT, group, ...) and writes OUT in the format
given by its extension, in any case: .csv or .txt (CSV), .arrow, .feather
or .ipc (Arrow IPC file), .arrows (Arrow IPC stream), or .parquet or .pq
(Parquet); OUT's directory must exist. A conversion between these formats
keeps every value exactly as the 64-bit float it is read as, with the
frame, the WGS84 origin and header fields; times are Unix seconds, whose
float64 steps are 2^-22 s (0.24 µs) from 2004 to 2038, so finer time
stamps (RFC 3339 or Arrow timestamps in ns) round by up to 0.12 µs. OUT is
written under a temporary name and renamed, so a failure leaves nothing
half-written. An OUT that exists (and is not empty) is refused before any
work unless --force is given, so that IN and OUT given the wrong way round
(convert survey.parquet survey.csv, meaning the other way) cannot replace
a log. Missing values (NaN) are carried over unless --strict
refuses them or --drop-missing drops their rows. It warns when the log has
no readings, or when the field's median |B| is far from the Earth's field
(a unit is probably wrong; see "undercurrent inspect").

In the examples, survey.csv is the survey log of the walk-through in
README.md, and testdata/examples/kestrel-moor-logger.csv an invented
logger's traverse with its field in uT under its own column names;
testdata/examples/harrow-fen-base.min is an invented base station's
minute record in IAGA-2002 (an observatory's own file reads the same).

Examples:
  undercurrent convert survey.csv survey.parquet
  undercurrent convert --column bx=fluxE,by=fluxN,bz=fluxU --unit bx=uT,by=uT,bz=uT testdata/examples/kestrel-moor-logger.csv logger.arrow
  undercurrent convert testdata/examples/harrow-fen-base.min base.arrows`,
		setFlags: func(fs *pflag.FlagSet) {
			rf.add(fs)
			rf.addMissing(fs)
			fs.BoolVar(&strict, "strict", false, "treat missing values (NaN, empty cells, nulls) as errors")
			fs.BoolVar(&force, "force", false, "replace OUT if it exists (without it an existing OUT is refused, so that IN and OUT swapped cannot replace a log)")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 2 {
				return usageErrorf("convert takes IN and OUT, got %s", plural(len(args), "argument"))
			}
			in, out := args[0], args[1]
			if strict && rf.dropMissing {
				return usageErrorf("give --strict (refuse missing values) or --drop-missing (drop their rows), not both")
			}
			if err := checkLogExt(out); err != nil {
				// checkLogExt's message, with the other spellings.
				return usageErrorf("OUT %s: %v", out, err)
			}
			if a, errA := filepath.Abs(in); errA == nil {
				if b, errB := filepath.Abs(out); errB == nil && a == b {
					return usageErrorf("IN and OUT are the same file")
				}
			}
			if err := checkOutputs([][2]string{{"OUT", out}}, [][2]string{{"IN", in}}); err != nil {
				return err
			}
			if err := checkParentDir(out); err != nil {
				return fmt.Errorf("OUT %s: %w", out, err)
			}
			if err := checkNewFile("OUT", out, force); err != nil {
				return err
			}
			opts, err := rf.options(fs)
			if err != nil {
				return err
			}
			if err := rf.checkIAGA("IN", in); err != nil {
				return err
			}
			originWarns, err := rf.checkOriginNear([]string{in}, opts)
			if err != nil {
				return err
			}
			for _, w := range originWarns {
				fmt.Fprintf(stderr, "warning: %s\n", w)
			}
			if rf.dropMissing {
				// Rows are dropped in memory: the log is read whole.
				s, warns, err := rf.readLog(ctx, in, opts, false)
				if err != nil {
					return err
				}
				if err := ctx.Err(); err != nil {
					return err
				}
				if err := writeSamplesLog(out, s, force); err != nil {
					return err
				}
				for _, w := range warns {
					fmt.Fprintf(stderr, "warning: %s\n", w)
				}
				if w, err := checkFieldUnits(ctx, in, s.Bx, s.By, s.Bz, opts, true); err == nil && w != "" {
					fmt.Fprintf(stderr, "warning: %s\n", w)
				}
				fmt.Fprintf(stderr, "wrote %s: %d rows\n", out, s.Len())
				return nil
			}
			progress, done := rowProgress(stderr, "converting")
			// WithContext: a read waiting on an idle pipe gives way
			// to Ctrl-C or SIGTERM (the reader stops with the
			// context's error and the output is not written).
			opts = append(opts, ingest.WithAllowMissing(!strict), progress, ingest.WithContext(ctx))
			r, err := await(ctx, func() (ingest.Reader, error) { return ingest.Open(in, opts...) })
			if err != nil {
				done()
				return err
			}
			defer r.Release()
			cr := &countingReader{Reader: r, ctx: ctx}
			err = writeLog(out, cr, force)
			done()
			if err != nil {
				return err
			}
			if cr.ctx.Err() != nil {
				os.Remove(out)
				return cr.ctx.Err()
			}
			if cr.rows == 0 {
				fmt.Fprintf(stderr, "warning: %s: no readings: %s has the columns and no rows\n", in, out)
			}
			for _, w := range ingest.Warnings(r) {
				fmt.Fprintf(stderr, "warning: %s\n", cliWording(w))
			}
			if w, err := checkFieldUnits(ctx, in, cr.bx, cr.by, cr.bz, opts, true); err == nil && w != "" {
				fmt.Fprintf(stderr, "warning: %s\n", w)
			}
			fmt.Fprintf(stderr, "wrote %s: %d rows\n", out, cr.rows)
			return nil
		},
	})
}

// countingReader counts rows and stops at cancellation (the writer then
// fails and leaves no output).
// It keeps the field of the first rows for checkFieldUnits.
type countingReader struct {
	ingest.Reader
	ctx        context.Context
	rows       int64
	err        error
	bx, by, bz []float64
}

// keepRows is how many rows' field countingReader keeps.
const keepRows = 1 << 16

func (c *countingReader) Next() bool {
	if err := c.ctx.Err(); err != nil {
		c.err = err
		return false
	}
	if !c.Reader.Next() {
		return false
	}
	rec := c.Reader.RecordBatch()
	c.rows += rec.NumRows()
	if len(c.bx) < keepRows {
		cols := [3][]float64{ingest.Float64Column(rec, ingest.ColBx), ingest.Float64Column(rec, ingest.ColBy), ingest.Float64Column(rec, ingest.ColBz)}
		if cols[0] != nil && cols[1] != nil && cols[2] != nil {
			n := min(len(cols[0]), keepRows-len(c.bx))
			c.bx = append(c.bx, cols[0][:n]...)
			c.by = append(c.by, cols[1][:n]...)
			c.bz = append(c.bz, cols[2][:n]...)
		}
	}
	return true
}

func (c *countingReader) Err() error {
	if c.err != nil {
		return c.err
	}
	return c.Reader.Err()
}
