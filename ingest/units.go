package ingest

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// fieldUnit is one field unit: its symbols, matched exactly, the names
// written out, matched in any case, and its size in nT.
type fieldUnit struct {
	symbols, names []string
	nT             float64
}

// fieldUnitTable lists every field unit read, the one source of the units
// unitScale accepts and of FieldUnits, which lists them in messages.
var fieldUnitTable = []fieldUnit{
	// The SI units, and the gamma, the name of 1 nT long used in
	// geophysics and still in survey logs (1 γ = 1 nT = 1e-9 T, BIPM,
	// SI Brochure, 8th ed., 2006, Table 10), whose symbol is the Greek
	// small letter gamma (U+03B3).
	{[]string{"nT", "nt", "NT", "γ"}, []string{"nanotesla", "nanoteslas", "gamma", "gammas"}, 1},
	{[]string{"pT", "pt"}, []string{"picotesla", "picoteslas"}, 1e-3},
	{[]string{"uT", "µT", "μT", "ut", "UT"}, []string{"microtesla", "microteslas"}, 1e3},
	{[]string{"mT", "mt"}, []string{"millitesla", "milliteslas"}, 1e6},
	{[]string{"T", "t"}, []string{"tesla", "teslas"}, 1e9},
	// The CGS units (gauss, 1 G = 1e-4 T, SI Brochure, 8th ed., Table 9;
	// the milligauss 1 mG = 100 nT).
	{[]string{"G", "g"}, []string{"gauss"}, 1e5},
	{[]string{"mG", "mg"}, []string{"mgauss", "milligauss"}, 1e2},
	// The oersted is the CGS unit of H, 1 Oe = 1000/(4π) A/m (BIPM, SI
	// Brochure, 8th ed., 2006, Table 9), and a field written in Oe is B =
	// µ0 H in free space (air): µ0 = 4π·10⁻⁷ N/A² (to 1e-9 since the 2019
	// SI, CODATA 2018) gives 10⁻⁴ T = 1 G = 1e5 nT per oersted.
	{[]string{"Oe", "oe"}, []string{"oersted"}, 1e5},
}

// fieldUnitScale returns the size in nT of the field unit s (trimmed): a
// unit of the table, or one with a positive decimal step before it, as
// loggers that write counts state it ("0.1 nT", "100pT", "1e-10T", "0.125
// nT": one count is that many of the unit).
func fieldUnitScale(s string) (float64, bool) {
	if f, ok := tableUnitScale(s); ok {
		return f, true
	}
	// The longest decimal that starts s is the step; no unit of the table
	// starts with a digit, a point, a sign or an "e" that would belong to
	// it.
	for i := len(s) - 1; i > 0; i-- {
		num := []byte(s[:i])
		if !decimalText(num) || s[0] == '-' || s[0] == '+' {
			continue
		}
		unit := strings.TrimSpace(s[i:])
		unit = strings.TrimSpace(strings.TrimPrefix(unit, "*"))
		f, ok := tableUnitScale(unit)
		if !ok {
			return 0, false
		}
		k, ok := parseNumber(num)
		if !ok || !(k > 0) || !finite(k) {
			return 0, false
		}
		return scaled(k, f), true
	}
	return 0, false
}

// tableUnitScale returns the size in nT of a unit of fieldUnitTable.
func tableUnitScale(s string) (float64, bool) {
	for _, f := range fieldUnitTable {
		for _, sym := range f.symbols {
			if s == sym {
				return f.nT, true
			}
		}
		for _, n := range f.names {
			if strings.EqualFold(s, n) {
				return f.nT, true
			}
		}
	}
	return 0, false
}

// FieldUnits lists the field units read, for messages and help texts:
// each unit's symbol, with its other spellings in brackets ("nT
// (nanotesla, gamma)"), in any case for the names written out; a
// plural ("gammas") is read too.
var FieldUnits = fieldUnitList()

func fieldUnitList() string {
	var parts []string
	for _, f := range fieldUnitTable {
		p := f.symbols[0]
		var other []string
		for _, sym := range f.symbols[1:] {
			// Other cases of the symbol go without saying, and so does
			// μT with the Greek mu beside µT with the micro sign.
			if !strings.EqualFold(sym, f.symbols[0]) && !strings.ContainsRune(sym, 'μ') {
				other = append(other, sym)
			}
		}
		for _, n := range f.names {
			if !slices.Contains(f.names, strings.TrimSuffix(n, "s")) || !strings.HasSuffix(n, "s") {
				other = append(other, n)
			}
		}
		if len(other) > 0 {
			p += " (" + strings.Join(other, ", ") + ")"
		}
		parts = append(parts, p)
	}
	return strings.Join(parts[:len(parts)-1], ", ") + " or " + parts[len(parts)-1]
}

// unitScale returns the factor that turns a value in unit u into the
// canonical unit of the quantity kind k.
func unitScale(k kind, u string) (float64, error) {
	s := strings.TrimSpace(u)
	switch k {
	case kindField:
		if f, ok := fieldUnitScale(s); ok {
			return f, nil
		}
		return 0, fmt.Errorf("unknown field unit %q (want %s, or one of them with the size of a count before it, as 0.1nT or 100pT)", u, FieldUnits)
	case kindLength:
		switch strings.ToLower(s) {
		case "m", "metre", "metres", "meter", "meters":
			return 1, nil
		case "mm":
			return 1e-3, nil
		case "cm":
			return 1e-2, nil
		case "km":
			return 1e3, nil
		case "ft":
			return 0.3048, nil // international foot, exact
		}
		return 0, fmt.Errorf("unknown length unit %q (want m, cm, mm, km or ft)", u)
	case kindAngle:
		switch strings.ToLower(s) {
		case "deg", "degree", "degrees":
			return 1, nil
		case "rad", "radian", "radians":
			return 180 / 3.141592653589793, nil
		}
		return 0, fmt.Errorf("unknown angle unit %q (want deg or rad)", u)
	case kindTime:
		switch strings.ToLower(s) {
		case "s", "sec":
			return 1, nil
		case "ms":
			return 1e-3, nil
		case "us", "µs":
			return 1e-6, nil
		case "ns":
			return 1e-9, nil
		case "utc", "gmt":
			// Seconds, and timestamps written without a UTC offset
			// are UTC ("Time (UTC)"): said, so not warned about.
			return 1, nil
		}
		return 0, fmt.Errorf("unknown time unit %q (want s, ms, us, ns, or UTC for timestamps in UTC)", u)
	case kindTemp:
		switch s {
		case "C", "degC", "°C", "c":
			return 1, nil
		}
		return 0, fmt.Errorf("unknown temperature unit %q (want C)", u)
	case kindCurrent:
		switch strings.ToLower(s) {
		case "a", "amp", "amps", "ampere", "amperes":
			return 1, nil
		case "ma":
			return 1e-3, nil
		case "ka":
			return 1e3, nil
		}
		return 0, fmt.Errorf("unknown current unit %q (want A, mA or kA)", u)
	case kindDegrees:
		if strings.ToLower(s) == "deg" {
			return 1, nil
		}
		return 0, fmt.Errorf("latitude and longitude are in degrees, not %q", u)
	}
	if s == "" || s == "1" {
		return 1, nil
	}
	return 0, fmt.Errorf("column takes no unit, got %q", u)
}

// SplitUnit splits a header name such as "Bx_uT", "Bx (uT)" or "Bx[uT]"
// into its base name and unit suffix, as the readers do when they find a
// column by name. unit is "" when there is none.
func SplitUnit(name string) (base, unit string) {
	n := strings.TrimSpace(name)
	if strings.HasSuffix(n, ")") || strings.HasSuffix(n, "]") {
		open := "("
		if n[len(n)-1] == ']' {
			open = "["
		}
		if i := strings.LastIndex(n, open); i > 0 {
			return strings.TrimSpace(n[:i]), strings.TrimSpace(n[i+1 : len(n)-1])
		}
	}
	if i := strings.LastIndexAny(n, "_ "); i > 0 {
		return strings.TrimSpace(n[:i]), n[i+1:]
	}
	return n, ""
}

// scaled converts v by the unit factor s. A factor that is a negative power
// of ten (ms, us, ns, mm, cm, pT) divides by its inverse, which is exact,
// so that an exact count of the small unit reads as the correctly rounded
// value in the canonical one: 1772359200100 ms as 1772359200.1 s, the
// value the same decimal written in seconds reads as, where multiplying by
// the inexact 1e-3 gives 1772359200.1000001.
func scaled(v, s float64) float64 {
	switch s {
	case 1:
		return v
	case 1e-2:
		return v / 1e2
	case 1e-3:
		return v / 1e3
	case 1e-6:
		return v / 1e6
	case 1e-9:
		return v / 1e9
	}
	if s < 1 {
		// The same for other steps below the unit whose inverse is a
		// whole number (a count of 0.1 nT, 100 pT = 0.1 nT): 188591
		// counts of 0.1 nT read as 18859.1, not 18859.100000000002.
		if inv := 1 / s; inv == math.Trunc(inv) && 1/inv == s {
			return v / inv
		}
	}
	return v * s
}
