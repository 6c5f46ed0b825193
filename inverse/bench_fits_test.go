package inverse

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

var updateFits = flag.Bool("update-fits", false, "rewrite testdata/bench_fits.txt from the fits of this code")

// benchFitsFile holds the benchmark fits (BenchmarkScipyMirror's surveys and settings)
// as the code stood before the speed work of fix-speed10 fitted them: written by
// go test -run TestBenchFitsAsBefore -update-fits on commit 2b295ff, with every
// number to 17 digits.
const benchFitsFile = "testdata/bench_fits.txt"

// benchFitValues flattens what a fit reports (the lines' geometry, currents and
// sigmas, the background, the predictions and residuals summed per axis, the noise,
// chi-square, the covariance, the work counts) into named numbers.
func benchFitValues(r *Result) (names []string, vals []float64) {
	add := func(name string, v float64) { names, vals = append(names, name), append(vals, v) }
	for i, s := range r.Sources {
		p := fmt.Sprintf("source%d.", i)
		for j := range 3 {
			add(p+"point"+strconv.Itoa(j), s.Point[j])
			add(p+"dir"+strconv.Itoa(j), s.Dir[j])
		}
		add(p+"current", s.Current)
		add(p+"currentSigma", s.CurrentSigma)
		add(p+"depth", s.Depth)
		add(p+"depthSigma", s.DepthSigma)
		add(p+"offset", s.Offset)
		add(p+"offsetSigma", s.OffsetSigma)
		add(p+"azimuth", s.Azimuth)
		add(p+"azimuthSigma", s.AzimuthSigma)
		add(p+"dip", s.Dip)
		add(p+"dipSigma", s.DipSigma)
	}
	for j := range 3 {
		add("background"+strconv.Itoa(j), r.Background[j])
		add("backgroundSigma"+strconv.Itoa(j), r.BackgroundSigma[j])
	}
	// The predictions and residuals per reading, summed per axis (their squares for
	// the residuals).
	for j := range 3 {
		var sp, sr float64
		for i := range r.Predicted {
			sp += r.Predicted[i][j]
			sr += r.Residuals[i][j] * r.Residuals[i][j]
		}
		add("predictedSum"+strconv.Itoa(j), sp)
		add("residualSumSq"+strconv.Itoa(j), sr)
	}
	add("rms", r.RMS)
	add("sigma", r.Sigma)
	add("chi2", r.Chi2)
	add("dof", float64(r.DOF))
	add("iterations", float64(r.Iterations))
	add("starts", float64(r.Starts))
	if r.Covariance != nil {
		n := r.Covariance.SymmetricDim()
		for i := range n {
			for j := i; j < n; j++ {
				add(fmt.Sprintf("cov.%s.%s", r.ParamNames[i], r.ParamNames[j]), r.Covariance.At(i, j))
			}
		}
	}
	return names, vals
}

// TestBenchFitsAsBefore: the savings in fit speed must not change the fits. The three
// benchmark surveys fitted with BenchmarkScipyMirror's settings must report every
// number of benchFitsFile (the code before the savings) to within 1e-6 relative
// (plus 1e-12 absolute for numbers near zero), and the same counts of lines,
// iterations and starts.
func TestBenchFitsAsBefore(t *testing.T) {
	var out strings.Builder
	got := map[string]float64{}
	var order []string
	for _, c := range benchCases {
		p, err := readBenchSurvey(filepath.Join("testdata", c.file))
		if err != nil {
			t.Fatal(err)
		}
		r, err := FitLines(p, mirrorSettings(c))
		if err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		names, vals := benchFitValues(r)
		for i, n := range names {
			key := c.file + " " + n
			got[key] = vals[i]
			order = append(order, key)
			fmt.Fprintf(&out, "%s %s\n", key, strconv.FormatFloat(vals[i], 'g', 17, 64))
		}
	}
	if *updateFits {
		if err := os.WriteFile(benchFitsFile, []byte(out.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	f, err := os.Open(benchFitsFile)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	want := map[string]float64{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) != 3 {
			t.Fatalf("%s: bad line %q", benchFitsFile, sc.Text())
		}
		v, err := strconv.ParseFloat(fields[2], 64)
		if err != nil {
			t.Fatal(err)
		}
		want[fields[0]+" "+fields[1]] = v
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(want) != len(got) {
		t.Errorf("%d numbers reported, %d before", len(got), len(want))
	}
	for _, k := range order {
		w, ok := want[k]
		if !ok {
			t.Errorf("%s: %g, not reported before", k, got[k])
			continue
		}
		g := got[k]
		if d := math.Abs(g - w); !(d <= 1e-6*math.Max(math.Abs(g), math.Abs(w))+1e-12) {
			t.Errorf("%s: %.17g, before %.17g (relative change %.2g)", k, g, w, d/math.Abs(w))
		}
	}
}
