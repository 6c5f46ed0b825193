package ingest

import (
	"fmt"
	"math"
)

// Bounds on a reading's values: finite values past them are a corrupt
// value or a GNSS glitch, never a survey. Before, a field of
// 1e308 nT was read and made a traverse's fit fail at its starting point,
// a time of 1e300 s was refused only on the next line ("time goes
// backwards ... 115740740740740752868... days back"), and a position of
// 1e15 m moved a whole survey's route to "1763668430347 m east".
const (
	// MaxFieldNT is the largest field magnitude |B| read, nT (0.1 T); the
	// live decoder's broker.MaxFieldNT is this bound: no buried conductor
	// gives it (500 kA at 1 m, by Biot-Savart).
	MaxFieldNT = 1e8
	// maxFileFieldNT bounds |B| in a log file, nT: MaxFieldNT read in
	// the wrong unit (nT taken as T, 1e9 times), so that a log in a
	// wrong unit still reaches the unit warnings of inspect and locate,
	// which name the unit it is in, while a corrupt value (1e200, 1e308)
	// is refused at its line.
	maxFileFieldNT = MaxFieldNT * 1e9
	// maxTimeS bounds |time|, s: past it, a time is beyond any clock
	// even as Unix nanoseconds read as seconds (checkTimeUnit warns of
	// those).
	maxTimeS = 1e20
	// maxCoordM bounds |x|, |y|, |z|, m: projected grid coordinates stay
	// within some 1e7 m.
	maxCoordM = 1e8
	// maxHeightM bounds |height| of a geodetic log, m.
	maxHeightM = 1e5
)

// checkPlausible returns the first row of f (n rows, the canonical
// columns as parsed, before transform) holding a finite value past the
// bounds above, its column's header name and the message; row -1 when
// none. NaN and infinite values are left to the readers' own checks.
func (p *plan) checkPlausible(f *[nCanon][]float64, n int) (row int, col, msg string) {
	if p.cfg.keepImplausible {
		return -1, "", ""
	}
	for _, b := range []struct {
		c     int
		bound float64
		what  string
	}{
		{cTime, maxTimeS, "a time beyond any clock (a corrupt value?)"},
		{cX, maxCoordM, "a position beyond any grid (a corrupt value or a GNSS glitch?)"},
		{cY, maxCoordM, "a position beyond any grid (a corrupt value or a GNSS glitch?)"},
		{cZ, maxCoordM, "a position beyond any grid (a corrupt value or a GNSS glitch?)"},
		{cHeight, maxHeightM, "a height beyond any survey (a corrupt value or a GNSS glitch?)"},
	} {
		if p.src[b.c] < 0 || len(f[b.c]) < n {
			continue
		}
		unit := " s"
		if b.c != cTime {
			unit = " m"
		}
		for i, v := range f[b.c][:n] {
			if math.Abs(v) > b.bound && finite(v) {
				return i, p.header[p.src[b.c]], fmt.Sprintf("%s is %s: want within +-%g%s", num(v)+unit, b.what, b.bound, unit)
			}
		}
	}
	if p.src[cBx] < 0 || p.src[cBy] < 0 || p.src[cBz] < 0 || len(f[cBx]) < n || len(f[cBy]) < n || len(f[cBz]) < n {
		return -1, "", ""
	}
	for i := range n {
		bx, by, bz := f[cBx][i], f[cBy][i], f[cBz][i]
		m := math.Hypot(math.Hypot(bx, by), bz)
		if m > maxFileFieldNT && finite(m) {
			c := cBx
			if math.Abs(by) > math.Abs(f[c][i]) {
				c = cBy
			}
			if math.Abs(bz) > math.Abs(f[c][i]) {
				c = cBz
			}
			return i, p.header[p.src[c]], fmt.Sprintf("field magnitude |B| = %.4g nT (bx %.4g, by %.4g, bz %.4g) is above %g nT, which no reading gives even in a wrong unit (0.1 T written in nT and read as T): a corrupt value", m, bx, by, bz, float64(maxFileFieldNT))
		}
	}
	return -1, "", ""
}
