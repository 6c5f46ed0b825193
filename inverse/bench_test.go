package inverse

import (
	"bufio"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// Benchmarks for the README performance table (issue 2): one line on one 41-point
// traverse; one line over 9 traverses (about 400 points, azimuth free); two lines over
// 500 points. The whole FitLines call is measured: seeding, multi-start, polishing and
// the uncertainty analysis. Besides ns/op (wall clock) each reports cpu-ns/op, the
// process CPU time per fit, which is what testdata/bench_scipy.py reports for the same
// fits written with numpy and scipy.

var update = flag.Bool("update", false, "rewrite the benchmark surveys in testdata")

// benchCase is one benchmark survey. Its readings are also stored in testdata/File
// (TestBenchSurveyFiles keeps the two identical) so that bench_scipy.py fits exactly the
// same numbers.
type benchCase struct {
	name, file string
	pts        [][3]float64
	lines      []Line
	cur        []float64
	set        *Settings
}

// benchCases: invented surveys over the Fenwick Lane cable route at Harrow Fen
// substation, 5 nT noise per axis on a uniform background.
var benchCases = []benchCase{
	{"one line, one 41-point traverse", "bench_traverse41.csv", traverse(41, -2, 2, 0, 0),
		[]Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0, 1, 0}}}, []float64{10}, &Settings{Count: 1}},
	{"one line, 9 traverses (405 points), azimuth free", "bench_nine_traverses.csv", grid(9, 45, 2, 0.5, 0),
		[]Line{{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0.3, 1, 0}}}, []float64{10}, &Settings{Count: 1}},
	{"two lines, 10 traverses (500 points)", "bench_two_lines500.csv", grid(10, 50, 3, 0.45, 0),
		[]Line{
			{Point: [3]float64{-0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
			{Point: [3]float64{0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
		}, []float64{40, -37}, &Settings{Count: 2}},
}

func (c benchCase) problem() *Problem {
	rng := rand.New(rand.NewPCG(1, 2))
	f := simulate(c.pts, c.lines, c.cur, [3]float64{17000, 1500, -44000}, 5, rng)
	return &Problem{Points: c.pts, Fields: f}
}

func benchFit(b *testing.B, p *Problem, set *Settings) {
	b.ReportAllocs()
	cpu := ingesttest.CPUTime()
	for b.Loop() {
		if _, err := FitLines(p, set); err != nil {
			b.Fatal(err)
		}
	}
	ingesttest.ReportCPU(b, cpu)
}

func BenchmarkFitOneLineTraverse41(b *testing.B) {
	c := benchCases[0]
	benchFit(b, c.problem(), c.set)
}

func BenchmarkFitOneLineNineTraverses(b *testing.B) {
	c := benchCases[1]
	benchFit(b, c.problem(), c.set)
}

func BenchmarkFitTwoLines500(b *testing.B) {
	c := benchCases[2]
	benchFit(b, c.problem(), c.set)
}

func BenchmarkFitAutoCountNineTraverses(b *testing.B) {
	c := benchCases[1]
	benchFit(b, c.problem(), nil)
}

// BenchmarkScipyMirror fits the survey files that bench_scipy.py fits, with the same
// model (straight lines and a uniform background; azimuth and dip held for the single
// traverse, as the script holds them, through Settings.Azimuth and Dip; free
// otherwise), and the same outputs (geometry, currents and their
// one-sigma uncertainties from the Jacobian at the solution), timed the same way (CPU
// time per fit). The Go fit does more than the Python one: it seeds itself from the
// field, ranks several starts, and derives sigmas for depth, offset, azimuth and dip.
// testdata/bench_scipy_same.py does that same work in numpy and scipy, step for step,
// and checks its fits against testdata/bench_fits.txt.
func BenchmarkScipyMirror(b *testing.B) {
	for _, c := range benchCases {
		b.Run(strings.TrimSuffix(c.file, ".csv"), func(b *testing.B) {
			p, err := readBenchSurvey(filepath.Join("testdata", c.file))
			if err != nil {
				b.Fatal(err)
			}
			benchFit(b, p, mirrorSettings(c))
		})
	}
}

// mirrorSettings returns the settings of a benchmark case as bench_scipy.py fits it: on
// the single traverse (along east) the script holds the azimuth perpendicular to it
// (north) and the dip at 0, which FitLines now fits unless told otherwise.
func mirrorSettings(c benchCase) *Settings {
	if c.file != "bench_traverse41.csv" {
		return c.set
	}
	s := *c.set
	north, level := 0.0, 0.0
	s.Azimuth, s.Dip = &north, &level
	return &s
}

// TestBenchSurveyFiles checks that the survey files read by bench_scipy.py hold exactly
// the readings of the Go benchmarks; -update rewrites them.
func TestBenchSurveyFiles(t *testing.T) {
	for _, c := range benchCases {
		path := filepath.Join("testdata", c.file)
		want := c.problem()
		if *update {
			if err := writeBenchSurvey(path, c.name, want); err != nil {
				t.Fatal(err)
			}
		}
		got, err := readBenchSurvey(path)
		if err != nil {
			t.Fatal(err)
		}
		if len(got.Points) != len(want.Points) {
			t.Fatalf("%s: %d readings, want %d", path, len(got.Points), len(want.Points))
		}
		for i := range want.Points {
			if got.Points[i] != want.Points[i] || got.Fields[i] != want.Fields[i] {
				t.Fatalf("%s: reading %d is %v %v, want %v %v (run go test -run TestBenchSurveyFiles -update)",
					path, i, got.Points[i], got.Fields[i], want.Points[i], want.Fields[i])
			}
		}
	}
}

const benchHeader = "east_m,north_m,up_m,b_east_nT,b_north_nT,b_up_nT"

func writeBenchSurvey(path, name string, p *Problem) error {
	var sb strings.Builder
	fmt.Fprintf(&sb, "# Harrow Fen substation, Fenwick Lane cable route (invented): %s\n", name)
	fmt.Fprintf(&sb, "# simulated by inverse/bench_test.go, 5 nT noise per axis; used by bench_scipy.py\n")
	sb.WriteString(benchHeader + "\n")
	for i, r := range p.Points {
		f := p.Fields[i]
		fmt.Fprintf(&sb, "%s,%s,%s,%s,%s,%s\n", g17(r[0]), g17(r[1]), g17(r[2]), g17(f[0]), g17(f[1]), g17(f[2]))
	}
	tmp := path + ".tmp"
	if err := os.WriteFile(tmp, []byte(sb.String()), 0o644); err != nil {
		return err
	}
	return os.Rename(tmp, path)
}

func g17(v float64) string { return strconv.FormatFloat(v, 'g', 17, 64) }

// readBenchSurvey reads a survey file written by writeBenchSurvey.
func readBenchSurvey(path string) (*Problem, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	p := &Problem{}
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		text := sc.Text()
		if strings.HasPrefix(text, "#") || text == benchHeader {
			continue
		}
		fields := strings.Split(text, ",")
		if len(fields) != 6 {
			return nil, fmt.Errorf("%s:%d: %d columns, want 6: %q", path, line, len(fields), text)
		}
		var v [6]float64
		for j, s := range fields {
			if v[j], err = strconv.ParseFloat(s, 64); err != nil {
				return nil, fmt.Errorf("%s:%d: column %d: %q is not a number", path, line, j+1, s)
			}
		}
		p.Points = append(p.Points, [3]float64{v[0], v[1], v[2]})
		p.Fields = append(p.Fields, [3]float64{v[3], v[4], v[5]})
	}
	return p, sc.Err()
}
