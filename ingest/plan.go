package ingest

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"golang.org/x/text/unicode/norm"
)

// plan is how one input's columns become canonical columns.
type plan struct {
	file   string
	format string
	header []string // source column names
	// schemaTypes are the source columns' types (Arrow, Parquet); nil
	// for text.
	schemaTypes []arrow.DataType
	src         [nCanon]int // source column index, -1 when absent
	unit        [nCanon]string
	unitFrom    [nCanon]string // where the unit came from (ColumnMapping.UnitFrom)
	scale       [nCanon]float64
	auto        [nCanon]bool   // found by name rather than by an explicit mapping
	desc        [nCanon]string // how a column is derived, when more than a copy
	geodetic    bool           // positions come from lat/lon/height
	hasPos      bool           // output has x, y, z
	// absent are the position columns (cX..cZ) the input does not have
	// although it has others: they hold 0 for every row (MetaAbsent).
	absent  []int
	noTime  bool          // no time column (WithTimeOptional): times are NaN
	inFrame Frame         // frame of the input columns
	out     []int         // canonical indices of the output columns, in order
	schema  *arrow.Schema // output schema, with metadata
	meta    map[string]string
	origin  *Geodetic
	enu     enuFrame
	cfg     *config
	// warnings are problems that do not stop the reading (see Warnings).
	warnings []string
	// orderAll: time may not go backwards from row to row; orderGroup: it
	// may not within a group (WithTimeOrder), checked by groupOrder.
	orderAll, orderGroup bool
	groupLast            map[string]*float64 // last time of each group
	// timeUTC: the time column says its timestamps are UTC (its unit, from
	// the header as in "Time (UTC)" or given, is UTC, or it is named
	// "utc"), so timestamps without an offset are not warned about;
	// naiveWarned: they have been.
	timeUTC, naiveWarned bool
	// timeChecked: the first time has been looked at by checkTimeUnit.
	timeChecked bool
	// clockLast is the last time read, in file order, and clockWarned
	// set once a step back like the hour repeated when the clocks go
	// back has been warned about (noteClockChange).
	clockLast   float64
	clockWarned bool
	// Rows read, and rows without a group (an empty cell or a null in the
	// group column), the first of them at groupEmptyAt (see noteGroups).
	groupRows, groupEmpty int64
	groupEmptyAt          string
	// frameStated: inFrame was given (WithFrame) or stated by the input's
	// metadata (MetaFrame, IAGA-2002's elements), not assumed.
	frameStated bool
	// zeroNoFix: the origin lies over noFixKm from latitude 0, longitude 0,
	// so a reading there is a receiver's placeholder for no fix, left out
	// (noFix); noFixRows counts those left out, noFixAt the places of the
	// first few (see noteNoFix).
	zeroNoFix bool
	noFixRows int64
	noFixAt   []string

	// fileOrigin is the origin the file states (MetaOrigin), as written.
	fileOrigin string
	// timeJoin is the time-of-day column joined after the date column
	// src[cTime] with a space (a mapping time=DATE+TIME); -1 when none.
	timeJoin int
}

// noFixKm is the least distance, km, of a latitude/longitude log's origin
// from latitude 0, longitude 0 for a reading at exactly 0, 0 to be taken
// as no fix: many GNSS receivers write 0, 0 (and height 0) before they
// have a fix. Taken as a position it lay 5800 km from a survey at 52
// degrees north: as the default origin it put every reading there and
// read a 25 A cable as 17.7 A, its cover 0.69 m for 1.10 m, with every
// fit but the first "sound" (found in review); mid-survey, it failed its
// traverse's fit. No survey spans 50 km (an origin farther than that
// from the readings is refused on the command line).
const noFixKm = 50

// noFixAhead is how many bytes of a latitude/longitude log read with the
// default origin are parsed ahead past a first reading without a fix
// (noFix) for the first with one, which becomes the origin; past it, with
// none found, the origin is the first reading, at 0, 0.
const noFixAhead = 16 << 20

// noFixShown is how many places of readings without a fix a warning names.
const noFixShown = 5

// noFix reports whether a latitude/longitude reading is a receiver's
// placeholder for no fix: exactly 0, 0.
func noFix(lat, lon float64) bool { return lat == 0 && lon == 0 }

// noteNoFix counts n readings left out as without a fix (noFix), at the
// places at (file:line, or file, batch and row), for the warning.
func (p *plan) noteNoFix(n int, at []string) {
	p.noFixRows += int64(n)
	for _, a := range at {
		if len(p.noFixAt) < noFixShown {
			p.noFixAt = append(p.noFixAt, a)
		}
	}
}

// finishNoFix warns, at the end of the input, of the readings left out
// at latitude 0, longitude 0.
func (p *plan) finishNoFix() {
	if p.noFixRows == 0 {
		return
	}
	more := ""
	if p.noFixRows > int64(len(p.noFixAt)) {
		more = fmt.Sprintf(" and %d more", p.noFixRows-int64(len(p.noFixAt)))
	}
	what := "1 reading"
	if p.noFixRows > 1 {
		what = fmt.Sprintf("%d readings", p.noFixRows)
	}
	p.warn("%s%s: latitude 0, longitude 0, %.0f km from the origin: a GNSS receiver's placeholder for no fix, not a position; %s left out, not fitted nor taken as the origin",
		strings.Join(p.noFixAt, ", "), more, greatCircleKm(Geodetic{}, *p.origin), what)
	p.noFixRows = 0 // warned once
}

// greatCircleKm is the distance between a and b along the sphere of the
// Earth's mean radius (IUGG R1 = 6371.0088 km; haversine formula), in km.
func greatCircleKm(a, b Geodetic) float64 {
	rad := math.Pi / 180
	dp, dl := (b.Lat-a.Lat)*rad, (b.Lon-a.Lon)*rad
	h := math.Sin(dp/2)*math.Sin(dp/2) + math.Cos(a.Lat*rad)*math.Cos(b.Lat*rad)*math.Sin(dl/2)*math.Sin(dl/2)
	return 2 * 6371.0088 * math.Asin(math.Sqrt(math.Min(1, h)))
}

// checkTimeUnit looks at the first time of the input (t, NaN for none in
// a batch; where says where it is) and warns once when it is read in
// seconds by default yet is beyond 1e11 s, after the year 5000 as a Unix
// time: such times are Unix milliseconds, microseconds or nanoseconds
// read in the wrong unit. A unit given for time is trusted.
func (p *plan) checkTimeUnit(t float64, where string) {
	if p.timeChecked || t != t {
		return
	}
	p.timeChecked = true
	if _, given := p.cfg.units[cTime]; given {
		return
	}
	if u := strings.ToLower(p.unit[cTime]); u != "s" && u != "utc" && u != "gmt" {
		return
	}
	for _, g := range []struct {
		lo, hi     float64
		name, unit string
	}{{1e11, 1e14, "milliseconds", "ms"}, {1e14, 1e17, "microseconds", "us"}, {1e17, 1e20, "nanoseconds", "ns"}} {
		if math.Abs(t) > g.lo && math.Abs(t) < g.hi {
			p.warn("%s: column %s: times near %.4g read as seconds would be Unix times after the year 5000; they look like Unix %s: give the unit time=%s (on the command line --unit time=%s)",
				where, p.header[p.src[cTime]], t, g.name, g.unit, g.unit)
		}
	}
}

// noteGroups counts the rows of a batch and those among them with no
// group (empty text or null); where tells the place of the first of
// those, for the warning.
func (p *plan) noteGroups(rows, empty int, where func() string) {
	p.groupRows += int64(rows)
	if empty > 0 && p.groupEmpty == 0 {
		p.groupEmptyAt = where()
	}
	p.groupEmpty += int64(empty)
}

// finishGroups warns, at the end of the input, when some rows have a
// group and some have none: a fit by group would take the rows without one
// (between traverses, a sensor id not logged) as one more group of their
// own. A group column that is empty throughout groups nothing and is not
// warned about.
func (p *plan) finishGroups() {
	if p.src[cGroup] < 0 || p.groupEmpty == 0 || p.groupEmpty == p.groupRows {
		return
	}
	p.warn("%s: column %s: rows without a group (an empty cell or a null): %d of %d, the first here; a fit by group leaves them out (fill in their group to fit them)",
		p.groupEmptyAt, p.header[p.src[cGroup]], p.groupEmpty, p.groupRows)
	p.groupEmpty = 0 // warned once
}

// emptyGroups counts the rows of a canonical group column with no group
// (a null or empty text) and returns the first such row, or -1.
func emptyGroups(g arrow.Array) (n, first int) {
	first = -1
	s, _ := g.(*array.String)
	for i := 0; i < g.Len(); i++ {
		if g.IsNull(i) || (s != nil && s.Value(i) == "") {
			if first < 0 {
				first = i
			}
			n++
		}
	}
	return n, first
}

// naiveTime warns, once per input, that the time column holds timestamps
// without a UTC offset, which are read as UTC. where is "FILE:LINE",
// "FILE: batch B row R" or "FILE"; what names them ("times such as
// \"2026-04-21T09:40:00\"", "timestamps of type timestamp[ms] without a
// time zone").
func (p *plan) naiveTime(where, what string, typed bool) {
	if p.timeUTC || p.naiveWarned {
		return
	}
	p.naiveWarned = true
	fix := "write the offset into the times (2026-04-21T09:40:00+01:00) or give it (WithTimeOffset, on the command line --time-offset +01:00); if the log crosses a change of the clocks, give its zone instead (WithTimeZone, on the command line --time-zone Europe/Berlin)"
	if typed {
		fix = "store them as timestamps with a time zone, or give their zone (WithTimeZone, on the command line --time-zone Europe/Berlin) or offset (WithTimeOffset, on the command line --time-offset +01:00)"
	}
	p.warn("%s: column %s: %s give no UTC offset and are read as UTC; if they are local times, every time is off by the zone's offset (a base-station correction then pairs the wrong readings): %s, or, if they are UTC, say so with the unit UTC (on the command line --unit time=UTC)",
		where, p.header[p.src[cTime]], what, fix)
}

// warn records a warning (see Warnings).
func (p *plan) warn(format string, a ...any) {
	p.warnings = append(p.warnings, fmt.Sprintf(format, a...))
}

// Warnings returns the warnings a reader of this package has raised so
// far: problems with the input that do not stop the reading, such as two
// columns with the same name of which neither is read, an IAGA-2002
// variation file in H E Z or H D Z whose header gives no DECBAS, or an
// Arrow IPC stream without its end-of-stream marker read with
// WithAllowUnterminatedStream. Those found in the header are there after
// Open; those found in the data are complete once Next has returned false.
// Each reads "FILE: message" (or "FILE:LINE: message"). It returns nil for
// readers of other packages.
func Warnings(r Reader) []string {
	if p := planOf(r); p != nil && len(p.warnings) > 0 {
		return append([]string(nil), p.warnings...)
	}
	return nil
}

// InputFrame returns the frame of the input's own columns as a reader of
// this package takes them (WithFrame, else the input's metadata, else
// FrameENU; FrameNED is turned to east, north, up on reading), and whether
// it was given or stated by the input rather than assumed. ok is false for
// readers of other packages.
func InputFrame(r Reader) (f Frame, stated, ok bool) {
	if p := planOf(r); p != nil {
		return p.inFrame, p.frameStated, true
	}
	return FrameENU, false, false
}

// InputColumns returns the input's column names as a reader of this
// package found them, and those of them that feed no canonical column
// (not read). ok is false for readers of other packages.
func InputColumns(r Reader) (columns, unread []string, ok bool) {
	p := planOf(r)
	if p == nil {
		return nil, nil, false
	}
	columns = append([]string(nil), p.header...)
	for i, h := range p.header {
		if !p.uses(i) {
			unread = append(unread, h)
		}
	}
	return columns, unread, true
}

// TimeBasis says how a reader of this package took the input's times,
// complete once Next has returned false: naive when they were written
// without a UTC offset (text, or Arrow timestamps without a time zone)
// and read as UTC, as warned (they may be a zone's local times); saidUTC
// when the time column said they are UTC (its unit). Both are false for
// times that carry their offset, seconds since 1970, an IAGA-2002 file's
// times (UTC by the format) and readers of other packages.
func TimeBasis(r Reader) (naive, saidUTC bool) {
	if p := planOf(r); p != nil {
		return p.naiveWarned, p.timeUTC
	}
	return false, false
}

// ColumnMapping describes where one canonical column came from.
type ColumnMapping struct {
	Column string  `json:"column"` // canonical name
	Source string  `json:"source"` // the input's column name(s)
	Unit   string  `json:"unit"`   // unit of the input
	Scale  float64 `json:"scale"`  // factor to the canonical unit
	// UnitFrom says where the unit came from: UnitGiven, UnitFromName,
	// UnitFromFormat, UnitFromMetadata or UnitDefault ("" for a column
	// the input does not have).
	UnitFrom string `json:"unit_from,omitempty"`
}

// Where a column's unit came from (ColumnMapping.UnitFrom).
const (
	// UnitGiven: by WithUnits.
	UnitGiven = "given"
	// UnitFromName: a unit suffix of the column's name ("Bx_uT").
	UnitFromName = "name"
	// UnitFromFormat: the format defines it (IAGA-2002: nT).
	UnitFromFormat = "format"
	// UnitFromMetadata: the input is in the canonical form, as this
	// package writes it: its schema metadata (Arrow, Parquet) or "# key:
	// value" comment lines (CSV) carry MetaFrame, and its columns are in
	// the canonical units (bx, by, bz in nT). This holds for columns
	// under their canonical names only: a column of another name (mapped
	// with WithColumns, or an alias such as "Bx") gets UnitDefault.
	UnitFromMetadata = "metadata"
	// UnitDefault: nothing states the unit; the canonical unit is assumed.
	UnitDefault = "default"
)

// Mappings returns where each output column of a reader opened by this
// package comes from, with its unit and where that unit came from (nil
// for readers of other packages).
func Mappings(r Reader) []ColumnMapping {
	if p := planOf(r); p != nil {
		return p.mappings()
	}
	return nil
}

func (p *plan) mappings() []ColumnMapping {
	var m []ColumnMapping
	// An NED log's east column (its y) becomes the output's x, its north
	// column y, and its down column, negated, z.
	ned := [nCanon]string{}
	if p.inFrame == FrameNED {
		if !p.geodetic {
			ned[cX], ned[cY], ned[cZ] = " (NED east)", " (NED north)", " (NED down, negated)"
		}
		ned[cBx], ned[cBy], ned[cBz] = " (NED east)", " (NED north)", " (NED down, negated)"
	}
	for _, out := range p.out {
		c := out // the input's column
		if ned[out] != "" {
			switch out {
			case cX, cBx:
				c = out + 1
			case cY, cBy:
				c = out - 1
			}
		}
		cm := ColumnMapping{Column: canonNames[out], Unit: p.unit[c], Scale: p.scale[c], UnitFrom: p.unitFrom[c]}
		switch {
		case p.desc[c] != "":
			cm.Source = p.desc[c]
		case p.src[c] >= 0:
			cm.Source = p.header[p.src[c]]
		case c == cTime && p.noTime:
			cm.Source, cm.Unit = "(absent: no time)", ""
		case c >= cX && c <= cZ && p.geodetic:
			cm.Source = "WGS84 " + p.header[p.src[cLat]] + "/" + p.header[p.src[cLon]]
			if p.src[cHeight] >= 0 {
				cm.Source += "/" + p.header[p.src[cHeight]]
			}
			cm.Unit, cm.Scale, cm.UnitFrom = "m", 1, UnitFromFormat
		default:
			cm.Source = "(absent: 0)"
		}
		cm.Source += ned[out]
		m = append(m, cm)
	}
	return m
}

// newPlan resolves the input's column names against the options.
// headerLine is the line of a text file's header (0 when there is none),
// for messages.
// joinedTime finds the two columns of a time mapping DATE+TIME (spec),
// trying each "+" in turn so that a name holding one still matches.
func (p *plan) joinedTime(spec string, find func(string) int) (date, clock int, err error) {
	defer func() {
		if e, ok := err.(*Error); ok {
			e.Column = canonNames[cTime] // the column mapped
		}
	}()
	for k := 0; k < len(spec); k++ {
		if spec[k] != '+' {
			continue
		}
		d, t := find(strings.TrimSpace(spec[:k])), find(strings.TrimSpace(spec[k+1:]))
		if d < 0 || t < 0 {
			continue
		}
		if p.format != string(FormatCSV) {
			return 0, 0, fileErr(p.file, nil, "mapping time=%s: a date column and a time column are joined in CSV files only; give one time column (convert the log with the two joined, or export it as CSV)", spec)
		}
		if d == t {
			return 0, 0, fileErr(p.file, nil, "mapping time=%s: the date and the time of day name the same column", spec)
		}
		return d, t, nil
	}
	return 0, 0, fileErr(p.file, nil, "mapping time=%s: no column %q, and no two columns DATE+TIME of that name to join (columns found: %s)", spec, spec, columnList(p.header))
}

func newPlan(file, format string, header []string, types []arrow.DataType, meta map[string]string, headerLine int, cfg *config) (*plan, error) {
	p := &plan{file: file, format: format, header: header, schemaTypes: types, cfg: cfg, meta: map[string]string{}}
	for i := range p.src {
		p.src[i] = -1
	}
	// Metadata from an earlier conversion.
	frame := FrameENU
	var fileFrame *Frame // the frame the file's metadata states
	var carried []string // MetaAbsent of an earlier conversion
	for k, v := range meta {
		switch {
		case k == MetaAbsent:
			carried = strings.Fields(v)
		case k == MetaFrame:
			// The file states the axes of its columns: an earlier
			// conversion's "enu" or "sensor", or a logger's (or a user's)
			// "# undercurrent.frame: ned" line, which is read as --frame
			// ned is. A value that names no frame is refused rather than
			// read as ENU.
			f, err := ParseFrame(v)
			if err != nil {
				return nil, fileErr(file, nil, "its metadata %s is %q, which names no frame (want enu, ned or sensor): correct it, or give the frame with WithFrame (on the command line --frame)", MetaFrame, v)
			}
			frame, fileFrame, p.frameStated = f, &f, true
		case k == MetaOrigin:
			var g Geodetic
			if _, err := fmt.Sscanf(v, "%g %g %g", &g.Lat, &g.Lon, &g.H); err == nil {
				if m := originProblem(g); m != "" {
					return nil, fileErr(file, nil, "its origin (metadata %s, in a CSV log the line \"# %s: %s\"): %s", MetaOrigin, MetaOrigin, v, m)
				}
				g = p.wrapOrigin(g, "metadata "+MetaOrigin)
				p.origin, p.fileOrigin = &g, v
			}
		case strings.HasPrefix(k, MetaPrefix):
			p.meta[strings.TrimPrefix(k, MetaPrefix)] = v
		}
	}
	if cfg.frameSet {
		if fileFrame != nil && *fileFrame != cfg.frame {
			p.warn("%s: its metadata (%s) says its columns are %s, but they are read as %s, as the frame given says (WithFrame, on the command line --frame)",
				file, MetaFrame, frameWords(*fileFrame), frameWords(cfg.frame))
		}
		frame, p.frameStated = cfg.frame, true
	}
	p.inFrame = frame

	// A mapping names a column exactly, else ignoring case and blanks;
	// both compare names in Unicode form NFC (sameName).
	find := func(name string) int {
		for i, h := range header {
			if sameName(h, name, false) {
				return i
			}
		}
		for i, h := range header {
			if sameName(h, name, true) {
				return i
			}
		}
		return -1
	}
	p.timeJoin = -1
	for c, name := range cfg.mapping {
		i := find(name)
		if i < 0 && c == cTime && strings.Contains(name, "+") {
			// time=DATE+TIME: a date column and a time-of-day column,
			// as European and Windows loggers write them, joined with a
			// space before the time is parsed.
			d, t, err := p.joinedTime(name, find)
			if err != nil {
				return nil, err
			}
			p.src[c], p.timeJoin = d, t
			p.desc[c] = header[d] + "+" + header[t]
			continue
		}
		if i < 0 {
			e := fileErr(file, nil, "mapping %s=%s: no column %q (columns found: %s)", canonNames[c], name, name, columnList(header))
			e.Column = canonNames[c] // the column mapped, for --json's column field
			return nil, e
		}
		p.src[c] = i
	}
	if err := p.checkSharedSource(headerLine); err != nil {
		return nil, err
	}
	taken := map[int]bool{}
	for _, i := range p.src {
		if i >= 0 {
			taken[i] = true
		}
	}
	if p.timeJoin >= 0 {
		taken[p.timeJoin] = true
	}
	unitFromName := [nCanon]string{}
	// Canonical names first, then aliases: a column named exactly x is
	// x whatever the order of the columns, and "Easting" beside it is not.
	for _, aliases := range []bool{false, true} {
		for i, h := range header {
			if taken[i] {
				continue
			}
			c, u, alias, ok := p.autoName(h)
			if !ok || alias != aliases || p.src[c] >= 0 {
				continue
			}
			if _, explicit := cfg.mapping[c]; explicit {
				continue
			}
			p.src[c] = i
			p.auto[c] = true
			unitFromName[c] = u
			taken[i] = true
		}
	}
	p.checkAttitude()
	if err := p.checkCompassMapping(headerLine); err != nil {
		return nil, err
	}
	for c := range nCanon { // in order, so that the first column is named
		if _, mapped := cfg.mapping[c]; !mapped {
			continue
		}
		if _, u := SplitUnit(header[p.src[c]]); u != "" {
			if _, err := unitScale(kindOf(c), u); err == nil {
				unitFromName[c] = u
			} else if _, given := cfg.units[c]; !given && kindOf(c) == kindField {
				if err := p.unknownNameUnit(c, headerLine); err != nil {
					return nil, err
				}
			}
		}
	}

	if format != string(FormatIAGA) { // IAGA-2002 columns are taken by position
		if err := p.checkDuplicates(headerLine); err != nil {
			return nil, err
		}
	}

	// A log written from one read without time (Samples.NoTime) carries
	// MetaTime "absent" and a time column of NaN: it has no time.
	if _, mapped := cfg.mapping[cTime]; meta[MetaTime] == "absent" && p.src[cTime] >= 0 && !mapped {
		if !cfg.timeOptional {
			return nil, fileErr(file, nil, "no time: its metadata (%s: absent) says it was written from a log without time, and its time column holds no times; it can be read only where no time is needed (calibrate; in the library, with WithTimeOptional)", MetaTime)
		}
		p.src[cTime] = -1
	}

	// A log without a time column by name whose schema has one timestamp
	// column (ts, utc_time, gps_time, event_time) takes it, with a note:
	// its type says what it holds, and before, such a log was refused,
	// or read without time where none is needed, in silence.
	if _, mapped := cfg.mapping[cTime]; p.src[cTime] < 0 && !mapped && types != nil {
		lone := -1
		for i, dt := range types {
			if dt.ID() != arrow.TIMESTAMP && dt.ID() != arrow.DATE64 {
				continue
			}
			if lone >= 0 {
				lone = -2
				break
			}
			lone = i
		}
		if lone >= 0 && !taken[lone] {
			p.src[cTime], p.auto[cTime], taken[lone] = lone, true, true
			p.warn("%s: no column is named as the time, and column %s, of type %s, is the only timestamp column: it is read as the time (if it is not, give the time column with a column mapping, on the command line --column time=NAME)", file, quoteText(header[lone]), types[lone])
		}
	}

	// Required columns.
	var missing []string
	p.noTime = p.src[cTime] < 0 && cfg.timeOptional
	required := []int{cTime, cBx, cBy, cBz}
	if cfg.currentRecord {
		required = []int{cTime, cCurrent}
	}
	for _, c := range required {
		if p.src[c] < 0 && !(c == cTime && p.noTime) {
			missing = append(missing, canonNames[c])
		}
	}
	if len(missing) > 0 {
		if err := p.unreadUnitColumn(missing, taken, headerLine); err != nil {
			return nil, err
		}
		if headerLine > 0 && format == string(FormatCSV) && numbersOnly(header) {
			return nil, fileErr(file, nil, "no column for %s: the header line holds numbers (%s), so the file seems to have no header line; give its %d column names, in the file's order, with a header option (on the command line --header %s, say)",
				strings.Join(missing, ", "), columnList(header[:min(len(header), 4)])+map[bool]string{true: ", ...", false: ""}[len(header) > 4],
				len(header), headerExample(len(header)))
		}
		tried := "none"
		if len(cfg.mappingText) > 0 {
			tried = strings.Join(cfg.mappingText, ", ")
		}
		// A field column mapped by a name that states no unit is read in
		// nT: a log in uT so read gave currents 1000 times too small
		// (found in review), so the advice names the unit too.
		unit := ""
		for _, m := range missing {
			if c, _ := canonIndex(m); kindOf(c) == kindField {
				unit = fmt.Sprintf(", and its unit with a unit option %s=U (on the command line --unit %s=U) unless the name states it (%s_uT, \"%s (uT)\"), else it is read in nT", m, m, strings.ToUpper(m[:1])+m[1:], strings.ToUpper(m[:1])+m[1:])
				break
			}
		}
		return nil, fileErr(file, nil, "no column for %s (columns found: %s; mapping tried: %s; give one with a column mapping such as %s=NAME, on the command line --column %s=NAME%s)",
			strings.Join(missing, ", "), columnList(header), tried, missing[0], missing[0], unit)
	}

	// Units.
	for c := 0; c < nCanon; c++ {
		if p.src[c] < 0 {
			continue
		}
		u, ok := cfg.units[c]
		// The canonical form's metadata states the canonical units of
		// the columns this package writes, under their canonical names;
		// a logger's own column (magX, mapped with a column mapping or
		// found as an alias) in a file carrying the comment is not one
		// of them, and its unit is stated by nothing.
		_, canonical := meta[MetaFrame]
		canonical = canonical && strings.TrimSpace(header[p.src[c]]) == canonNames[c]
		switch {
		case ok:
			p.unitFrom[c] = UnitGiven
		case unitFromName[c] != "":
			u, p.unitFrom[c] = unitFromName[c], UnitFromName
		case format == string(FormatIAGA):
			u, p.unitFrom[c] = defaultUnit(kindOf(c)), UnitFromFormat
		case canonical:
			u, p.unitFrom[c] = defaultUnit(kindOf(c)), UnitFromMetadata
		default:
			u, p.unitFrom[c] = defaultUnit(kindOf(c)), UnitDefault
		}
		s, err := unitScale(kindOf(c), u)
		if err != nil {
			return nil, &Error{File: file, Batch: -1, Column: canonNames[c], Msg: err.Error()}
		}
		p.unit[c], p.scale[c] = u, s
	}
	if err := p.checkFieldScales(headerLine); err != nil {
		return nil, err
	}
	if p.src[cTime] >= 0 {
		u := strings.ToLower(p.unit[cTime])
		p.timeUTC = u == "utc" || u == "gmt" || strings.EqualFold(strings.TrimSpace(header[p.src[cTime]]), "utc")
		if p.timeUTC && cfg.timeOffsetSet && cfg.timeOffset != 0 {
			return nil, &Error{File: file, Batch: -1, Column: header[p.src[cTime]],
				Msg: fmt.Sprintf("the time column says its times are UTC (its unit or name), and the time offset given (--time-offset %s) says they are local times: give one or the other", offsetText(cfg.timeOffset))}
		}
		if z := cfg.timeZone; p.timeUTC && z != nil && z != time.UTC && z.String() != "UTC" {
			return nil, &Error{File: file, Batch: -1, Column: header[p.src[cTime]],
				Msg: fmt.Sprintf("the time column says its times are UTC (its unit or name), and the time zone given (--time-zone %s) says they are local times: give one or the other", z)}
		}
	}
	if types != nil {
		for c := 0; c < nCanon; c++ {
			if p.src[c] < 0 {
				continue
			}
			if !convertible(types[p.src[c]], c) {
				return nil, &Error{File: file, Batch: -1, Column: header[p.src[c]],
					Msg: fmt.Sprintf("type %s cannot be read as %s", types[p.src[c]], canonNames[c])}
			}
			if isFieldComponent(c) && isFloat16(types[p.src[c]]) {
				return nil, &Error{File: file, Batch: -1, Column: header[p.src[c]], Msg: float16FieldMsg(canonNames[c])}
			}
		}
	}

	// Positions.
	if err := p.choosePositions(headerLine); err != nil {
		return nil, err
	}
	anyXYZ := p.src[cX] >= 0 || p.src[cY] >= 0 || p.src[cZ] >= 0
	hasLL := p.src[cLat] >= 0 && p.src[cLon] >= 0
	if err := p.checkPositionNames(headerLine, anyXYZ, hasLL); err != nil {
		return nil, err
	}
	switch {
	case anyXYZ:
		p.hasPos = true
	case hasLL:
		p.hasPos, p.geodetic = true, true
		// A latitude/longitude log places its readings itself: an origin
		// it states (checked above) is not used. Said, since the heights
		// (and --reference-z) are then measured from another height than
		// the one the line gives (found in review: cover 1.40 m for 1.10
		// with --reference-z 0 under a line 0.3 m below the readings).
		if p.origin != nil && (cfg.originMode != originFixed || cfg.originOfMean) {
			from := "its first reading"
			if cfg.originOfMean {
				from = "the mean of its positions (the mean origin asked for)"
			}
			p.warn("%s: its origin (metadata %s, in a CSV log the line \"# %s: %s\") is not used: a latitude/longitude log is placed from %s, and its x, y, z (and the ground level given as a z, --reference-z) are measured from there, not from the stated origin's %g m; to measure from the stated origin, give it as the origin (WithOrigin, on the command line --origin %s)",
				file, MetaOrigin, MetaOrigin, p.fileOrigin, from, p.origin.H, strings.Join(strings.Fields(p.fileOrigin), ","))
		}
		switch cfg.originMode {
		case originFixed:
			o := cfg.origin
			if _, m := latLonProblem(o.Lat, o.Lon, "the origin is given latitude first"); m != "" {
				return nil, fileErr(file, nil, "the origin given (WithOrigin, on the command line --origin): %s", m)
			}
			o = p.wrapOrigin(o, "the origin given")
			p.origin = &o
		default:
			p.origin = nil // set from the first reading by the reader
		}
	case p.src[cLat] >= 0 || p.src[cLon] >= 0:
		return nil, fileErr(file, nil, "found only one of latitude and longitude (columns found: %s)", columnList(header))
	}
	if p.hasPos && !p.geodetic {
		p.notePositionsAbsent(carried)
	}
	if p.geodetic && p.src[cHeight] < 0 && !cfg.noHeightWarning {
		p.noteHeightAbsent()
	}
	for c := 0; c < nOut; c++ {
		if p.src[c] >= 0 || (c >= cX && c <= cZ && p.hasPos) || (c == cTime && p.noTime) {
			p.out = append(p.out, c)
		}
	}
	if p.origin != nil {
		p.enu = p.origin.frame()
		p.zeroNoFix = greatCircleKm(Geodetic{}, *p.origin) > noFixKm
	}
	p.orderGroup = !cfg.allowBackwards && cfg.groupOrder && p.src[cGroup] >= 0 && !p.noTime
	p.orderAll = !cfg.allowBackwards && !p.orderGroup && !p.noTime
	p.buildSchema()
	return p, nil
}

// unreadUnitColumn explains a missing required column (missing: their
// canonical names) that is in the file under its own name with a unit the
// name states but this package does not read ("bx [furlong]", "Bx_MT",
// "bx_nT_x10", "time (local)"): such a column is not taken by its name, and
// "no column for bx" beside a list of columns showing it said nothing of
// why. The rest of the name may be no unit at all ("bx_filtered", "Bx_1"),
// which a mapping alone reads in nT, so the advice gives the mapping first
// and the unit only where the name states one. It returns nil when no column not taken (taken: by index) is one.
func (p *plan) unreadUnitColumn(missing []string, taken map[int]bool, headerLine int) error {
	for _, m := range missing {
		c, _ := canonIndex(m)
		for i, h := range p.header {
			if taken[i] {
				continue
			}
			name := strings.TrimSpace(h)
			// "bx_nT_x10" is bx in "nT_x10": try each shorter base.
			base := name
			for split := range 3 {
				b, u := SplitUnit(base)
				if u == "" || b == "" {
					break
				}
				base = b
				bc, _, ok := lookupNameAlias(base)
				if !ok {
					continue
				}
				if bc != c {
					break
				}
				unit := strings.TrimSpace(name[len(base):])
				if n := len(unit); n >= 2 && (unit[0] == '(' && unit[n-1] == ')' || unit[0] == '[' && unit[n-1] == ']') {
					unit = strings.TrimSpace(unit[1 : n-1])
				} else {
					unit = strings.TrimLeft(unit, "_ ")
				}
				_, err := unitScale(kindOf(c), unit)
				mapping := m + "=" + name
				if err == nil && split > 0 {
					// "bx 0.1 nT", "bx_2_nT": a unit that reads, but with a
					// blank or _ inside, which a name is not split at
					// ("bx 2 nT" may as well be sensor 2's bx in nT).
					given := m + "=" + unit
					b0, u0 := SplitUnit(name)
					return &Error{File: p.file, Line: headerLine, Batch: -1,
						Msg: fmt.Sprintf("no column for %s: column %q may be %s (its name begins so) in %q, but only the last word of a name without brackets is taken for its unit (here %q after %q, which names no column), so it is not read by its name; if it is %s in %s, map it and give the unit (a column mapping %s and a unit option %s; on the command line --column %s --unit %s), or write the unit in brackets (%q)",
							strings.Join(missing, ", "), name, m, unit, u0, b0, m, unit, mapping, given, shellQuote(mapping), shellQuote(given), base+" ["+unit+"]")}
				}
				if err == nil {
					break // read by its name: not this column
				}
				return &Error{File: p.file, Line: headerLine, Batch: -1,
					Msg: fmt.Sprintf("no column for %s: column %q may be %s (its name begins so), but the rest of its name is not read as a unit: %v; if it is %s, map it (a column mapping %s; on the command line --column %s), and if the rest of its name states a unit, give that too (a unit option %s=U; --unit %s=U)",
						strings.Join(missing, ", "), name, m, err, m, mapping, shellQuote(mapping), m, m)}
			}
		}
	}
	return nil
}

// shellQuote quotes s for a POSIX shell when it holds anything but
// letters, digits and the punctuation of ordinary column names.
func shellQuote(s string) string {
	for _, r := range s {
		if !(unicode.IsLetter(r) || unicode.IsDigit(r) || strings.ContainsRune("=_-.,:/+", r)) {
			return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
		}
	}
	return s
}

// unknownNameUnit refuses a field column mapped by name (c) whose name
// states a unit that is not read: a known unit in another case or with
// another prefix ("Bx_MT": mT or megatesla?, "Bx (fT)", "Bx [kG]"), a
// step of such a unit ("Bx [0.1 fT]"), a unit with more after it
// ("Bx_nT_x10", "Bx (uT, filtered)") or a unit that is not a field's
// ("Bx (mV)"). Read as nT, the default, such a column's values would be
// off by the unit's factor without a word. A name whose suffix holds no
// unit ("mag_x", "Field X", "Mag X (sensor 2)", "fluxgate_x (filtered)",
// "Bx (raw)") states none and is read in nT as before, and so is one whose
// one-letter middle word might be a unit ("sensor_g_x": "g" is gauss only
// as the name's last word, "bx_g").
func (p *plan) unknownNameUnit(c, headerLine int) error {
	name := strings.TrimSpace(p.header[p.src[c]])
	base, u := SplitUnit(name)
	bracketed := strings.HasSuffix(name, ")") || strings.HasSuffix(name, "]")
	stated := unitLikeText(u, bracketed)
	if !stated {
		// A unit word before the suffix: "nT_x10", "uT (filtered)".
		words := strings.FieldsFunc(base, func(r rune) bool { return r == '_' || r == ' ' })
		for i := 1; i < len(words) && !stated; i++ {
			if stated = utf8.RuneCountInString(words[i]) > 1 && unitLikeWord(words[i]); stated {
				u = name[strings.LastIndex(name, words[i]):]
			}
		}
	}
	if !stated {
		return nil
	}
	return &Error{File: p.file, Line: headerLine, Batch: -1, Column: name,
		Msg: fmt.Sprintf("its name (mapped to %s) states the unit %q, which is not a field unit read here (%s): read as nT by default, its values would be off by that unit's factor; give the column's unit with a unit option %s=U (on the command line --unit %s=U), or name the unit in the column's name as %s_uT does",
			canonNames[c], u, FieldUnits, canonNames[c], canonNames[c], canonNames[c])}
}

// unitLikeWord reports whether a word looks like a unit of magnetic field
// in any case, with or without an SI prefix (nT, MT, fT, kG, mgauss,
// kilogauss, Oe), or a length unit of two letters or more (cm, ft): not
// an ordinary word.
func unitLikeWord(w string) bool {
	if fieldUnitWord.MatchString(w) {
		return true
	}
	_, err := unitScale(kindLength, w)
	return err == nil && utf8.RuneCountInString(w) > 1
}

var (
	fieldUnitWord = regexp.MustCompile(`(?i)^((f|p|n|u|µ|μ|m|k|M|G)?(t|g|oe)|(femto|pico|nano|micro|milli|kilo|mega)?(teslas?|gauss|gammas?|oersteds?)|(?-i:γ))$`)
	// A number and a one-letter unit: "0.1 T", "1e-4T", "T x10", "10G".
	numberUnit = regexp.MustCompile(`^([x×*/]\s*)?[-+]?([0-9]+([.,][0-9]*)?|[.,][0-9]+)([eE][-+]?[0-9]+)?\s*[*·×]?\s*[TtGgV]$|^[TtGgV]\s*[x×*/·]\s*[-+]?([0-9]+([.,][0-9]*)?|[.,][0-9]+)([eE][-+]?[0-9]+)?$`)
	volts      = regexp.MustCompile(`^(m|u|µ|μ)V$`)
)

// unitLikeText reports whether a column name's unit suffix s (bracketed:
// the text in brackets) that is not read states a unit all the same: it
// is a unit-like word ("MT"), has one of two letters or more among other
// words and numbers ("0.1 fT", "uT, filtered", "mV") or is a number with
// a one-letter unit ("0.1 V", "T x10"). Ordinary words ("filtered", "sensor 2",
// "raw") state none.
func unitLikeText(s string, bracketed bool) bool {
	s = strings.TrimSpace(s)
	if s == "" {
		return false
	}
	if unitLikeWord(s) || volts.MatchString(s) || numberUnit.MatchString(s) ||
		bracketed && (s == "V" || strings.EqualFold(s, "A/m") || strings.EqualFold(s, "kA/m")) {
		return true
	}
	for _, w := range strings.FieldsFunc(s, func(r rune) bool { return !unicode.IsLetter(r) }) {
		if utf8.RuneCountInString(w) > 1 && (unitLikeWord(w) || volts.MatchString(w)) {
			return true
		}
	}
	return false
}

// frameWords names the axes of a frame for messages.
func frameWords(f Frame) string {
	switch f {
	case FrameNED:
		return "north, east, down (ned)"
	case FrameSensor:
		return "in the sensor's own axes (sensor)"
	}
	return "east, north, up (enu)"
}

// checkAttitude warns when the input has attitude columns (roll, pitch,
// yaw or a quaternion) but is not read in the sensor frame: only a
// sensor-frame log is turned to east, north, up by its attitude, so the
// columns are read and nothing applies them. A log whose field is in the
// sensor's axes then has every reading in the wrong axes (its east
// component swings by the whole Earth's field as the heading turns), and
// nothing else says why.
func (p *plan) checkAttitude() {
	if p.inFrame == FrameSensor {
		return
	}
	var names []string
	for c := cRoll; c <= cQz; c++ {
		if p.src[c] >= 0 {
			names = append(names, p.header[p.src[c]])
		}
	}
	if len(names) == 0 {
		return
	}
	how := "as the frame given says"
	if !p.frameStated {
		how = "the default"
	}
	what := "columns"
	if len(names) == 1 {
		what = "column"
	}
	p.warn("%s: attitude %s %s: read but not applied, since the field is read as %s (%s): if bx, by, bz are in the sensor's own axes, read the log in the sensor frame (WithFrame(FrameSensor), on the command line --frame sensor) so that the attitude turns them to east, north, up; if they already are east, north, up, the attitude is not needed",
		p.file, what, strings.Join(names, ", "), frameWords(p.inFrame), how)
}

// groupBackwards checks the time order within groups of an output batch
// (TimeOrderedPerGroup). It returns the first row whose time is earlier
// than the time of the previous row of its group, that time and the group,
// or row -1. NaN times (allowed missing values) are skipped.
func (p *plan) groupBackwards(rec arrow.RecordBatch) (row int, prev float64, group string) {
	if p.groupLast == nil {
		p.groupLast = map[string]*float64{}
	}
	t := rec.Column(0).(*array.Float64).Float64Values()
	var g *array.String
	for i, c := range p.out {
		if c == cGroup {
			g, _ = rec.Column(i).(*array.String)
		}
	}
	if g == nil {
		return -1, 0, ""
	}
	// Group names alias the batch's memory: a name is copied only when it
	// enters the map, and entries are updated through their pointers.
	var cur string
	var last *float64
	for i, v := range t {
		if v != v {
			continue
		}
		if k := g.Value(i); last == nil || k != cur {
			cur = k
			if last = p.groupLast[k]; last == nil {
				last = new(float64)
				*last = math.Inf(-1)
				p.groupLast[strings.Clone(k)] = last
			}
		}
		if v < *last {
			return i, *last, strings.Clone(cur)
		}
		*last = v
	}
	return -1, 0, ""
}

// groupBackwardsMsg words a step back in time within a group; naive:
// the log's times were written without a UTC offset (and its unit does not
// say UTC), so a step back like the hour repeated when the clocks go back
// is said to look like one.
func groupBackwardsMsg(t, prev float64, group string, naive bool) string {
	msg := fmt.Sprintf("time goes backwards within group %q: %s after %s, %s back", group, secondsText(t), secondsText(prev), durationText(prev-t))
	if naive && ClockChangeBack(t, prev) {
		msg += fmt.Sprintf(", an hour less the time between the readings: local times written without their UTC offset across the night the clocks went back an hour (the hour before %s repeated)? Write each time with its offset (summer time's before the change, standard time's after it)", time.Unix(int64(math.Ceil(prev/3600)*3600), 0).UTC().Format("15:04"))
	}
	return msg
}

// autoName resolves a header name to a canonical column without a mapping:
// the name itself or an alias, either possibly with a unit suffix, which
// is returned.
func autoName(h string) (c int, unit string, ok bool) {
	c, unit, _, ok = autoNameAlias(h)
	return c, unit, ok
}

// autoNameAlias is autoName that also reports whether the name is an
// alias rather than the canonical name itself.
func autoNameAlias(h string) (c int, unit string, alias, ok bool) {
	base, u := SplitUnit(h)
	c, alias, ok = lookupNameAlias(h)
	if !ok && u != "" {
		c, alias, ok = lookupNameAlias(base)
		if ok {
			if _, err := unitScale(kindOf(c), u); err != nil {
				ok = false // "line_id" is not "line" in unit "id"
			}
		}
		return c, u, alias, ok
	}
	return c, "", alias, ok
}

// autoName resolves a header name as the package-level autoName does, a
// map grid's Easting and Northing going to the columns that hold east and
// north in the input's frame (compassAxis).
func (p *plan) autoName(h string) (c int, unit string, alias, ok bool) {
	c, unit, alias, ok = autoNameAlias(h)
	if ok {
		if a, compass := compassAxis(h, p.inFrame); compass {
			c = a
		}
	}
	return c, unit, alias, ok
}

// compassAxis reports whether a column name is a map grid's "Easting" or
// "Northing" (with or without a unit suffix), and returns the position
// column that holds east or north in frame f: x and y in ENU (and in
// sensor-frame logs, whose positions are ENU), y and x in NED, where x is
// north.
func compassAxis(h string, f Frame) (int, bool) {
	n := strings.ToLower(strings.TrimSpace(h))
	if n != "easting" && n != "northing" {
		base, u := SplitUnit(h)
		if u == "" {
			return 0, false
		}
		n = strings.ToLower(base)
	}
	east, north := cX, cY
	if f == FrameNED {
		east, north = cY, cX
	}
	switch n {
	case "easting":
		return east, true
	case "northing":
		return north, true
	}
	return 0, false
}

// checkDuplicates refuses a column that the plan reads when another column
// has the same name (compared as the mapping compares names: exactly, else
// ignoring case and surrounding blanks), since nothing but the order then
// decides which one is read and a mapping by name cannot choose the other.
// Same-named columns of which the plan reads neither, and differently named
// columns that both resolve to one canonical column without a mapping
// ("bx" and "Bx_uT"), are warnings.
func (p *plan) checkDuplicates(headerLine int) error {
	what, one := "columns", "column"
	if p.format != string(FormatCSV) {
		what, one = "schema fields", "field"
	}
	where := ""
	if headerLine > 0 {
		where = fmt.Sprintf(":%d", headerLine)
	}
	key := func(h string) string { return strings.ToLower(strings.TrimSpace(norm.NFC.String(h))) }
	for c := 0; c < nCanon; c++ {
		i := p.src[c]
		if i < 0 {
			continue
		}
		name := p.header[i]
		exact := !p.auto[c] && p.cfg.mapping[c] == name
		for j, h := range p.header {
			if j == i {
				continue
			}
			same := key(h) == key(name)
			if exact {
				same = sameName(h, name, false)
			}
			if !same {
				continue
			}
			a, b := min(i, j), max(i, j)
			named := fmt.Sprintf("named %q", name)
			if h != name {
				named = fmt.Sprintf("named %q and %q", p.header[a], p.header[b])
			}
			if h != name {
				// Names that differ in case or blanks: a mapping by the
				// exact name chooses (find takes an exact match first),
				// where renaming a Parquet field means rewriting the file.
				cn := canonNames[c]
				return &Error{File: p.file, Line: headerLine, Batch: -1,
					Msg: fmt.Sprintf("%s %d and %d are both %s; %s would be read from %s %d and %s %d ignored: choose one by its exact name with a column mapping (on the command line --column %s or --column %s), or rename one of them",
						what, a+1, b+1, named, cn, one, i+1, one, j+1, shellQuote(cn+"="+p.header[a]), shellQuote(cn+"="+p.header[b]))}
			}
			return &Error{File: p.file, Line: headerLine, Batch: -1,
				Msg: fmt.Sprintf("%s %d and %d are both %s; %s would be read from %s %d and %s %d ignored, and no mapping by name can choose between them: rename one of them",
					what, a+1, b+1, named, canonNames[c], one, i+1, one, j+1)}
		}
		if p.auto[c] {
			for j, h := range p.header {
				if j == i || key(h) == key(name) {
					continue
				}
				if c2, _, _, ok := p.autoName(h); ok && c2 == c && !p.uses(j) {
					p.warn("%s%s: %s %d (%q) and %d (%q) could both be %s; %d is read (choose with a mapping such as %s=NAME)",
						p.file, where, what, i+1, name, j+1, h, canonNames[c], i+1, canonNames[c])
				}
			}
		}
	}
	first := map[string]int{}
	for j, h := range p.header {
		k := key(h)
		i, seen := first[k]
		if !seen {
			first[k] = j
			continue
		}
		if !p.uses(i) && !p.uses(j) {
			p.warn("%s%s: %s %d and %d are both named %q (neither is read)", p.file, where, what, i+1, j+1, h)
		}
	}
	return nil
}

// uses reports whether source column i feeds a canonical column.
func (p *plan) uses(i int) bool {
	for _, j := range p.src {
		if j == i {
			return true
		}
	}
	return false
}

func lookupName(h string) (int, bool) {
	c, _, ok := lookupNameAlias(h)
	return c, ok
}

// lookupNameAlias is lookupName that also reports whether h is an alias.
func lookupNameAlias(h string) (c int, alias, ok bool) {
	n := strings.ToLower(strings.TrimSpace(h))
	if c, ok := canonIndex(n); ok {
		return c, false, true
	}
	c, ok = aliases[n]
	return c, ok, ok
}

func defaultUnit(k kind) string {
	switch k {
	case kindTime:
		return "s"
	case kindLength:
		return "m"
	case kindField:
		return "nT"
	case kindAngle, kindDegrees:
		return "deg"
	case kindTemp:
		return "C"
	case kindCurrent:
		return "A"
	}
	return ""
}

// setOrigin fixes the ENU origin (when it comes from the data) and
// rebuilds the schema metadata.
func (p *plan) setOrigin(o Geodetic) {
	o = p.wrapOrigin(o, "its first reading")
	p.origin = &o
	p.enu = o.frame()
	p.zeroNoFix = greatCircleKm(Geodetic{}, o) > noFixKm
	p.buildSchema()
}

func (p *plan) outFrame() Frame {
	if p.inFrame == FrameSensor {
		return FrameSensor
	}
	return FrameENU
}

func (p *plan) buildSchema() {
	fields := make([]arrow.Field, len(p.out))
	for i, c := range p.out {
		fields[i] = arrow.Field{Name: canonNames[c], Type: fieldType(c), Nullable: c == cGroup}
	}
	keys := []string{MetaFrame}
	vals := []string{p.outFrame().String()}
	if p.noTime {
		keys, vals = append(keys, MetaTime), append(vals, "absent")
	}
	if p.origin != nil {
		keys = append(keys, MetaOrigin)
		vals = append(vals, formatOrigin(*p.origin))
	}
	if len(p.absent) > 0 {
		names := make([]string, len(p.absent))
		for i, c := range p.absent {
			names[i] = canonNames[c]
		}
		keys, vals = append(keys, MetaAbsent), append(vals, strings.Join(names, " "))
	}
	for _, k := range sortedKeys(p.meta) {
		keys = append(keys, MetaPrefix+k)
		vals = append(vals, p.meta[k])
	}
	md := arrow.NewMetadata(keys, vals)
	p.schema = arrow.NewSchema(fields, &md)
}

func formatOrigin(o Geodetic) string {
	return strconv.FormatFloat(o.Lat, 'g', -1, 64) + " " + strconv.FormatFloat(o.Lon, 'g', -1, 64) + " " + strconv.FormatFloat(o.H, 'g', -1, 64)
}

// rawBatch holds parsed values in canonical units, before frame and
// position conversions.
type rawBatch struct {
	n     int
	f     [nCanon][]float64
	group []string
	line  []int // source line of each row (text formats)
	// naiveLine is the line of the first timestamp without a UTC offset
	// (0: none), naiveText its text.
	naiveLine int
	naiveText string
	nulLine   int // first line of NUL bytes alone, skipped (text formats)
	badText   int // first line of a text value not UTF-8, read as Windows-1252 (CSV)
	// noFix counts the readings left out at latitude 0, longitude 0
	// (dropNoFix); noFixRow holds the rows of the first few in the batch
	// as read, noFixLine their source lines (text formats).
	noFix     int
	noFixRow  []int
	noFixLine []int
}

func (rb *rawBatch) reset(p *plan) {
	rb.n = 0
	for c := range rb.f {
		rb.f[c] = rb.f[c][:0]
	}
	rb.group = rb.group[:0]
	rb.line = rb.line[:0]
	rb.naiveLine, rb.naiveText, rb.nulLine, rb.badText = 0, "", 0, 0
	rb.noFix, rb.noFixRow, rb.noFixLine = 0, rb.noFixRow[:0], rb.noFixLine[:0]
}

// dropNoFix leaves out of rb the readings at exactly latitude 0, longitude
// 0 (noFix), keeping the others in order, and returns how many are kept;
// rb.noFix counts those left out and noFixRow holds the first few's rows.
func (rb *rawBatch) dropNoFix() int {
	lat, lon := rb.f[cLat], rb.f[cLon]
	n, k := rb.n, 0
	for i := range n {
		if noFix(lat[i], lon[i]) {
			if len(rb.noFixRow) < noFixShown {
				rb.noFixRow = append(rb.noFixRow, i)
			}
			rb.noFix++
			continue
		}
		if k != i {
			for c := range rb.f {
				if len(rb.f[c]) == n {
					rb.f[c][k] = rb.f[c][i]
				}
			}
			if len(rb.group) == n {
				rb.group[k] = rb.group[i]
			}
		}
		k++
	}
	if k == n {
		return n
	}
	// The lines of the rows left out, for the warning, before the lines
	// are compacted like the values.
	if len(rb.line) == n {
		for j, i := range rb.noFixRow {
			rb.noFixLine = append(rb.noFixLine[:j], rb.line[i])
		}
		k2 := 0
		for i := range n {
			if !noFix(lat[i], lon[i]) {
				rb.line[k2] = rb.line[i]
				k2++
			}
		}
		rb.line = rb.line[:k]
	}
	for c := range rb.f {
		if len(rb.f[c]) == n {
			rb.f[c] = rb.f[c][:k]
		}
	}
	if len(rb.group) == n {
		rb.group = rb.group[:k]
	}
	rb.n = k
	return k
}

// transform applies the frame and position conversions in place.
func (p *plan) transform(rb *rawBatch) {
	n := rb.n
	if p.noTime {
		rb.f[cTime] = nans(rb.f[cTime][:0], n)
	}
	for c := cX; c <= cZ; c++ {
		if p.hasPos && len(rb.f[c]) != n {
			rb.f[c] = zeros(rb.f[c][:0], n)
		}
	}
	if p.geodetic {
		if p.zeroNoFix {
			n = rb.dropNoFix()
		}
		h := rb.f[cHeight]
		for i := 0; i < n; i++ {
			g := Geodetic{Lat: rb.f[cLat][i], Lon: rb.f[cLon][i]}
			if h != nil {
				g.H = h[i]
			}
			e := p.enu.toLocal(g)
			rb.f[cX][i], rb.f[cY][i], rb.f[cZ][i] = e[0], e[1], e[2]
		}
	}
	if p.inFrame == FrameNED {
		if p.hasPos && !p.geodetic {
			nedToENU(rb.f[cX], rb.f[cY], rb.f[cZ])
		}
		nedToENU(rb.f[cBx], rb.f[cBy], rb.f[cBz])
	}
}

// nedToENU turns north, east, down columns into east, north, up in place.
func nedToENU(x, y, z []float64) {
	for i := range x {
		x[i], y[i] = y[i], x[i]
		z[i] = -z[i]
	}
}

func zeros(s []float64, n int) []float64 {
	if cap(s) < n {
		s = make([]float64, n)
	}
	s = s[:n]
	clear(s)
	return s
}

func nans(s []float64, n int) []float64 {
	s = zeros(s, n)
	for i := range s {
		s[i] = math.NaN()
	}
	return s
}

// record builds the output batch from a transformed raw batch.
func (p *plan) record(mem memory.Allocator, rb *rawBatch) arrow.RecordBatch {
	cols := make([]arrow.Array, len(p.out))
	for i, c := range p.out {
		if c == cGroup {
			b := array.NewStringBuilder(mem)
			b.AppendValues(rb.group, nil)
			cols[i] = b.NewArray()
			b.Release()
			continue
		}
		cols[i] = float64Array(mem, rb.f[c][:rb.n])
	}
	rec := array.NewRecordBatch(p.schema, cols, int64(rb.n))
	for _, a := range cols {
		a.Release()
	}
	return rec
}

// float64Array copies v into a new Arrow array owned by mem.
func float64Array(mem memory.Allocator, v []float64) *array.Float64 {
	buf := memory.NewResizableBuffer(mem)
	buf.Resize(len(v) * 8)
	copy(arrow.Float64Traits.CastFromBytes(buf.Bytes()), v)
	data := array.NewData(arrow.PrimitiveTypes.Float64, len(v), []*memory.Buffer{nil, buf}, nil, 0, 0)
	a := array.NewFloat64Data(data)
	data.Release()
	buf.Release()
	return a
}

// firstBackwards returns the first row i > 0 with t[i] < t[i-1], or -1.
// prev is the last time of the previous batch (NaN for none). NaN times
// (allowed missing values) are skipped.
func firstBackwards(t []float64, prev float64) int {
	last := prev
	for i, v := range t {
		if v < last {
			return i
		}
		if v == v {
			last = v
		}
	}
	return -1
}

func lastTime(t []float64, prev float64) float64 {
	for i := len(t) - 1; i >= 0; i-- {
		if t[i] == t[i] {
			return t[i]
		}
	}
	return prev
}

func formatSeconds(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// secondsText words a time in seconds, with the time it stands for when
// it is a Unix time: "1414890015 (2014-11-02T01:00:15Z)".
func secondsText(v float64) string {
	s := formatSeconds(v)
	if v >= 1e8 && v < 1e11 {
		s += " (" + time.Unix(0, int64(math.Round(v*1e3))*1e6).UTC().Format("2006-01-02T15:04:05.999Z07:00") + ")"
	}
	return s
}

var nan = math.NaN()

// numbersOnly reports whether most names of a header (at least two, and
// more than half; a group name may be text) read as numbers: a data row
// taken for the header.
func numbersOnly(header []string) bool {
	n := 0
	for _, h := range header {
		if _, ok := parseNumber([]byte(strings.TrimSpace(h))); ok {
			n++
		}
	}
	return n >= 2 && 2*n > len(header)
}

// headerExample is a header option's value for a file of n columns, for
// the message about a file without a header line: the usual columns
// (time, x, y, z, bx, by, bz), fewer positions for fewer columns and
// placeholders (c8, c9, ...) for more, so that the example given names
// as many columns as the file has (found in review: seven names offered
// for eight columns, refused as a long row when used).
func headerExample(n int) string {
	var names []string
	switch {
	case n <= 4:
		names = []string{"time", "bx", "by", "bz"}
	case n == 5:
		names = []string{"time", "x", "bx", "by", "bz"}
	case n == 6:
		names = []string{"time", "x", "y", "bx", "by", "bz"}
	default:
		names = []string{"time", "x", "y", "z", "bx", "by", "bz"}
		for i := 8; i <= n; i++ {
			names = append(names, fmt.Sprintf("c%d", i))
		}
	}
	return strings.Join(names, ",")
}

// checkSharedSource refuses a column named by the mappings of two
// canonical data columns (bx=Bx,by=Bx): a reader feeds each source column
// to one canonical column, and such a mapping is far more likely a typo
// than a wish to read one column twice. Before, the CSV reader read zeros
// into one of the two, in silence. The one exception is the group
// (--group-by) naming a part of a time joined from two columns: both are
// read as text, and a multi-day log grouped by the date column that is
// also the first part of its time (time=Date+Time, --group-by Date) is a
// real use. (A group sharing a number column, group=Bx with bx=Bx, is
// still refused: the CSV reader would read zeros into bx.)
func (p *plan) checkSharedSource(headerLine int) error {
	by := map[int]int{}     // source column -> the first canonical column naming it
	for c := range nCanon { // in order, so that the message is stable
		if _, mapped := p.cfg.mapping[c]; !mapped || p.src[c] < 0 {
			continue
		}
		srcs := []int{p.src[c]}
		if c == cTime && p.timeJoin >= 0 {
			srcs = append(srcs, p.timeJoin)
		}
		for _, i := range srcs {
			first, dup := by[i]
			if !dup {
				by[i] = c
				continue
			}
			if c == cGroup && first == cTime && p.timeJoin >= 0 {
				continue // both read as text
			}
			what := "column"
			if p.format != string(FormatCSV) {
				what = "schema field"
			}
			e := fileErr(p.file, nil, "mappings %s=%s and %s=%s both name the %s %q: one %s can be read as one canonical column only (a typo?); map each canonical column to its own %s",
				canonNames[first], p.cfg.mapping[first], canonNames[c], p.cfg.mapping[c], what, p.header[i], what, what)
			if headerLine > 0 {
				e.Line = headerLine
			}
			return e
		}
	}
	return nil
}
