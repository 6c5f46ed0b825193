package ingest

import (
	"fmt"
	"strings"
	"unicode"
)

// isPosition reports whether canonical column c carries a position: x, y,
// z, or WGS84 latitude, longitude and height.
func isPosition(c int) bool {
	return (c >= cX && c <= cZ) || c == cLat || c == cLon || c == cHeight
}

// positionWords are words that, beside an axis letter, make a column name
// a position's ("pos_x", "x position", "coord_y").
var positionWords = map[string]bool{
	"pos": true, "position": true, "coord": true, "coords": true, "coordinate": true,
	"loc": true, "location": true,
}

// lengthWords are words that, after a position's name, are a unit of
// length or part of one, known to unitScale or not ("x_US_ft",
// "x_inches", "northing_yd").
var lengthWords = map[string]bool{
	"m": true, "metre": true, "metres": true, "meter": true, "meters": true,
	"km": true, "cm": true, "mm": true, "dm": true, "ft": true, "feet": true, "foot": true,
	"us": true, "usft": true, "survey": true, "in": true, "inch": true, "inches": true,
	"yd": true, "yard": true, "yards": true, "mi": true, "mile": true, "miles": true,
	"chain": true, "chains": true, "link": true, "links": true, "rod": true,
}

// positionLike reports whether a column name that no canonical column was
// found under looks like a position column all the same: a position's
// name with a unit the readers do not know ("x [in]", "x_yd", "lat
// (rad)", "Easting [US ft]"), or an axis letter with a word that makes it
// a position ("pos_x", "x_pos", "Position X (m)", "posY"). It returns the
// canonical column it looks like. Names such as "x_accel" or "z_gyro"
// are not positions and are left alone.
func positionLike(h string) (int, bool) {
	base, u := SplitUnit(h)
	n := strings.TrimSpace(h)
	bracketed := u != "" && (strings.HasSuffix(n, ")") || strings.HasSuffix(n, "]"))
	if c, ok := lookupName(base); ok && isPosition(c) && u != "" {
		words := nameWords(u)
		all := len(words) > 0
		for _, w := range words {
			all = all && (lengthWords[w] || positionWords[w])
		}
		if bracketed || all {
			return c, true
		}
	}
	name := n
	if bracketed {
		name = base
	}
	words := nameWords(name)
	if len(words) == 0 {
		return 0, false
	}
	// "x_US_ft", "easting_us_survey_ft": a position's name, then words
	// of a unit of length.
	if c, ok := lookupName(words[0]); ok && isPosition(c) && len(words) > 1 {
		all := true
		for _, w := range words[1:] {
			all = all && (lengthWords[w] || positionWords[w])
		}
		if all {
			return c, true
		}
	}
	// "pos_x", "Position X", "x_pos": an axis letter beside a position
	// word, and nothing else but unit words.
	axis, pos := -1, false
	for _, w := range words {
		switch {
		case w == "x" || w == "y" || w == "z":
			if axis >= 0 {
				return 0, false
			}
			axis = cX + int(w[0]-'x')
		case positionWords[w]:
			pos = true
		case lengthWords[w]:
		default:
			// "posx", "xpos": one word.
			one := false
			for p := range positionWords {
				for _, a := range []string{"x", "y", "z"} {
					if w == p+a || w == a+p {
						one = true
						if axis >= 0 {
							return 0, false
						}
						axis, pos = cX+int(a[0]-'x'), true
					}
				}
			}
			if !one {
				return 0, false
			}
		}
	}
	if axis >= 0 && pos {
		return axis, true
	}
	return 0, false
}

// nameWords splits a column name into lower-case words at anything that
// is not a letter or digit.
func nameWords(s string) []string {
	return strings.FieldsFunc(strings.ToLower(s), func(r rune) bool {
		return !unicode.IsLetter(r) && !unicode.IsDigit(r)
	})
}

// checkPositionNames refuses a log with a column that looks like a
// position column (positionLike) when that position is not read from
// anywhere else: the readers would leave it out and read the position as
// 0 for every row, which fits lines to positions that are not the
// readings'. A position's unit the readers do not know cannot be given,
// so the message says to convert it; a name they do not recognise can be
// mapped. anyXYZ and hasLL say whether local or WGS84 positions were
// found (a log with latitude and longitude needs no x, and one with x no
// latitude).
func (p *plan) checkPositionNames(headerLine int, anyXYZ, hasLL bool) error {
	for i, h := range p.header {
		if p.uses(i) {
			continue
		}
		c, ok := positionLike(h)
		if w := nameWords(h); ok && len(w) > 0 && p.inFrame == FrameNED && (w[0] == "easting" || w[0] == "northing") {
			c, _ = compassAxis(w[0], p.inFrame) // "Easting [US ft]" is y in NED
		}
		if !ok || p.src[c] >= 0 {
			continue
		}
		if _, mapped := p.cfg.mapping[c]; mapped {
			continue
		}
		if c >= cX && c <= cZ && hasLL && !anyXYZ {
			continue // positions from latitude and longitude
		}
		if (c == cLat || c == cLon || c == cHeight) && anyXYZ {
			continue // local positions; WGS84 columns are not read
		}
		what := canonNames[c]
		switch c {
		case cLat:
			what = "the latitude"
		case cLon:
			what = "the longitude"
		case cHeight:
			what = "the height"
		}
		col := fmt.Sprintf("%d (%q)", i+1, h)
		base, u := SplitUnit(h)
		if lc, ok := lookupName(base); ok && lc == c && u != "" && !allPositionWords(u) {
			if _, err := unitScale(kindOf(c), u); err != nil {
				want := "m, cm, mm, km or ft"
				if kindOf(c) == kindDegrees {
					want = "degrees"
				}
				return &Error{File: p.file, Line: headerLine, Batch: -1, Column: col,
					Msg: fmt.Sprintf("looks like %s (a position) in a unit this reader does not know, %q (it reads positions in %s): left out, the position would be read as 0 for every row; convert the column to one of those units; if it is not a position, rename it (a column that does hold %s is given with a column mapping such as %s=NAME, on the command line --column %s=NAME)", what, u, want, canonNames[c], canonNames[c], canonNames[c])}
			}
		}
		return &Error{File: p.file, Line: headerLine, Batch: -1, Column: col,
			Msg: fmt.Sprintf("looks like %s (a position), but its name is not one this reader recognises: left out, the position would be read as 0 for every row; read it as %s with a mapping (try columns %s=%s), adding its unit if it is not metres (try units %s=ft), or rename it if it is not a position",
				what, canonNames[c], canonNames[c], h, canonNames[c])}
	}
	return nil
}

// notePositionsAbsent records the position columns a log with local
// positions does not have (they are read as 0) and warns about them. A
// column under its canonical name that an earlier conversion wrote as 0
// for want of it (carried, from MetaAbsent) is absent too.
func (p *plan) notePositionsAbsent(carried []string) {
	var unread []string
	for i, h := range p.header {
		if !p.uses(i) {
			unread = append(unread, h)
		}
	}
	others := "none"
	if len(unread) > 0 {
		others = strings.Join(unread, ", ")
	}
	for c := cX; c <= cZ; c++ {
		if p.src[c] < 0 {
			p.absent = append(p.absent, c)
			p.warn("%s: no column for %s: %s is read as 0 for every row (columns not read: %s); if one of them is %s, give it with a column mapping such as %s=NAME, on the command line --column %s=NAME",
				p.file, canonNames[c], canonNames[c], others, canonNames[c], canonNames[c], canonNames[c])
			continue
		}
		for _, a := range carried {
			if a == canonNames[c] && strings.TrimSpace(p.header[p.src[c]]) == a {
				p.absent = append(p.absent, c)
				p.warn("%s: column %s holds no positions: the log this file was converted from had no column for %s, and it was written as 0 (metadata %s)",
					p.file, a, a, MetaAbsent)
			}
		}
	}
}

// noteHeightAbsent warns about a log with latitude and longitude but no
// height column: every reading is placed at height 0 on the WGS84
// ellipsoid, so z follows the ellipsoid (the Earth's curvature), not the
// ground the sensor was carried over, and on a slope the fits are those of
// positions that are not the readings'. The local-positions branch warns
// so about a missing z (notePositionsAbsent); a height column under a
// name not read (such as "antenna_height_m") was dropped without a word.
func (p *plan) noteHeightAbsent() {
	var unread []string
	for i, h := range p.header {
		if !p.uses(i) {
			unread = append(unread, h)
		}
	}
	const lead = "%s: no column for height beside latitude and longitude: every reading is placed at height 0 on the WGS84 ellipsoid, so z follows the ellipsoid, not the ground"
	if len(unread) == 0 {
		// Every column is read: "(columns not read: none); if one of them
		// is the height" pointed at columns there are none of (found in
		// review).
		p.warn(lead+" (every column of the log is read, and none is a height): to place the readings at their heights, log the height in a column of its own, mapped with --column height=NAME when its name is not taken for one",
			p.file)
		return
	}
	p.warn(lead+" (columns not read: %s); if one of them is the height, give it with a column mapping such as height=NAME, on the command line --column height=NAME (and its unit, such as --unit height=ft, if it is not metres)",
		p.file, columnList(unread))
}

// allPositionWords reports whether s is made of position words only
// ("pos" in "x_pos"), not a unit.
func allPositionWords(s string) bool {
	words := nameWords(s)
	for _, w := range words {
		if !positionWords[w] {
			return false
		}
	}
	return len(words) > 0
}

// columnList lists column names for messages, separated by commas; a name
// that holds a comma itself is quoted ("Field X, nT"), so that the list
// reads unambiguously.
func columnList(names []string) string {
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = n
		if strings.Contains(n, ",") {
			out[i] = fmt.Sprintf("%q", n)
		}
	}
	return strings.Join(out, ", ")
}

// choosePositions decides, for a log with both local positions (x, y, z)
// and WGS84 ones (latitude, longitude, height), which are read; the
// others' columns are left unread. A mapping decides: mapped x, y or z
// choose the local positions, a mapped latitude, longitude or height the
// WGS84 ones, and both together are refused. Without one, columns named
// exactly x or y are read; x and y found only as a map grid's Easting and
// Northing give way to latitude and longitude, which place the readings
// on the Earth and whose north is true north (a grid's north is not);
// either way a warning says which were read and how to choose the others.
func (p *plan) choosePositions(headerLine int) error {
	var local, geo []int // position columns found
	var mappedLocal, mappedGeo []string
	for _, c := range []int{cX, cY, cZ, cLat, cLon, cHeight} {
		if p.src[c] < 0 {
			continue
		}
		m := ""
		if _, ok := p.cfg.mapping[c]; ok {
			m = canonNames[c] + "=" + p.header[p.src[c]]
		}
		if c == cLat || c == cLon || c == cHeight {
			geo = append(geo, c)
			if m != "" {
				mappedGeo = append(mappedGeo, m)
			}
		} else {
			local = append(local, c)
			if m != "" {
				mappedLocal = append(mappedLocal, m)
			}
		}
	}
	if len(mappedLocal) > 0 && len(mappedGeo) > 0 {
		return &Error{File: p.file, Line: headerLine, Batch: -1,
			Msg: fmt.Sprintf("the mapping gives both local positions (%s) and WGS84 ones (%s): a log's positions are read from one or the other; leave out the mapping of the ones not to read",
				strings.Join(mappedLocal, ", "), strings.Join(mappedGeo, ", "))}
	}
	hasLL := p.src[cLat] >= 0 && p.src[cLon] >= 0
	if len(mappedGeo) > 0 && !hasLL && len(local) > 0 {
		missing := "latitude and longitude"
		switch {
		case p.src[cLat] >= 0:
			missing = "longitude"
		case p.src[cLon] >= 0:
			missing = "latitude"
		}
		return &Error{File: p.file, Line: headerLine, Batch: -1,
			Msg: fmt.Sprintf("the mapping %s reads WGS84 positions, but no column gives the %s (columns found: %s); for local positions, map z instead of height (z=NAME, on the command line --column z=NAME)",
				strings.Join(mappedGeo, ", "), missing, columnList(p.header))}
	}
	if len(local) == 0 || len(geo) == 0 {
		return nil
	}
	names := func(cs []int) string {
		var n []string
		for _, c := range cs {
			n = append(n, p.header[p.src[c]])
		}
		return strings.Join(n, ", ")
	}
	mapping := func(cs []int) string {
		var n []string
		for _, c := range cs {
			n = append(n, canonNames[c]+"="+p.header[p.src[c]])
		}
		return strings.Join(n, ",")
	}
	drop := func(cs []int) {
		for _, c := range cs {
			p.src[c], p.auto[c] = -1, false
		}
	}
	where := p.file + lineSuffix(headerLine)
	grid := len(mappedLocal) == 0 // x and y only from Easting and Northing
	for _, c := range []int{cX, cY} {
		if p.src[c] >= 0 {
			if _, compass := compassAxis(p.header[p.src[c]], p.inFrame); !compass {
				grid = false
			}
		}
	}
	switch {
	case len(mappedGeo) > 0 || (hasLL && grid):
		if len(mappedGeo) == 0 {
			p.warn("%s: the log has latitude and longitude (%s) and a map grid's coordinates (%s): positions are read from latitude and longitude, and %s are not read; to read the grid's instead, map them (try columns %s)",
				where, names(geo), names(local), names(local), mapping(local))
		} else if p.src[cX] >= 0 || p.src[cY] >= 0 {
			p.warn("%s: positions are read from latitude and longitude, as mapped; %s are not read", where, names(local))
		}
		drop(local)
	case len(mappedLocal) > 0 || !hasLL:
		drop(geo)
	default:
		p.warn("%s: the log has local positions (%s) and latitude and longitude (%s): positions are read from %s, and %s are not read; to read latitude and longitude instead, map them (try columns %s)",
			where, names(local), names(geo), names(local), names(geo), mapping(geo))
		drop(geo)
	}
	return nil
}

// checkCompassMapping refuses a mapping that reads a map grid's Easting
// as the position column that holds north in the input's frame, or
// Northing as the one that holds east (x is north in NED): the readings
// would be placed with east and north swapped, and every line fitted
// across the wrong ground.
func (p *plan) checkCompassMapping(headerLine int) error {
	dir := map[int]string{cX: "east", cY: "north", cZ: "up"}
	if p.inFrame == FrameNED {
		dir = map[int]string{cX: "north", cY: "east", cZ: "down"}
	}
	first, fix := "", []string{}
	for c := cX; c <= cZ; c++ {
		if _, mapped := p.cfg.mapping[c]; !mapped {
			continue
		}
		h := p.header[p.src[c]]
		a, ok := compassAxis(h, p.inFrame)
		if !ok || a == c {
			continue
		}
		if first == "" {
			first = fmt.Sprintf("mapping %s=%s: %q is a map grid's %s coordinate, but %s is %s in the %s frame",
				canonNames[c], h, h, dir[a], canonNames[c], dir[c], strings.ToUpper(p.inFrame.String()))
		}
		fix = append(fix, canonNames[a]+"="+h)
	}
	if first == "" {
		return nil
	}
	return &Error{File: p.file, Line: headerLine, Batch: -1,
		Msg: fmt.Sprintf("%s: the readings would be placed with east and north swapped; map it to the axis that is its direction (try columns %s)", first, strings.Join(fix, ","))}
}
