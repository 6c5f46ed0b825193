package ingest

import (
	"fmt"
	"math"
)

// checkFieldScales compares the units of the three field columns. A unit
// given (WithUnits) that contradicts the unit the column's name states
// is warned about when it leaves the three axes in
// one unit (the name may be wrong), and refused when it leaves them in
// different ones: one axis read 1000 times off while the others are
// right keeps the median |B| in the Earth's band, and nothing else would
// notice. Axes in different units by their names alone are warned about.
func (p *plan) checkFieldScales(headerLine int) error {
	if p.src[cBx] < 0 || p.src[cBy] < 0 || p.src[cBz] < 0 {
		return nil
	}
	same := p.scale[cBx] == p.scale[cBy] && p.scale[cBy] == p.scale[cBz]
	units := fmt.Sprintf("bx in %s, by in %s, bz in %s", p.unit[cBx], p.unit[cBy], p.unit[cBz])
	for c := cBx; c <= cBz; c++ {
		if p.unitFrom[c] != UnitGiven {
			continue
		}
		_, u := SplitUnit(p.header[p.src[c]])
		ns, err := unitScale(kindField, u)
		if u == "" || err != nil || ns == p.scale[c] {
			continue
		}
		msg := fmt.Sprintf("the unit given for %s, %s, contradicts the unit %s in the column's name %q", canonNames[c], p.unit[c], u, p.header[p.src[c]])
		if !same {
			return &Error{File: p.file, Line: headerLine, Batch: -1,
				Msg: fmt.Sprintf("%s, and leaves the field's axes in different units (%s): one axis would be read %g times off the others; give one unit for all three axes (try units bx=U,by=U,bz=U), or none to take the names' units", msg, units, math.Max(ns/p.scale[c], p.scale[c]/ns))}
		}
		p.warn("%s%s: %s: the given unit is used; if the name is right, leave the unit out", p.file, lineSuffix(headerLine), msg)
	}
	if !same {
		p.warn("%s%s: the field's axes are in different units (%s), as the column names say; if one name is wrong, that axis is read off the others by its factor", p.file, lineSuffix(headerLine), units)
	}
	return nil
}

func lineSuffix(line int) string {
	if line > 0 {
		return fmt.Sprintf(":%d", line)
	}
	return ""
}
