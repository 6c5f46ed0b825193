package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
	"undercurrent/report"
)

// demoLog is the name of the simulated log in the demo's directory.
const demoLog = "fenwick-lane.csv"

func init() {
	var out string
	var decimalComma bool
	register(&command{
		name:    "demo",
		outDir:  true,
		usage:   "[-o DIR]",
		summary: "simulate the bundled Fenwick Lane survey and run the whole job on it",
		long: `Demo simulates the bundled example survey (` + simulate.DemoPath + `):
31 traverses walked across the invented Fenwick Lane 11 kV cable out of
Harrow Fen substation, logged at 500 Hz. The cable has a shallow stretch and
loses current at an earth fault partway; a low-voltage cable runs beside it
for a while and a buried steel object lies near one traverse.

It then runs locate on the log as a surveyor would (demodulating the 50 Hz
field, fitting each traverse, building the route) and writes into DIR the log
(` + demoLog + `), results.json, results.csv, findings.csv, route.geojson and
report.html, the crew report to open in a browser. DIR is written whole or not at all;
missing parent directories are made, and removed again if the run fails.

Examples:
  undercurrent demo
  undercurrent demo -o /tmp/fenwick`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.StringVarP(&out, "output", "o", filepath.Join("out", "demo"), "write the log and the results into `DIR`")
			fs.BoolVar(&decimalComma, "csv-decimal-comma", false, "write results.csv and findings.csv with a semicolon between fields and a decimal comma (60,015), as locate --csv-decimal-comma does (the log is written as usual)")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 0 {
				return usageErrorf("demo takes no arguments (got %q); use -o DIR to choose where the results go", args[0])
			}
			if out == "" {
				return usageErrorf("-o needs a directory")
			}
			return runDemo(ctx, out, report.CSVOptions{DecimalComma: decimalComma}, stdout, progressOn(stderr))
		},
	})
}

// runDemo simulates the demo scenario into a staging directory, locates on
// it, writes the results beside it, and moves the directory into place.
func runDemo(ctx context.Context, out string, csvOpt report.CSVOptions, stdout, progress io.Writer) error {
	start := time.Now()
	if err := checkOutDir(out, []string{demoLog}); err != nil {
		return err
	}
	sc, err := simulate.Demo()
	if err != nil {
		return err
	}
	s, err := await(ctx, func() (*ingest.Samples, error) { return simulate.Simulate(sc) })
	if err != nil {
		return err
	}
	// The locate settings a surveyor would give for this survey: the
	// cable's frequency, a window of five cycles (0.1 s: short enough that
	// the sensor, walked at 1 m/s, moves only 0.1 m while the window
	// averages the field; see locate's window-travel warning), one fit per
	// traverse, the sensor's height above ground (held to about 2 cm, an
	// assumed figure for a carried sensor) and a minimum cover for 11 kV
	// cables.
	o := &locateOptions{
		freq:         50,
		window:       0.1,
		count:        "auto",
		groupBy:      ingest.ColGroup,
		sensorHeight: sc.Sensor.Height,
		groundSigma:  0.02,
		minCover:     0.6,
		minStep:      2,
		coverCode:    "UK 11 kV distribution practice, 600-700 mm",
		title:        "Fenwick Lane 11 kV cable route (demo)",
		keepNames:    []string{demoLog},
		lineAbove:    true,
	}
	if err := o.check(nil); err != nil {
		return err
	}
	o.given = map[string]string{
		"freq": "50", "window": "0.1", "group-by": ingest.ColGroup,
		"sensor-height": strconv.FormatFloat(sc.Sensor.Height, 'g', -1, 64),
		"ground-sigma":  "0.02", "min-cover": "0.6", "cover-code": o.coverCode,
	}
	var doc *report.Document
	err = stageDir(ctx, out, o.keepNames, func(tmp string) error {
		logPath := filepath.Join(tmp, demoLog)
		if err := ingest.WriteSamples(logPath, s); err != nil {
			return err
		}
		var err error
		if doc, err = runLocate(ctx, o, []string{logPath}, progress); err != nil {
			return err
		}
		// Name the log where it will be, not where it was staged.
		renameLog(doc, logPath, filepath.Join(out, demoLog))
		if err := ctx.Err(); err != nil {
			return err
		}
		return writeDocFiles(tmp, doc, csvOpt)
	})
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "simulated %s: %d readings on %d traverses (%s)\n", simulate.DemoPath, s.Len(), len(sc.Lines()), sc.Site)
	printFindings(stdout, doc)
	fmt.Fprintf(stdout, "done in %.1f s. Open the crew report: %s\n", time.Since(start).Seconds(), filepath.Join(out, "report.html"))
	csvFlag := ""
	if csvOpt.DecimalComma {
		csvFlag = " --csv-decimal-comma"
	}
	fmt.Fprintf(stdout, "the log and the other results are beside it; rerun the fit with:\n  undercurrent locate --freq 50 --window 0.1 --group-by group --sensor-height %g --ground-sigma 0.02 --min-cover 0.6 --cover-code %s%s %s -o %s\n",
		sc.Sensor.Height, shellQuote(o.coverCode), csvFlag, shellQuote(filepath.Join(out, demoLog)), shellQuote(filepath.Clean(out)+"-rerun"))
	return nil
}

// printFindings prints a short account of a result document, then the
// cautions.
func printFindings(w io.Writer, doc *report.Document) {
	sound, _ := soundGroups(doc)
	fmt.Fprintf(w, "located: %d of %d traverses fitted soundly", sound, len(doc.Groups))
	if obj := objectGroups(doc); obj > 0 {
		fmt.Fprintf(w, " (%d left out as holding a magnetised object)", obj)
	}
	if doc.Route != nil {
		fmt.Fprintf(w, "; route %.0f m long", doc.Route.Length)
	}
	for _, c := range doc.Conductors {
		side := "right"
		if c.Offset < 0 {
			side = "left"
		}
		fmt.Fprint(w, report.ConductorBrief(doc, &c, fmt.Sprintf("; conductor %d followed on %d traverses, %.1f m to the %s of conductor 1 looking along the route", c.Number, len(c.Route.Stations), math.Abs(c.Offset), side)))
	}
	fmt.Fprintln(w)
	if len(doc.Findings) == 0 {
		fmt.Fprintln(w, "findings: none")
	} else {
		fmt.Fprintf(w, "findings (%d):\n", len(doc.Findings))
	}
	for _, f := range doc.Findings {
		fmt.Fprintf(w, "  %-8s %s\n", f.Severity, strings.TrimSpace(f.Message))
	}
	for _, wn := range doc.Warnings {
		fmt.Fprintf(w, "note: %s\n", wn)
	}
	for _, n := range doc.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	printCautions(w)
}

// soundGroups counts the groups whose fit is sound: converged, with no
// problem of its own, not called poor by a poor-fit caution or warning of
// the route (a misfit far above the noise), and not left out of the
// current and cover profile as a magnetised object (objectGroups); it also
// counts the readings.
func soundGroups(doc *report.Document) (sound, readings int) {
	sound, _, readings = groupCounts(doc)
	return sound, readings
}

// objectGroups counts the groups that would be sound but hold a
// magnetised object and are left out of the current and cover profile: in
// review a traverse left out so (a burst at the sensor taken for a buried
// object) was still counted sound in the summary.
func objectGroups(doc *report.Document) int {
	_, objects, _ := groupCounts(doc)
	return objects
}

// groupCounts counts the sound groups, the groups otherwise sound left out
// as magnetised objects (report.SoundGroups, as the HTML report counts
// them), and the readings.
func groupCounts(doc *report.Document) (sound, objects, readings int) {
	for _, g := range doc.Groups {
		readings += g.Points
	}
	sound, objects = report.SoundGroups(doc)
	return sound, objects, readings
}

// shellQuote quotes s for a POSIX shell when it holds anything but plain
// characters.
func shellQuote(s string) string {
	if s != "" && strings.Trim(s, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-_./=:,+") == "" {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// renameLog names the log from as to wherever the document names it: its
// inputs, its groups' logs and its base gaps' logs, so that each group's
// log joins inputs[] (the demo fits a log in a staging directory that is
// then moved into place).
func renameLog(doc *report.Document, from, to string) {
	for i := range doc.Inputs {
		if doc.Inputs[i].Path == from {
			doc.Inputs[i].Path = to
		}
	}
	for i := range doc.Groups {
		if doc.Groups[i].Log == from {
			doc.Groups[i].Log = to
		}
	}
	if c := doc.BaseStation; c != nil {
		for j := range c.BaseGaps {
			if c.BaseGaps[j].Log == from {
				c.BaseGaps[j].Log = to
			}
		}
	}
}
