package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

func init() {
	var (
		out, baseOut, truthOut string
		seed                   int64
		force                  bool
	)
	register(&command{
		name:    "simulate",
		usage:   "[flags] SCENARIO -o LOG",
		summary: "forward-model a magnetometer log from a scenario file",
		long: `Simulate reads a scenario file (TOML: conductors and their currents, the
survey pattern, sensor height, noise and distortion, the Earth's field and
its drift; see testdata/demo/fenwick-lane.toml for a commented example) and
writes the log a sensor would have recorded. The output format follows the
extension of LOG: .csv, .arrow (Arrow IPC file), .arrows (Arrow IPC stream)
or .parquet, in any case. Each survey line gets its own value in the group
column; with pattern = "fixed" each fixed sensor's rows carry its name and
its readings in its own axes: a log for the replay command. The directory of
each output file must exist. An output file that exists (and is not
empty) is refused before any work unless --force is given, so that a
mistyped name cannot replace a log; the files are written under temporary
names and put in place together, so a run that fails leaves none of them.

Use it to plan a survey (is this current detectable at this depth with this
sensor?) and to check the locate command against known answers. It prints
the largest field each conductor produces at the sensor and its ratio to the
sensor noise.

Examples:
  undercurrent simulate testdata/demo/fenwick-lane.toml -o fenwick-lane.csv
  undercurrent simulate testdata/scenarios/kestrel-moor-step.toml -o kestrel.parquet --base-log kestrel-base.csv
  undercurrent simulate --seed 7 testdata/scenarios/single-line.toml -o line.arrow --truth line-truth.csv
  undercurrent simulate testdata/scenarios/harrow-fen-fixed.toml -o recorded.arrows`,
		setFlags: func(fs *pflag.FlagSet) {
			fs.StringVarP(&out, "output", "o", "", "write the log to `LOG` (.csv, .arrow, .arrows or .parquet)")
			fs.StringVar(&baseOut, "base-log", "", "also write the scenario's base-station log to `FILE`")
			fs.StringVar(&truthOut, "truth", "", "also write where each survey line crosses each conductor (position, depth, and the current when the sensor passed over it, after any change_at_s; time_s gives when) to CSV `FILE` (.csv or .txt), to compare with locate's results")
			fs.Int64Var(&seed, "seed", 0, "override the scenario's random seed")
			fs.BoolVar(&force, "force", false, "replace LOG, and the --base-log and --truth files, if they exist (without it an existing file is refused, so that a mistyped name cannot replace a log)")
		},
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 1 {
				return usageErrorf("simulate takes one SCENARIO file, got %s", plural(len(args), "argument"))
			}
			if out == "" {
				return usageErrorf("missing -o LOG: where to write the log")
			}
			if err := checkOutFile("-o", out, true); err != nil {
				return err
			}
			if baseOut != "" {
				if err := checkOutFile("--base-log", baseOut, true); err != nil {
					return err
				}
			}
			if truthOut != "" {
				if err := checkOutFile("--truth", truthOut, false); err != nil {
					return err
				}
			}
			outs := [][2]string{{"-o", out}, {"--base-log", baseOut}, {"--truth", truthOut}}
			if err := checkOutputs(outs, [][2]string{{"SCENARIO", args[0]}}); err != nil {
				return err
			}
			if err := checkTruthExt(truthOut); err != nil {
				return err
			}
			for _, o := range outs {
				if o[1] == "" {
					continue
				}
				if err := checkNewFile(o[0], o[1], force); err != nil {
					return err
				}
			}
			sc, err := simulate.Load(args[0])
			if err != nil {
				return err
			}
			if fs.Changed("seed") {
				sc.Seed = seed
			}
			if baseOut != "" && sc.Base == nil {
				return fmt.Errorf("%s has no [base] table, so there is no base-station log to write", args[0])
			}
			// On a terminal, a stage line until the first file is written.
			line := newStageLine(stderr, "simulating "+args[0])
			defer line.clear()
			s, err := await(ctx, func() (*ingest.Samples, error) { return simulate.Simulate(sc) })
			if err != nil {
				return err
			}
			var b *ingest.Samples
			if baseOut != "" {
				if b, err = simulate.SimulateBase(sc); err != nil {
					return err
				}
			}
			// Stop before writing anything once interrupted. Every file
			// is written under a temporary name first and all are put in
			// place together, so a run that fails leaves none of them.
			if err := ctx.Err(); err != nil {
				return err
			}
			line.set(fmt.Sprintf("writing %s (%d rows)", out, s.Len()))
			var st staged
			defer st.discard()
			if err := st.add(out, func() (string, error) { return stageSamplesLog(out, s) }); err != nil {
				return err
			}
			if baseOut != "" {
				if err := st.add(baseOut, func() (string, error) { return stageSamplesLog(baseOut, b) }); err != nil {
					return err
				}
			}
			if truthOut != "" {
				if err := st.add(truthOut, func() (string, error) {
					return stageFile(truthOut, "", func(w io.Writer) error { return writeTruth(w, sc) })
				}); err != nil {
					return err
				}
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			if err := st.place(force); err != nil {
				return err
			}
			line.clear()
			switch n := len(sc.Lines()); {
			case sc.Survey.Pattern == "spin":
				fmt.Fprintf(stdout, "wrote %s: %d readings of a sensor turned in place over %s\n", out, s.Len(), span(s.Time))
			case sc.Survey.Pattern == "fixed":
				fmt.Fprintf(stdout, "wrote %s: %d readings of %d fixed sensors over %s\n", out, s.Len(), n, span(s.Time))
			case n == 1:
				fmt.Fprintf(stdout, "wrote %s: %d readings on 1 survey line over %s\n", out, s.Len(), span(s.Time))
			default:
				fmt.Fprintf(stdout, "wrote %s: %d readings on %d survey lines over %s\n", out, s.Len(), n, span(s.Time))
			}
			if baseOut != "" {
				fmt.Fprintf(stdout, "wrote %s: %d base-station readings\n", baseOut, b.Len())
			}
			if truthOut != "" {
				fmt.Fprintf(stdout, "wrote %s: %d crossings of survey lines over conductors\n", truthOut, len(sc.Crossings()))
			}
			printDetectability(stdout, sc)
			return nil
		},
	})
}

// checkTruthExt refuses, before any work, a --truth name whose extension
// is not one of CSV's (.csv, .txt, in any case): the truth table is
// always written as CSV, and before it was written under any name, so
// that "--truth truth.parquet" beside a Parquet log made a CSV file named
// .parquet, which tools that go by the extension cannot open.
func checkTruthExt(path string) error {
	if path == "" {
		return nil
	}
	switch ext := filepath.Ext(path); strings.ToLower(ext) {
	case ".csv", ".txt":
		return nil
	case "":
		return usageErrorf("--truth %s: no extension: the truth table is written as CSV; name the file .csv (or .txt)", path)
	default:
		return usageErrorf("--truth %s: cannot write %q files: the truth table is written as CSV; name the file .csv (or .txt)", path, ext)
	}
}

// span formats the duration of a log.
func span(t []float64) string {
	if len(t) < 2 {
		return "0 s"
	}
	d := t[len(t)-1] - t[0]
	if d < 120 {
		return fmt.Sprintf("%.1f s", d)
	}
	return fmt.Sprintf("%.1f min", d/60)
}

// printDetectability prints each conductor's peak field at the sensors and
// its ratio to the per-reading noise, then, for each frequency that more
// than one conductor carries, the peak of their summed field.
func printDetectability(w io.Writer, sc *simulate.Scenario) {
	peaks := sc.PeakFields()
	noise := sc.Sensor.Noise
	for i, c := range sc.Conductors {
		name := c.Name
		if name == "" {
			name = fmt.Sprintf("conductor %d", i+1)
		}
		what := "peak field"
		if c.Frequency > 0 {
			what = fmt.Sprintf("peak %g Hz field (RMS)", c.Frequency)
		}
		if noise > 0 {
			fmt.Fprintf(w, "  %s (%s): %s %s nT, %s times the %g nT reading noise\n",
				name, c.Kind, what, plain(peaks[i]), plain(peaks[i]/noise), noise)
		} else {
			fmt.Fprintf(w, "  %s (%s): %s %s nT (no noise)\n", name, c.Kind, what, plain(peaks[i]))
		}
		if noise > 0 && peaks[i] < 3*noise && !math.IsNaN(peaks[i]) {
			fmt.Fprintf(w, "    below 3 times the noise in any one reading: hard to detect without many readings\n")
		}
	}
	// What the sensors see of the conductors at one frequency together:
	// the cores of one circuit cancel far more than each one's own peak
	// says (a balanced trefoil read 16099 nT a core and 1451 nT together,
	// found in review).
	for _, p := range sc.PeakTotalFields() {
		if p.Conductors < 2 {
			continue
		}
		what := fmt.Sprintf("%d DC conductors and objects together: peak field", p.Conductors)
		if p.Frequency > 0 {
			what = fmt.Sprintf("%d conductors at %g Hz together: peak %g Hz field (RMS)", p.Conductors, p.Frequency, p.Frequency)
		}
		if noise > 0 {
			fmt.Fprintf(w, "  all %s %s nT, %s times the %g nT reading noise (their fields add as the sensors see them, cancelling where currents return or phases balance)\n",
				what, plain(p.Peak), plain(p.Peak/noise), noise)
		} else {
			fmt.Fprintf(w, "  all %s %s nT (no noise)\n", what, plain(p.Peak))
		}
		if noise > 0 && p.Peak < 3*noise && !math.IsNaN(p.Peak) {
			fmt.Fprintf(w, "    below 3 times the noise in any one reading: hard to detect without many readings\n")
		}
	}
}

// plain formats a positive number without an exponent: whole numbers from
// 100 up, three significant digits below.
func plain(v float64) string {
	if v >= 100 {
		return fmt.Sprintf("%.0f", v)
	}
	return strconv.FormatFloat(v, 'g', 3, 64)
}

// writeTruth writes the scenario's crossings to w as CSV: what locate
// should find under each survey line. current_a is the current when the
// sensor passes over the crossing (time_s, s after the first reading, the
// clock of change_at_s): after a change of current, the current after it.
func writeTruth(w io.Writer, sc *simulate.Scenario) error {
	bw := bufio.NewWriter(w)
	fmt.Fprintln(bw, "line,conductor,name,east_m,north_m,up_m,depth_m,dir_east,dir_north,dir_up,current_a,frequency_hz,phase_deg,along_m,time_s")
	for _, c := range sc.Crossings() {
		name := strings.NewReplacer(",", " ", "\n", " ", "\"", "'").Replace(sc.Conductors[c.Conductor].Name)
		fmt.Fprintf(bw, "%s,%d,%s,%.4f,%.4f,%.4f,%.4f,%.6f,%.6f,%.6f,%g,%g,%g,%.4f,%.3f\n",
			c.Line, c.Conductor+1, name, c.Point[0], c.Point[1], c.Point[2], c.Depth,
			c.Dir[0], c.Dir[1], c.Dir[2], c.Current, c.Frequency, c.Phase, c.Along, c.Time)
	}
	return bw.Flush()
}
