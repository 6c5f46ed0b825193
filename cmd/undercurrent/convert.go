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
	var strict bool
	register(&command{
		name:    "convert",
		usage:   "[flags] IN OUT",
		summary: "convert a log between CSV, Arrow IPC and Parquet in canonical columns",
		long: `Convert reads IN (CSV, Arrow IPC file or stream, Parquet or IAGA-2002,
detected from the content), maps it to the canonical columns (time, x, y,
z in metres ENU, bx, by, bz in nT, group, ...) and writes OUT in the format
given by its extension: .csv, .arrow (Arrow IPC file), .arrows (Arrow IPC
stream) or .parquet. A conversion between these formats keeps every value
exactly, with the frame, the WGS84 origin and header fields. OUT is
written under a temporary name and renamed, so a failure leaves nothing
half-written. Missing values (NaN) are carried over unless --strict.

Examples:
  undercurrent convert harrow-fen-traverse.csv harrow-fen-traverse.parquet
  undercurrent convert --column bx=Bx_uT,by=By_uT,bz=Bz_uT logger.csv fenwick-lane.arrow
  undercurrent convert ../shared/data/iaga2002/bou20141101vmin.min base.arrows`,
		setFlags: func(fs *pflag.FlagSet) {
			rf.add(fs)
			fs.BoolVar(&strict, "strict", false, "treat missing values (NaN, empty cells, nulls) as errors")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 2 {
				return usageErrorf("convert takes IN and OUT, got %d arguments", len(args))
			}
			in, out := args[0], args[1]
			if _, err := ingest.FormatFromExt(out); err != nil {
				return usageErrorf("OUT %s: want a .csv, .arrow, .arrows or .parquet name", out)
			}
			if a, errA := filepath.Abs(in); errA == nil {
				if b, errB := filepath.Abs(out); errB == nil && a == b {
					return usageErrorf("IN and OUT are the same file")
				}
			}
			opts, err := rf.options(fs)
			if err != nil {
				return err
			}
			progress, done := rowProgress(stderr, "converting")
			opts = append(opts, ingest.WithAllowMissing(!strict), progress)
			r, err := ingest.Open(in, opts...)
			if err != nil {
				return err
			}
			defer r.Release()
			cr := &countingReader{Reader: r, ctx: ctx}
			err = ingest.WriteReader(out, cr)
			done()
			if err != nil {
				return err
			}
			if cr.ctx.Err() != nil {
				os.Remove(out)
				return cr.ctx.Err()
			}
			fmt.Fprintf(stderr, "wrote %s: %d rows\n", out, cr.rows)
			return nil
		},
	})
}

// countingReader counts rows and stops at cancellation (the writer then
// fails and leaves no output).
type countingReader struct {
	ingest.Reader
	ctx  context.Context
	rows int64
	err  error
}

func (c *countingReader) Next() bool {
	if err := c.ctx.Err(); err != nil {
		c.err = err
		return false
	}
	if !c.Reader.Next() {
		return false
	}
	c.rows += c.Reader.RecordBatch().NumRows()
	return true
}

func (c *countingReader) Err() error {
	if c.err != nil {
		return c.err
	}
	return c.Reader.Err()
}
