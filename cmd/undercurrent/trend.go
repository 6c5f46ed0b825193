package main

import (
	"context"
	"io"

	"github.com/spf13/pflag"

	"undercurrent/report"
)

// trend is its own command, not compare with more arguments: its result is
// another document (one table of N surveys, a supply ratio per survey and
// the changes of N-1 intervals, JSON kind "survey-trend") where compare's
// is one pair's (kind "survey-comparison", whose keys scripts read), and
// each of its pairs is compare's own comparison, so compare OLD NEW stays
// what it was.
func init() {
	var set report.CompareSettings
	var asJSON bool
	var out string
	register(&command{
		name:    "trend",
		usage:   "[flags] R1 R2 R3 ...",
		summary: "follow one route over three or more surveys: current, cover and supply per survey, changes between each two",
		long: `Trend reads three or more locate results of one route walked at different
times, oldest first (each a result directory, as locate -o DIR or demo -o
DIR writes it, or its results.json), and follows the route over them.

Each survey is placed on the first survey's chainage frame by comparing it
with the first as compare does (stations matched by chainage or in plan,
further conductors by offset and azimuth, another geodetic origin brought
into the first's frame, a route walked the other way turned), so that one
table per conductor gives every station's current and cover (or depth
below the sensors, where not every survey knows the ground) in each
survey, with one-sigma uncertainties. The supply ratio of each survey is
its current over the first's along conductor 1 (compare's ratio level): a
ratio other than 1 along the whole route means the rectifier, transmitter
or load changed, not a loss. What changed is listed between consecutive
surveys (1 -> 2, 2 -> 3, ...), as compare OLD NEW lists it for that pair,
with the chainage taken onto the first survey's. Each current step found
on a conductor is followed survey by survey: its size in each, its growth
against the first survey (whatever the thresholds) and its change since the
survey before; a survey that walked only part of the route is "not
covered" at a step beyond its stations, and the surveys around it are
compared there instead.

Prints the surveys with their supply ratios, each conductor's table, the
current steps per survey and the changes between each two surveys, with
the safety cautions; --json prints one JSON object instead (stable keys,
the cautions first, kind "survey-trend"); -o FILE.html also writes a
self-contained page in the style of locate's report.html: the cautions
first, the surveys and their supply ratios, the changes, the current steps
survey by survey, and per conductor the current and cover along the route
with one line per survey, and the table. The thresholds are
compare's. Exits 0 when the trend was made, whatever it found; 1 when a
pair cannot be compared (the message names both files).

Examples (after the README's "Comparing two surveys", which writes the
result directories results, results2 and results3):
  undercurrent trend results results2 results3
  undercurrent trend --json results results2 results3 > trend.json
  undercurrent trend results results2 results3 -o trend.html`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.Float64Var(&set.MinCurrentChange, "min-current-change", 0, "flag a change of current only from `A` amperes (0: 5% of the earlier survey's median current on each conductor)")
			fs.Float64Var(&set.MinCoverChange, "min-cover-change", report.DefaultMinCoverChange, "flag a change of cover (or depth) only from `M` metres")
			fs.Float64Var(&set.Sigmas, "sigmas", report.DefaultCompareSigmas, "flag a change only beyond `K` combined standard deviations")
			fs.Float64Var(&set.Tolerance, "tolerance", report.DefaultTolerance, "stations within `M` metres (along the route, or in plan) are one station")
			fs.BoolVar(&asJSON, "json", false, "print the trend as one JSON object instead of the tables")
			fs.StringVarP(&out, "output", "o", "", "also write the page for a manager to `FILE` (.html); an existing FILE is replaced only when trend wrote it")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) < 3 {
				return usageErrorf("trend takes three or more results, oldest first (got %d arguments); for two, use compare OLD NEW", len(args))
			}
			if err := checkCompareSettings(set); err != nil {
				return err
			}
			if out != "" {
				if err := checkComparedOut("trend", out, args, trendOutHeads); err != nil {
					return err
				}
			}
			docs := make([]*report.Document, len(args))
			names := make([]string, len(args))
			for i, a := range args {
				d, name, err := readCompared(a)
				if err != nil {
					return err
				}
				docs[i], names[i] = d, name
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			t, err := report.CompareSeries(docs, names, set)
			if err != nil {
				return err
			}
			if out != "" {
				if err := writeComparedOut(out, func(w io.Writer) error { return report.WriteTrendHTML(w, t) }); err != nil {
					return err
				}
			}
			if asJSON {
				return report.WriteTrendJSON(stdout, t)
			}
			return report.WriteTrendText(stdout, t)
		},
	})
}
