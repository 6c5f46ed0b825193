package main

import (
	"context"
	"fmt"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// currentRefFlags are --current-reference and its column and unit flags: a
// record of the conductors' current in time (logged at a rectifier or by a
// clamp meter) that the DC fits scale each reading's conductor field by.
type currentRefFlags struct {
	path    string
	columns []string
	units   []string
}

func (c *currentRefFlags) setFlags(fs *pflag.FlagSet) {
	fs.StringVar(&c.path, "current-reference", "", "a record of the conductors' current in time, `FILE` (CSV, Arrow or Parquet; columns time and current, in A unless the name or --current-reference-unit says mA or kA), logged at the rectifier or by a clamp meter while the survey was walked: each reading's conductor field (not the background) is scaled by the record's current at its time (linear between samples) over its mean across the survey, so the currents fitted are those at that mean, and a load that swings during the walk (trams, trains) makes no phantom lines; DC only")
	fs.StringSliceVar(&c.columns, "current-reference-column", nil, "name the current record's columns, `CANON=NAME` as --column does for the survey logs (time=Time,current=I_rect)")
	fs.StringSliceVar(&c.units, "current-reference-unit", nil, "units of the current record's columns, `CANON=UNIT` (current=kA, time=ms)")
}

// check refuses the flags that need --current-reference without it, and
// the record with --freq (an AC fit's currents are not scaled).
func (c *currentRefFlags) check(o *locateOptions) error {
	switch {
	case c.path == "" && len(c.columns) > 0:
		return usageErrorf("--current-reference-column needs --current-reference")
	case c.path == "" && len(c.units) > 0:
		return usageErrorf("--current-reference-unit needs --current-reference")
	case c.path != "" && o.freq > 0:
		return usageErrorf("--current-reference scales DC fits only; it does not apply with --freq")
	}
	return nil
}

// applyCurrentReference reads the current record, when one is given, and
// sets each group's per-reading ratio (group.scale, inverse.Problem.Scale):
// the record's current at the reading's time over its time average across
// the survey (calibrate.CurrentRatios). A record that does not cover the
// survey's times, or whose current is missing or not positive there, is
// refused, naming the file. The run's notes say to what current the
// currents are scaled.
func applyCurrentReference(ctx context.Context, o *locateOptions, sv *survey) error {
	path := o.curRef.path
	if path == "" {
		return nil
	}
	opts := []ingest.Option{ingest.WithCurrentRecord(true), ingest.WithAllowMissing(true)}
	if len(o.curRef.columns) > 0 {
		opts = append(opts, ingest.WithColumns(o.curRef.columns...))
	}
	if len(o.curRef.units) > 0 {
		opts = append(opts, ingest.WithUnits(o.curRef.units...))
	}
	s, err := readSamples(ctx, path, opts...)
	if err != nil {
		if isInterrupt(err) {
			return err
		}
		msg := strings.ReplaceAll(strings.ReplaceAll(err.Error(), "--column ", "--current-reference-column "), "--unit ", "--current-reference-unit ")
		return fmt.Errorf("%s (the current record, --current-reference)", msg)
	}
	for _, w := range s.Warnings {
		sv.warnings = append(sv.warnings, path+": "+cliWording(w))
	}
	var at []float64
	for _, g := range sv.groups {
		at = append(at, g.stamps...)
	}
	cr, err := calibrate.CurrentRatios(path, s.Time, s.Current, at)
	if err != nil {
		return err
	}
	k := 0
	for _, g := range sv.groups {
		g.scale = cr.Ratio[k : k+len(g.stamps) : k+len(g.stamps)]
		k += len(g.stamps)
	}
	sv.doc.Inputs = append(sv.doc.Inputs, fileInput("current reference", path, s.Len()))
	sv.doc.Notes = append(sv.doc.Notes, fmt.Sprintf("currents scaled to the reference's mean of %.4g A (%s, %.4g to %.4g A during the survey): each reading's conductor field was scaled by the recorded current at its time over that mean, so every current here is the conductors' current when %s reads %.4g A",
		cr.Mean, path, cr.Min, cr.Max, path, cr.Mean))
	return nil
}
