package ingest

import (
	"fmt"
	"math"
	"strings"
)

// checkFieldScales compares the units of the three field columns. A unit
// given (WithUnits) that contradicts the unit the column's name states
// is warned about when it leaves the three axes in
// one unit (the name may be wrong), and refused when it leaves them in
// different ones: one axis read 1000 times off while the others are
// right keeps the median |B| in the Earth's band, and nothing else would
// notice. Units given for some axes, the others' taken from nothing their
// names state (assumed, or from the file's metadata or format), are
// refused too when the axes come out in different units: the units were
// given for the log, not for one axis. Axes in different units otherwise
// (by their names, or as given for all three) are warned about, the
// warning saying where each axis's unit came from.
func (p *plan) checkFieldScales(headerLine int) error {
	if p.src[cBx] < 0 || p.src[cBy] < 0 || p.src[cBz] < 0 {
		return nil
	}
	same := p.scale[cBx] == p.scale[cBy] && p.scale[cBy] == p.scale[cBz]
	units := fmt.Sprintf("bx in %s, by in %s, bz in %s", p.unit[cBx], p.unit[cBy], p.unit[cBz])
	lo := math.Min(p.scale[cBx], math.Min(p.scale[cBy], p.scale[cBz]))
	hi := math.Max(p.scale[cBx], math.Max(p.scale[cBy], p.scale[cBz]))
	for c := cBx; c <= cBz; c++ {
		if p.unitFrom[c] != UnitGiven {
			continue
		}
		name := strings.TrimSpace(p.header[p.src[c]])
		_, u := SplitUnit(name)
		ns, err := unitScale(kindField, u)
		if u == "" || err != nil || ns == p.scale[c] {
			continue
		}
		if g := p.unit[c]; len(name) > len(g) && strings.HasSuffix(name, g) && strings.ContainsRune(" _", rune(name[len(name)-len(g)-1])) {
			continue // "bx 0.1 nT" given 0.1 nT: the name's whole unit
		}
		msg := fmt.Sprintf("the unit given for %s, %s, contradicts the unit %s in the column's name %q", canonNames[c], p.unit[c], u, p.header[p.src[c]])
		if !same {
			return &Error{File: p.file, Line: headerLine, Batch: -1,
				Msg: fmt.Sprintf("%s, and leaves the field's axes in different units (%s): one axis would be read %g times off the others; give one unit for all three axes (try units bx=U,by=U,bz=U), or none to take the names' units", msg, units, math.Max(ns/p.scale[c], p.scale[c]/ns))}
		}
		p.warn("%s%s: %s: the given unit is used; if the name is right, leave the unit out", p.file, lineSuffix(headerLine), msg)
	}
	if same {
		return nil
	}
	var given, rest []string
	for c := cBx; c <= cBz; c++ {
		switch p.unitFrom[c] {
		case UnitGiven:
			given = append(given, canonNames[c]+"="+p.unit[c])
		case UnitFromName:
		default:
			rest = append(rest, fmt.Sprintf("%s in %s (%s)", canonNames[c], p.unit[c], p.unitSource(c)))
		}
	}
	if len(given) > 0 && len(rest) > 0 {
		u := "U"
		if g := p.givenFieldUnit(); g != "" {
			u = g
		}
		try := fmt.Sprintf("bx=%s,by=%s,bz=%s", u, u, u)
		return &Error{File: p.file, Line: headerLine, Batch: -1,
			Msg: fmt.Sprintf("units are given for some of the field's axes (%s) and not for %s: the axes would be read in different units (%s), one %g times off the others; give the unit of all three axes (try units %s)",
				strings.Join(given, ", "), strings.Join(rest, ", "), units, hi/lo, try)}
	}
	p.warn("%s%s: the field's axes are in different units (%s), %s; if one of these is wrong, that axis is read %g times off the others: give the unit of all three axes (try units bx=U,by=U,bz=U)",
		p.file, lineSuffix(headerLine), units, p.fieldUnitSources(), hi/lo)
	return nil
}

// unitSource says where the unit of column c came from, for messages.
func (p *plan) unitSource(c int) string {
	switch p.unitFrom[c] {
	case UnitGiven:
		return "given"
	case UnitFromName:
		return fmt.Sprintf("by its name %q", p.header[p.src[c]])
	case UnitFromFormat:
		return "by the file's format"
	case UnitFromMetadata:
		return "by the file's metadata"
	}
	return "by default"
}

// fieldUnitSources says where the field axes' units came from: "as the
// column names say", "as given", or axis by axis.
func (p *plan) fieldUnitSources() string {
	if p.unitFrom[cBx] == p.unitFrom[cBy] && p.unitFrom[cBy] == p.unitFrom[cBz] {
		switch p.unitFrom[cBx] {
		case UnitFromName:
			return "as the column names say"
		case UnitGiven:
			return "as given"
		}
	}
	var s []string
	for c := cBx; c <= cBz; c++ {
		s = append(s, canonNames[c]+"'s "+p.unitSource(c))
	}
	s[0] = "bx's unit " + p.unitSource(cBx)
	return strings.Join(s, ", ")
}

// givenFieldUnit returns the unit given for the field axes when every one
// given is the same, else "".
func (p *plan) givenFieldUnit() string {
	u := ""
	for c := cBx; c <= cBz; c++ {
		if p.unitFrom[c] != UnitGiven {
			continue
		}
		if u != "" && u != p.unit[c] {
			return ""
		}
		u = p.unit[c]
	}
	return u
}

func lineSuffix(line int) string {
	if line > 0 {
		return fmt.Sprintf(":%d", line)
	}
	return ""
}
