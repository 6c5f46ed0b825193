package calibrate

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// CoverageSettings sets how much of the sphere of orientations a spin log
// must cover. A nil *CoverageSettings or a zero field takes the default.
type CoverageSettings struct {
	// MinEigen is the smallest acceptable eigenvalue of the scatter matrix
	// of unit field directions, mean(u uᵀ). Even coverage gives 1/3 for all
	// three; readings that never bring the field near some direction of
	// the sensor (a turn about one axis, or whole turns about two) give
	// one near 0.
	// Zero means 0.05.
	MinEigen float64
	// MinCap is the fraction of readings in each of the six caps of
	// half-angle CapAngle around ±x, ±y, ±z below which a cap counts as
	// sparse. Even coverage gives 0.25 for a 60 degree cap. A sparse cap
	// is a warning (Coverage.Warnings), not a refusal: whether the
	// readings determine the calibration is for the fitted parameters'
	// standard errors to say (FitEllipsoid). Zero means 0.02.
	MinCap float64
	// CapAngle is the cap half-angle in degrees. Zero means 60.
	CapAngle float64
	// MinSamples is the fewest readings accepted. Zero means 30.
	MinSamples int
}

func (s *CoverageSettings) withDefaults() CoverageSettings {
	var c CoverageSettings
	if s != nil {
		c = *s
	}
	if c.MinEigen == 0 {
		c.MinEigen = 0.05
	}
	if c.MinCap == 0 {
		c.MinCap = 0.02
	}
	if c.CapAngle == 0 {
		c.CapAngle = 60
	}
	if c.MinSamples == 0 {
		c.MinSamples = 30
	}
	return c
}

// Coverage describes how evenly a spin log covers the orientations.
type Coverage struct {
	N int `json:"n"`
	// Centre is the rough centre used, nT: for each axis the midpoint
	// of its range with the most extreme 5% of the readings at each end
	// left out, so that a spike or a logger's fill value cannot move it.
	Centre [3]float64 `json:"centre_nt"`
	// Eigen holds the eigenvalues of mean(u uᵀ) in ascending order and
	// Weakest the unit eigenvector of the smallest: the direction, in the
	// sensor frame, least visited by the field.
	Eigen   [3]float64 `json:"eigen"`
	Weakest [3]float64 `json:"weakest"`
	// Caps holds the fraction of readings whose field direction lies within
	// the cap angle of +x, -x, +y, -y, +z, -z (sensor frame).
	Caps [6]float64 `json:"caps"`
	// Warnings say what the coverage lacks without making the log
	// unusable: caps with fewer than MinCap of the readings.
	Warnings []string `json:"-"`
}

var capNames = [6]string{"+x", "-x", "+y", "-y", "+z", "-z"}

// ErrCoverage is wrapped by the error CheckCoverage returns when a spin log
// does not cover enough orientations.
var ErrCoverage = errors.New("spin log does not cover enough orientations")

// ErrDeadAxis is wrapped by the error CheckCoverage returns when one axis
// of the sensor does not respond.
var ErrDeadAxis = errors.New("an axis of the sensor does not respond")

// CheckCoverage measures the coverage of readings (sensor frame, nT) and
// returns an error wrapping ErrCoverage that says what is missing when the
// readings are too few or lie close to a plane (MinEigen); a sparse cap
// (MinCap) only adds a warning to Coverage.Warnings. The Coverage is
// returned in both cases. The directions are taken from a robust centre
// (see Coverage.Centre), so a few spikes do not count against the log.
//
// First it looks for a dead or stuck axis: one whose readings span less
// than 2% of the widest axis's span while the other two do not keep the
// steady distance from their centre that a turn about that axis would
// give (at least 5% of the readings lie within half the largest distance
// of the centre: the field pointed near the dead axis). That error wraps
// ErrDeadAxis instead, since no turning helps a channel that does not
// respond.
func CheckCoverage(readings [][3]float64, set *CoverageSettings) (*Coverage, error) {
	cs := set.withDefaults()
	cov := &Coverage{N: len(readings)}
	if len(readings) < cs.MinSamples {
		return cov, fmt.Errorf("calibrate: %w: %d readings, want at least %d", ErrCoverage, len(readings), cs.MinSamples)
	}
	lo, hi, tlo, thi := axisRanges(readings)
	for k := 0; k < 3; k++ {
		cov.Centre[k] = 0.5 * (tlo[k] + thi[k])
	}
	if err := deadAxis(readings, lo, hi, tlo, thi, cov.Centre); err != nil {
		return cov, err
	}
	cosCap := math.Cos(cs.CapAngle * math.Pi / 180)
	var scat [3][3]float64
	var caps [6]int
	used := 0
	for _, r := range readings {
		u := [3]float64{r[0] - cov.Centre[0], r[1] - cov.Centre[1], r[2] - cov.Centre[2]}
		n := norm3(u)
		if n == 0 || math.IsNaN(n) || math.IsInf(n, 0) {
			continue
		}
		used++
		for k := 0; k < 3; k++ {
			u[k] /= n
		}
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				scat[i][j] += u[i] * u[j]
			}
			if u[i] > cosCap {
				caps[2*i]++
			}
			if -u[i] > cosCap {
				caps[2*i+1]++
			}
		}
	}
	if used < cs.MinSamples {
		return cov, fmt.Errorf("calibrate: %w: %d usable readings, want at least %d", ErrCoverage, used, cs.MinSamples)
	}
	sym := mat.NewSymDense(3, nil)
	for i := 0; i < 3; i++ {
		for j := i; j < 3; j++ {
			sym.SetSym(i, j, scat[i][j]/float64(used))
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(sym, true) {
		return cov, fmt.Errorf("calibrate: coverage: eigen-decomposition failed")
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	copy(cov.Eigen[:], vals)
	for k := 0; k < 3; k++ {
		cov.Weakest[k] = vecs.At(k, 0)
	}
	// Make the printed direction point mostly positive, for readability.
	if cov.Weakest[0]+cov.Weakest[1]+cov.Weakest[2] < 0 {
		for k := range cov.Weakest {
			cov.Weakest[k] = -cov.Weakest[k]
		}
	}
	for i := range caps {
		cov.Caps[i] = float64(caps[i]) / float64(used)
	}

	var problems []string
	if cov.Eigen[0] < cs.MinEigen {
		problems = append(problems, fmt.Sprintf(
			"the readings lie close to a plane (smallest direction-scatter eigenvalue %.3f, want at least %.3f; even coverage gives 0.333): the field never came near the sensor's direction (%.2f, %.2f, %.2f) nor its opposite; also turn the sensor so that this direction points along and then against the field",
			cov.Eigen[0], cs.MinEigen, cov.Weakest[0], cov.Weakest[1], cov.Weakest[2]))
	}
	var missing []string
	for i, f := range cov.Caps {
		if f < cs.MinCap {
			missing = append(missing, fmt.Sprintf("%s (%.1f%%)", capNames[i], 100*f))
		}
	}
	if len(missing) > 0 {
		cov.Warnings = append(cov.Warnings, fmt.Sprintf(
			"few readings with the sensor's %s axis within %g degrees of the field (%.1f%% or more each would be usual; even coverage gives %.0f%%)",
			strings.Join(missing, ", "), cs.CapAngle, 100*cs.MinCap, 100*(1-cosCap)/2))
	}
	if len(problems) > 0 {
		return cov, fmt.Errorf("calibrate: %w: %s", ErrCoverage, strings.Join(problems, "; "))
	}
	return cov, nil
}

// coverageTrim is the fraction of the readings at each end of an axis's
// range that CheckCoverage leaves out of the range it centres on.
const coverageTrim = 0.05

// axisRanges returns each axis's smallest and largest reading, and the
// same with the most extreme coverageTrim of the readings (at least one
// when there are more than 50) left out at each end.
func axisRanges(readings [][3]float64) (lo, hi, tlo, thi [3]float64) {
	n := len(readings)
	if n == 0 {
		return lo, hi, tlo, thi
	}
	trim := int(coverageTrim * float64(n))
	if trim == 0 && n > 50 {
		trim = 1
	}
	vals := make([]float64, n)
	for k := 0; k < 3; k++ {
		for i, r := range readings {
			vals[i] = r[k]
		}
		sort.Float64s(vals)
		lo[k], hi[k] = vals[0], vals[n-1]
		tlo[k], thi[k] = vals[trim], vals[n-1-trim]
	}
	return lo, hi, tlo, thi
}

// axisCentre returns the rough centre CheckCoverage uses (see
// Coverage.Centre).
func axisCentre(readings [][3]float64) [3]float64 {
	var c [3]float64
	_, _, tlo, thi := axisRanges(readings)
	for k := 0; k < 3; k++ {
		c[k] = 0.5 * (tlo[k] + thi[k])
	}
	return c
}

// deadAxis returns an error wrapping ErrDeadAxis when one axis hardly
// changes while the other two swing over the field and do not trace the
// circle of a turn about it (see CheckCoverage). The spans compared are
// the trimmed ones (tlo to thi), so one spike on a dead channel does not
// hide it; lo and hi are the full range.
func deadAxis(readings [][3]float64, lo, hi, tlo, thi, centre [3]float64) error {
	var span [3]float64
	widest := 0.0
	for k := 0; k < 3; k++ {
		span[k] = thi[k] - tlo[k]
		widest = math.Max(widest, span[k])
	}
	if !(widest > 0) {
		return nil
	}
	for k := 0; k < 3; k++ {
		if span[k] >= 0.02*widest {
			continue
		}
		a, b := (k+1)%3, (k+2)%3
		if a > b {
			a, b = b, a
		}
		rho := make([]float64, len(readings))
		rmax := 0.0
		for i, r := range readings {
			rho[i] = math.Hypot(r[a]-centre[a], r[b]-centre[b])
			rmax = math.Max(rmax, rho[i])
		}
		inner := 0
		for _, v := range rho {
			if v < 0.5*rmax {
				inner++
			}
		}
		if float64(inner) < 0.05*float64(len(readings)) {
			// A turn about k: the direction checks say so.
			continue
		}
		name := func(j int) string { return "b" + string("xyz"[j]) }
		what := fmt.Sprintf("stays within %.3g nT of %.6g nT", span[k], centre[k])
		if lo[k] == hi[k] {
			what = fmt.Sprintf("reads %.6g nT throughout", lo[k])
		}
		return fmt.Errorf("calibrate: %w: %s does not change (it %s while %s and %s swing over %.0f and %.0f nT), yet %s and %s do not keep the steady magnitude a turn about %c would give (%.0f%% of the readings lie within half the largest distance of their centre): the %c channel appears dead or stuck; check the sensor, its wiring and the column given for %s",
			ErrDeadAxis, name(k), what, name(a), name(b), span[a], span[b], name(a), name(b), "xyz"[k], 100*float64(inner)/float64(len(readings)), "xyz"[k], name(k))
	}
	return nil
}
