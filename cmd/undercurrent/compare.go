package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/spf13/pflag"

	"undercurrent/report"
)

// compareCSVHead is how a CSV that compare wrote begins: -o replaces only
// such a file.
const compareCSVHead = "conductor,old_key,new_key,"

func init() {
	var set report.CompareSettings
	var asJSON bool
	var out string
	register(&command{
		name:    "compare",
		usage:   "[flags] OLD NEW",
		summary: "compare two surveys of one route: changes of current, losses and cover",
		long: `Compare reads two locate results of one route walked at two times (OLD and
NEW: each a result directory, as locate -o DIR or demo -o DIR writes it, or
its results.json) and says what changed between them: where the current
changed and where a loss (a current-step finding) is new, has grown, shrunk
or gone, where the depth of cover changed (erosion, re-grading, a conductor
re-laid: "now under the minimum cover" where it was not before), and
whether the current along the route changed overall.

NEW's stations are placed on OLD's chainage by projecting their plan
positions onto OLD's route, and every chainage shown is OLD's; NEW's own
offset is noted ("NEW's chainage starts 1.00 m along OLD's route").
Stations of conductor 1 are matched along that chainage when both routes
measure it from about one place (within --tolerance; their matched points
within --tolerance in plan), else by their position in plan; further
conductors by their offset from conductor 1 (within --tolerance) and their
azimuth (within 20 degrees).
Conductors without a partner are listed (one of NEW's with its current and
locate's doubts, such as "not a buried conductor"), stations without one
noted; NEW's stations between two of OLD's (a closer spacing) are compared
with OLD interpolated along the route. Two surveys placed
about different geodetic origins (logs with latitude and longitude each
placed about their own first reading) are brought into OLD's frame; one
placed about an origin and one in local metres only are refused.

Each matched station's change of current and of cover (depth below the
sensors where not both give the cover) has the two surveys' sigmas in
quadrature, sqrt(s1^2 + s2^2), and a z-score. A change is flagged only
when it is beyond --sigmas standard deviations AND beyond the practical
threshold (--min-current-change, --min-cover-change): the fits' sigmas
count the reading noise only, so on a quiet survey a change of a few
milliamps or millimetres is many sigmas and still means nothing on the
ground, while a threshold alone would flag the noise of a poorly determined
station.

A transmitter or CP rectifier set differently changes every current by one
factor. The ratio NEW/OLD along the route is tested for that: its level and
the most significant single step in it. When the level differs from 1
beyond both thresholds the station changes are measured beyond it (NEW -
level x OLD), so a re-set rectifier is not read as a loss at every station;
a step in the ratio is a loss that changed there, bracketed on OLD's
chainage by both walks' stations (widened past a station beside it whose
ratio fits either side). Without a step the level
is the weighted mean of the stations that agree with the median ratio; with
one it is the ratio on the side the current flows from (DC currents are
signed along increasing chainage), so a fall along the flow is a loss
wherever the leak lies, and the stations past it are listed under the step.
A step 5 sigmas out (or --sigmas if more) that explains the ratio's scatter
is found under --min-current-change too, and said to be under it; so is a
current-step finding grown or shrunk beyond --sigmas by less than the
threshold: a defect growing slowly is not "unchanged".
For AC (no direction) both sides' readings are given and each station is
measured against its own side's. A change of depth shared by the stations
(a sensor height or ground level given differently) is reported once and
the stations' cover changes measured beyond it. AC phases are not compared
(they are not comparable between two walks).

Prints a table of the matched stations (flagged changes marked *), the
ratio, the current steps and a list of what changed, with the safety
cautions; --json prints one JSON object instead (stable keys, the cautions
first); -o FILE.csv also writes one row per matched station, and -o
FILE.html a self-contained page in the style of locate's report.html: the
safety cautions first, the ratio NEW/OLD and what it means, the list of what
changed, and per conductor the current and the cover of OLD and NEW along
OLD's chainage (± two sigma, with the minimum cover) and the table of
matched stations. Each file is written whole or not at all. For three or
more surveys see trend. Exits 0 when
the comparison was made, whatever it found; 1 when it cannot be (modes DC
and AC, different AC frequencies, no route, no station in common (the
message gives the nearest separation and the --tolerance that would match),
one file geo-referenced and the other not: the message names both files and
what differs).

Examples (after the README's "Comparing two surveys", which writes the
result directories a, b, results and results2):
  undercurrent compare a b
  undercurrent compare results results2
  undercurrent compare --json results results2 > changes.json
  undercurrent compare --min-current-change 0.05 --min-cover-change 0.15 results results2 -o changes.csv
  undercurrent compare results results2 -o changes.html`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.Float64Var(&set.MinCurrentChange, "min-current-change", 0, "flag a change of current only from `A` amperes (0: 5% of OLD's median current on each conductor)")
			fs.Float64Var(&set.MinCoverChange, "min-cover-change", report.DefaultMinCoverChange, "flag a change of cover (or depth) only from `M` metres")
			fs.Float64Var(&set.Sigmas, "sigmas", report.DefaultCompareSigmas, "flag a change only beyond `K` combined standard deviations")
			fs.Float64Var(&set.Tolerance, "tolerance", report.DefaultTolerance, "stations within `M` metres (along the route, or in plan) are one station")
			fs.BoolVar(&asJSON, "json", false, "print the comparison as one JSON object instead of the table")
			fs.StringVarP(&out, "output", "o", "", "also write `FILE`: .csv one row per matched station, .html the page for a manager (cautions, ratio, what changed, plots); an existing FILE is replaced only when compare wrote it")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 2 {
				return usageErrorf("compare takes two results, OLD and NEW (got %d arguments)", len(args))
			}
			if err := checkCompareSettings(set); err != nil {
				return err
			}
			if out != "" {
				if err := checkCompareOut(out, args); err != nil {
					return err
				}
			}
			oldDoc, oldName, err := readCompared(args[0])
			if err != nil {
				return err
			}
			newDoc, newName, err := readCompared(args[1])
			if err != nil {
				return err
			}
			c, err := report.Compare(oldDoc, newDoc, oldName, newName, set)
			if err != nil {
				return err
			}
			if out != "" {
				if err := writeComparedOut(out, compareOutWriter(out, c)); err != nil {
					return err
				}
			}
			if asJSON {
				return report.WriteComparisonJSON(stdout, c)
			}
			return report.WriteComparisonText(stdout, c)
		},
	})
}

// readCompared reads a result document from path: a results.json, or a
// result directory holding one. It returns the document and the file's
// name.
func readCompared(path string) (*report.Document, string, error) {
	name := path
	if fi, err := os.Stat(path); err == nil && fi.IsDir() {
		name = filepath.Join(path, "results.json")
		if _, err := os.Stat(name); err != nil {
			return nil, "", fmt.Errorf("%s: a directory without results.json: give a result directory as locate -o DIR writes it, or a results.json", path)
		}
	}
	f, err := os.Open(name)
	if err != nil {
		return nil, "", err
	}
	defer f.Close()
	d, err := report.ReadJSON(bufio.NewReader(f), name)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			return nil, "", err
		}
		return nil, "", fmt.Errorf("%s: not a result document that locate writes: %w", name, err)
	}
	return d, name, nil
}

// checkCompareOut checks -o FILE before any work (checkComparedOut): a
// .csv or .html name, not an input, replacing only a file compare wrote.
func checkCompareOut(out string, ins []string) error {
	return checkComparedOut("compare", out, ins, compareOutHeads)
}

// checkCompareSettings refuses compare's and trend's thresholds when
// negative or not a number, and those that must be positive when zero.
func checkCompareSettings(set report.CompareSettings) error {
	for _, f := range []struct {
		name string
		v    float64
		pos  bool
	}{{"--min-current-change", set.MinCurrentChange, false}, {"--min-cover-change", set.MinCoverChange, true}, {"--sigmas", set.Sigmas, true}, {"--tolerance", set.Tolerance, true}} {
		if f.v < 0 || f.pos && f.v == 0 || f.v != f.v {
			return usageErrorf("%s %g: must be a positive number", f.name, f.v)
		}
	}
	return nil
}
