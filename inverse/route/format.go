package route

import (
	"math"
	"strconv"
)

// MaxDecimals is the most decimals PlusMinus and SigmaText write in plain
// decimals. A sigma that would need more (under about 1e-9 of its unit:
// nanoamperes, nanometres) is written with an exponent instead, never as a
// bound: a sigma that is known is shown.
const MaxDecimals = 9

// SigmaDecimals returns the decimals that show sigma to two significant
// digits once rounded (0.0996 rounds to 0.10, two decimals, not three),
// and false for a sigma that is zero, negative, infinite or NaN, or that
// would need more than MaxDecimals decimals.
func SigmaDecimals(sigma float64) (int, bool) {
	if !(sigma > 0) || math.IsInf(sigma, 0) {
		return 0, false
	}
	// Round to two significant digits first, so that a sigma that rounds up
	// to the next power of ten takes that power's decimals.
	r, err := strconv.ParseFloat(strconv.FormatFloat(sigma, 'g', 2, 64), 64)
	if err != nil || r <= 0 {
		r = sigma
	}
	dec := max(0, 1-int(math.Floor(math.Log10(r))))
	if dec > MaxDecimals {
		return dec, false
	}
	return dec, true
}

// PlusMinus formats a value and its one-sigma uncertainty, the house way:
// the sigma to two significant digits and the value to the same decimal
// place, in plain decimals ("111.94 ± 0.73", "5.687 ± 0.086",
// "-0.000332 ± 0.000013", "112 ± 12"). A sigma under about 1e-9 of its unit
// is written with an exponent ("1.169530000 ± 1.2e-12"); a zero, negative,
// infinite or NaN sigma gives the value alone, to three significant
// digits.
func PlusMinus(v, sigma float64) string {
	dec, ok := SigmaDecimals(sigma)
	switch {
	case ok:
		return fixed(v, dec) + " ± " + fixed(sigma, dec)
	case sigma > 0 && !math.IsInf(sigma, 0):
		return fixed(v, MaxDecimals) + " ± " + strconv.FormatFloat(sigma, 'g', 2, 64)
	}
	return strconv.FormatFloat(v, 'g', 3, 64)
}

// SigmaText formats a sigma (or a scatter, a spread) alone to two
// significant digits in plain decimals ("0.030", "0.000013", "12"), with an
// exponent under about 1e-9; anything else (zero, negative, infinite, NaN)
// as Go formats it to three significant digits.
func SigmaText(sigma float64) string {
	dec, ok := SigmaDecimals(sigma)
	switch {
	case ok:
		return fixed(sigma, dec)
	case sigma > 0 && !math.IsInf(sigma, 0):
		return strconv.FormatFloat(sigma, 'g', 2, 64)
	}
	return strconv.FormatFloat(sigma, 'g', 3, 64)
}

// fixed formats v with dec decimals, without a negative zero.
func fixed(v float64, dec int) string {
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if z := strconv.FormatFloat(0, 'f', dec, 64); s == "-"+z {
		return z
	}
	return s
}
