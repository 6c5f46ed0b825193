package ingest

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
)

// Values of Meta["horizontal_frame"] for IAGA-2002 variation data in H D Z
// or H E Z: turned to geographic north by the header's DECBAS, left in the
// observatory's baseline frame on request (WithIAGABaselineFrame), or left
// there because the header gives no DECBAS.
const (
	IAGAGeographic       = "geographic (turned by DECBAS)"
	IAGABaselineKept     = "observatory baseline (kept)"
	IAGABaselineNoDECBAS = "observatory baseline (no DECBAS in the header)"
	// IAGAHENotTurned marks H E Z data of a type other than variation
	// (adjusted, definitive, or none stated), which are not turned: east
	// and north are E and H, not the X and Y that IAGA-2002 gives for
	// geographic north and east.
	IAGAHENotTurned = "observatory H E axes (not turned: only variation data are)"
)

// IAGA-2002 markers for values that are absent (INTERMAGNET technical
// manual): 99999.00 missing, 88888.00 not recorded. Both read as NaN.
const (
	iagaMissing     = 99999.0
	iagaNotRecorded = 88888.0
)

// iagaReader streams an IAGA-2002 file. Header fields go to the schema
// metadata (and so to Samples.Meta) under lower-case keys with underscores:
// "format", "source_of_data", "station_name", "iaga_code",
// "geodetic_latitude", "geodetic_longitude", "elevation", "reported",
// "sensor_orientation", "digital_sampling", "data_interval_type",
// "data_type", plus "decbas" from a "# DECBAS" comment (and
// "horizontal_frame" when variation data are turned by it), "elements", the
// element set of the data columns as read ("HDZF"), and the short keys
// "station" (the IAGA code), "latitude" and "longitude" (degrees, as in
// the header: longitudes may run 0 to 360).
type iagaReader struct {
	name     string
	closer   io.Closer
	br       *bufio.Reader
	pl       *plan
	cfg      *config
	elements [4]byte
	nul      [4]bool // element not reported ("NUL" in the column line): read as NaN
	line     int
	cur      arrow.RecordBatch
	err      error
	last     float64
	lastText string // the last time as written, on line lastLine
	lastLine int
	rb       rawBatch
	done     bool
	ended    bool   // Next reached the end of the input (see Release)
	pending  []byte // first data line, read while looking for the header
	// decimals is the number of decimals of the last value of every data
	// line read so far (IAGA-2002 writes two), -1 before the first, -2
	// once two differ.
	decimals int
	// baseline is the baseline declination (radians east) by which variation
	// data in H D Z or H E Z are turned to geographic axes; 0 when they are
	// not (set from the header in newIAGAReader).
	baseline   float64
	bsin, bcos float64 // its sine and cosine
	// first is the first header's column line and the fields that must
	// be the same in the header of a file joined on after it.
	first iagaHeader
}

// iagaHeader is what one IAGA-2002 header says about the data below it,
// as far as files joined end to end (one day's file after another's) must
// agree on it to be read as one series.
type iagaHeader struct {
	line    int      // line of the "DATE TIME" column line
	columns []string // names on the "DATE TIME" column line
	fields  map[string]string
}

// iagaJoinKeys are the header fields that files joined end to end must
// share: the same observatory, data type and sampling, and for variation
// data the same baseline declination (DECBAS).
var iagaJoinKeys = []struct{ key, label string }{
	{"iaga_code", "IAGA CODE"},
	{"data_type", "Data Type"},
	{"data_interval_type", "Data Interval Type"},
	{"decbas", "# DECBAS"},
}

func (r *iagaReader) plan() *plan                    { return r.pl }
func (r *iagaReader) Schema() *arrow.Schema          { return r.pl.schema }
func (r *iagaReader) RecordBatch() arrow.RecordBatch { return r.cur }
func (r *iagaReader) Err() error                     { return r.err }

func (r *iagaReader) Release() {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	if r.err == nil && !r.ended {
		r.err = releasedErr(r.name)
	}
	if r.closer != nil {
		r.closer.Close()
		r.closer = nil
	}
	r.done = true
}

func iagaKey(label string) string {
	return strings.ToLower(strings.Join(strings.Fields(label), "_"))
}

func newIAGAReader(name string, rd io.Reader, cfg *config) (*iagaReader, error) {
	closer, _ := rd.(io.Closer)
	r := &iagaReader{name: name, closer: closer, cfg: cfg, br: bufio.NewReaderSize(rd, 64<<10), last: math.NaN(), decimals: -1}
	meta := map[string]string{}
	var columns []string
	decbasLine, decbasText := 0, ""
	reportedLine := 0
	for {
		raw, err := readLine(r.br)
		if len(raw) == 0 && err != nil {
			if err == io.EOF {
				return nil, fileErr(name, nil, "IAGA-2002 header without a DATE TIME DOY column line")
			}
			return nil, fileErr(name, err, "read error")
		}
		r.line++
		ln := strings.TrimRight(string(raw), "\r\n")
		if r.line == 1 {
			// A UTF-8 byte order mark (a file saved by Windows Notepad)
			// would shift the fixed-width labels.
			ln = strings.TrimPrefix(ln, string(utf8BOM))
		}
		t := strings.TrimSpace(ln)
		switch {
		case t == "":
			continue
		case strings.HasPrefix(t, "DATE"):
			columns = strings.Fields(strings.TrimSuffix(t, "|"))
		case strings.HasPrefix(t, "#"):
			c := strings.TrimSpace(strings.TrimPrefix(t, "#"))
			if f := strings.Fields(c); len(f) >= 2 && strings.EqualFold(f[0], "DECBAS") {
				meta[MetaPrefix+"decbas"] = f[1]
				decbasLine, decbasText = r.line, f[1]
			}
			continue
		default:
			body := strings.TrimSpace(strings.TrimSuffix(strings.TrimRight(ln, " "), "|"))
			var label, value string
			if len(body) > 0 && len(ln) > 24 {
				label, value = strings.TrimSpace(ln[:min(24, len(ln))]), strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(ln[24:]), "|"))
			}
			if label == "" || value == "" {
				return nil, lineErr(name, r.line, "", ln, "not an IAGA-2002 header line: %s", quoteText(ln))
			}
			meta[MetaPrefix+iagaKey(label)] = value
			if iagaKey(label) == "reported" {
				reportedLine = r.line
			}
			continue
		}
		break
	}
	if len(columns) < 7 {
		return nil, lineErr(name, r.line, "", strings.Join(columns, " "), "IAGA-2002 column line needs DATE TIME DOY and four elements, found %d names", len(columns))
	}
	r.first = iagaHeader{line: r.line, columns: columns, fields: map[string]string{}}
	for _, k := range iagaJoinKeys {
		if v, ok := meta[MetaPrefix+k.key]; ok {
			r.first.fields[k.key] = v
		}
	}
	// Short keys as well, for callers that want the essentials.
	for short, long := range map[string]string{"station": "iaga_code", "latitude": "geodetic_latitude", "longitude": "geodetic_longitude"} {
		if v, ok := meta[MetaPrefix+long]; ok {
			meta[MetaPrefix+short] = v
		}
	}
	code := meta[MetaPrefix+"iaga_code"]
	var el [4]string
	for i := 0; i < 4; i++ {
		c := strings.ToUpper(columns[3+i])
		if code != "" && strings.HasPrefix(c, strings.ToUpper(code)) {
			c = c[len(code):]
		} else if len(c) > 3 {
			c = c[3:]
		}
		el[i] = c
	}
	for i := 0; i < 4; i++ {
		if len(el[i]) == 1 {
			r.elements[i] = el[i][0]
		}
		r.nul[i] = el[i] == "NUL"
	}
	meta[MetaPrefix+"elements"] = strings.Join(el[:], "")
	mismatch, err := iagaReportedMismatch(name, reportedLine, meta[MetaPrefix+"reported"], r.line, el)
	if err != nil {
		return nil, err
	}
	// A NUL third element (no vertical data) is read as all missing.
	third := map[string]byte{"XY": 'Z', "HD": 'Z', "HE": 'Z', "UV": 'W'}
	set := el[0] + el[1]
	if z, ok := third[set]; ok && (el[2] == string(z) || el[2] == "NUL") {
		r.elements[2] = z
		set += string(z)
	} else {
		set += el[2]
	}
	frame := FrameENU
	switch set {
	case "XYZ", "HDZ", "HEZ":
	case "UVW":
		frame = FrameSensor
	default:
		return nil, lineErr(name, r.line, "", set, "IAGA-2002 element set %q is not supported (want XYZ, HDZ, HEZ or UVW)", set)
	}
	meta[MetaFrame] = frame.String()
	variation := (set == "HDZ" || set == "HEZ") && strings.HasPrefix(strings.ToLower(meta[MetaPrefix+"data_type"]), "variation")
	switch {
	case variation && cfg.keepBaseline:
		meta[MetaPrefix+"horizontal_frame"] = IAGABaselineKept
	case variation && decbasLine == 0:
		meta[MetaPrefix+"horizontal_frame"] = IAGABaselineNoDECBAS
	}
	noDECBAS := variation && decbasLine == 0 && !cfg.keepBaseline
	// H E Z data of another type are read with E as east and H as north,
	// DECBAS or not: H and E are not the geographic X and Y.
	heNotTurned := set == "HEZ" && !variation
	switch {
	case heNotTurned && cfg.keepBaseline:
		meta[MetaPrefix+"horizontal_frame"] = IAGABaselineKept
		heNotTurned = false
	case heNotTurned:
		meta[MetaPrefix+"horizontal_frame"] = IAGAHENotTurned
	}
	if variation && decbasLine > 0 && !cfg.keepBaseline {
		v, err := strconv.ParseFloat(decbasText, 64)
		if err != nil || !(v >= 0 && v <= 216000) {
			return nil, lineErr(name, decbasLine, "DECBAS", decbasText, "IAGA-2002 DECBAS %s is not a baseline declination in tenths of minutes of arc (0 to 216000); to read the data in the observatory's baseline frame instead, keep that frame (the option WithIAGABaselineFrame(true), on the command line --iaga-baseline-frame)", quoteText(decbasText))
		}
		r.baseline = v / 600 * math.Pi / 180
		meta[MetaPrefix+"horizontal_frame"] = IAGAGeographic
	}
	header := []string{"DATE TIME", columns[3], columns[4], columns[5], columns[6]}
	c := *cfg
	c.mapping, c.units, c.frameSet, c.originMode = map[int]string{}, map[int]string{}, false, originFirst
	c.mapping[cTime], c.mapping[cBx], c.mapping[cBy], c.mapping[cBz] = header[0], header[1], header[2], header[3]
	hasF := r.elements[3] == 'F' || r.elements[3] == 'G'
	if hasF && r.elements[3] == 'F' {
		c.mapping[cF] = header[4]
	}
	pl, err := newPlan(name, string(FormatIAGA), header, nil, meta, r.line, &c)
	if err != nil {
		return nil, err
	}
	r.pl = pl
	if mismatch != "" {
		pl.warn("%s", mismatch)
	}
	h1, h2, h3 := header[1], header[2], header[3]
	switch set {
	case "XYZ":
		pl.desc[cBx], pl.desc[cBy], pl.desc[cBz] = h2+" (Y)", h1+" (X)", "-"+h3+" (Z down)"
	case "HDZ":
		d := h2
		if r.baseline != 0 {
			d = "(" + h2 + " + DECBAS)"
		}
		pl.desc[cBx], pl.desc[cBy], pl.desc[cBz] = h1+" sin "+d+" (D arc-min)", h1+" cos "+d, "-"+h3+" (Z down)"
	case "HEZ":
		pl.desc[cBx], pl.desc[cBy], pl.desc[cBz] = h2+" (E)", h1+" (H)", "-"+h3+" (Z down)"
		if r.baseline != 0 {
			pl.desc[cBx], pl.desc[cBy] = h1+" sin DECBAS + "+h2+" cos DECBAS", h1+" cos DECBAS - "+h2+" sin DECBAS"
		}
	}
	for i, h := range []string{h1, h2, h3} {
		if !r.nul[i] {
			continue
		}
		// The canonical column fed by element i alone (the vertical one:
		// a NUL horizontal element leaves no supported element set).
		c := cBz
		if set == "UVW" {
			c = cBx + i
		}
		pl.desc[c] = h + ": not reported"
	}
	// The elements named in the warnings are those the file reports: a
	// file of H and E alone (Reported HENULNUL) is not said to hold Z.
	read := IAGAVectorElements(meta[MetaPrefix+"elements"])
	if noDECBAS && !cfg.noFrameWarning {
		pl.warn("%s: IAGA-2002 variation data in %s without a DECBAS comment in the header: east and north are those of the observatory's baseline frame (H along the baseline declination), not geographic; give the header its \"# DECBAS\" line to turn them", name, read)
	}
	if heNotTurned && !cfg.noFrameWarning {
		what := "data"
		if t := strings.TrimSpace(meta[MetaPrefix+"data_type"]); t != "" {
			what = strings.ToLower(t) + " data"
		}
		pl.warn("%s: IAGA-2002 %s in %s: east and north are read as E and H, the observatory's own horizontal axes, not geographic east and north (which IAGA-2002 gives as Y and X); only variation data are turned to geographic north, by the header's \"# DECBAS\" line; keeping the observatory's frame (on the command line --iaga-baseline-frame) reads them so without this warning", name, what, read)
	}
	r.bsin, r.bcos = math.Sincos(r.baseline)
	return r, nil
}

// IAGAVectorElements names the vector elements of an IAGA-2002 file as it
// reports them, from its Meta["elements"] (the four element names of the
// column line run together, as "HEZF" or "HENULNUL"): the first three,
// those not reported (NUL) left out, separated by spaces, as "H E Z" or
// "H E".
func IAGAVectorElements(elements string) string {
	var names []string
	for n := 0; n < 3 && elements != ""; n++ {
		e := elements[:1]
		if strings.HasPrefix(strings.ToUpper(elements), "NUL") {
			e = elements[:3]
		}
		elements = elements[len(e):]
		if !strings.EqualFold(e, "NUL") {
			names = append(names, e)
		}
	}
	return strings.Join(names, " ")
}

// toENU turns one row of IAGA elements into east, north, up nT, turning
// variation data by the baseline declination when it applies; for UVW
// (sensor axes) the values are kept in order.
func (r *iagaReader) toENU(v [3]float64) (e, n, u float64) {
	switch string(r.elements[:3]) {
	case "XYZ":
		return v[1], v[0], -v[2]
	case "HDZ":
		s, c := math.Sincos(v[1]/60*math.Pi/180 + r.baseline)
		return v[0] * s, v[0] * c, -v[2]
	case "HEZ":
		if r.baseline != 0 {
			// H along the baseline declination, E at right angles east of it.
			return v[0]*r.bsin + v[1]*r.bcos, v[0]*r.bcos - v[1]*r.bsin, -v[2]
		}
		return v[1], v[0], -v[2]
	}
	return v[0], v[1], v[2]
}

func (r *iagaReader) Next() bool {
	if r.cur != nil {
		r.cur.Release()
		r.cur = nil
	}
	if r.err != nil || r.done {
		return false
	}
	rb := &r.rb
	rb.reset(r.pl)
	hasF := r.pl.src[cF] >= 0
	for rb.n < r.cfg.batchRows {
		raw, err := readLine(r.br)
		if len(raw) == 0 && err != nil {
			if err != io.EOF {
				r.err = fileErr(r.name, err, "read error near line %d", r.line)
			}
			break
		}
		r.line++
		// SUB (0x1A), the end-of-file mark of CP/M and MS-DOS text, as
		// old tools still append it: at the start of a line it ends the
		// text of a file (joined files have it before the next header).
		ln := bytes.TrimLeft(bytes.TrimRight(raw, "\r\n"), "\x1a")
		if len(bytes.TrimSpace(ln)) == 0 {
			continue
		}
		if iagaFormatLine(ln) {
			// The header of a file joined on after this one.
			if e := r.joined(); e != nil {
				r.err = e
				break
			}
			continue
		}
		// A copy cut short ends inside its last record, without the line
		// end every other record has: its last value would be read cut
		// (F = 523 for 52382.43). A data line holds date, time, day of
		// year and four values, each value with two decimals (the
		// IAGA-2002 format description of IAGA Division V-DAT), so a last
		// line without its line end that lacks fields, or whose last
		// value has fewer decimals than the last value of every line
		// before it, is the cut. Its width says nothing: a line typed
		// again by hand with other spacing is whole.
		last := bytes.Fields(ln)
		if err == io.EOF && !bytes.HasSuffix(raw, []byte("\r")) {
			if d := valueDecimals(last); len(last) < 7 || r.decimals > 0 && d < r.decimals {
				what := fmt.Sprintf("it has %d of the 7 fields of a data line (date, time, day of year and four values)", len(last))
				if len(last) >= 7 {
					what = fmt.Sprintf("its last value %s has %d of the %d decimals of the last value of every data line before it, so it would be read cut", quoteText(string(last[len(last)-1])), d, r.decimals)
				}
				r.err = lineErr(r.name, r.line, "", string(ln), "the file ends inside this IAGA-2002 data line, which has no line end: %s; a copy cut short: get the whole file, or delete this line to read the rest", what)
				break
			}
		}
		if e := r.parseRow(ln, rb, hasF); e != nil {
			r.err = e
			break
		}
		switch d := valueDecimals(last); {
		case r.decimals == -1:
			r.decimals = d
		case r.decimals != d:
			r.decimals = -2
		}
		if len(raw) > 0 && err != nil {
			break
		}
	}
	if r.err != nil || rb.n == 0 {
		r.ended = r.err == nil
		r.Release()
		return false
	}
	r.cur = r.pl.record(r.cfg.mem, rb)
	return true
}

// valueDecimals returns the number of digits after the decimal point of
// the last of a data line's fields (0 when it has none, or no point).
func valueDecimals(fields [][]byte) int {
	if len(fields) == 0 {
		return 0
	}
	v := fields[len(fields)-1]
	i := bytes.IndexByte(v, '.')
	if i < 0 {
		return 0
	}
	n := 0
	for _, c := range v[i+1:] {
		if c < '0' || c > '9' {
			break
		}
		n++
	}
	return n
}

// iagaFormatLine reports whether a line is the first line of an IAGA-2002
// header, " Format                 IAGA-2002 ... |" (after a UTF-8 byte
// order mark, in a file saved with one joined on).
func iagaFormatLine(ln []byte) bool {
	t := bytes.TrimSpace(bytes.TrimPrefix(ln, utf8BOM))
	return bytes.HasPrefix(t, []byte("Format")) && bytes.Contains(bytes.ToUpper(t), []byte("IAGA-2002"))
}

// joined reads the header of a file joined on after the one being read
// (its " Format" line just read), up to its column line, and checks that
// it describes the same series: the same observatory, data type,
// sampling, baseline declination and columns. The data that follow are
// then read on; time must still run forward across the join.
func (r *iagaReader) joined() error {
	start := r.line
	fields := map[string]string{}
	for {
		raw, err := readLine(r.br)
		if len(raw) == 0 && err != nil {
			if err != io.EOF {
				return fileErr(r.name, err, "read error near line %d", r.line)
			}
			return lineErr(r.name, start, "", "", "IAGA-2002 header (of a file joined on here?) without a DATE TIME DOY column line")
		}
		r.line++
		ln := strings.TrimRight(string(raw), "\r\n")
		t := strings.TrimSpace(ln)
		switch {
		case t == "":
			continue
		case strings.HasPrefix(t, "DATE"):
			columns := strings.Fields(strings.TrimSuffix(t, "|"))
			if strings.Join(columns, " ") != strings.Join(r.first.columns, " ") {
				return lineErr(r.name, r.line, "", t, "the IAGA-2002 header from line %d (a file joined on here?) has the columns %q, the first header (line %d) %q: files joined end to end must hold the same elements",
					start, strings.Join(columns, " "), r.first.line, strings.Join(r.first.columns, " "))
			}
			for _, k := range iagaJoinKeys {
				if fields[k.key] != r.first.fields[k.key] {
					return lineErr(r.name, start, k.label, fields[k.key], "this IAGA-2002 header (of a file joined on here?) gives %s %q where the first header gives %q: files joined end to end must come from one observatory with the same data type, sampling and baseline",
						k.label, fields[k.key], r.first.fields[k.key])
				}
			}
			return nil
		case strings.HasPrefix(t, "#"):
			c := strings.TrimSpace(strings.TrimPrefix(t, "#"))
			if f := strings.Fields(c); len(f) >= 2 && strings.EqualFold(f[0], "DECBAS") {
				fields["decbas"] = f[1]
			}
		default:
			if len(ln) <= 24 {
				return lineErr(r.name, r.line, "", ln, "not an IAGA-2002 header line: %s", quoteText(ln))
			}
			label, value := strings.TrimSpace(ln[:24]), strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(ln[24:]), "|"))
			if label == "" || value == "" {
				return lineErr(r.name, r.line, "", ln, "not an IAGA-2002 header line: %s", quoteText(ln))
			}
			fields[iagaKey(label)] = value
		}
	}
}

func (r *iagaReader) parseRow(ln []byte, rb *rawBatch, hasF bool) error {
	var f [8][]byte
	k := 0
	rest := ln
	for k < len(f) {
		rest = bytes.TrimLeft(rest, " \t")
		if len(rest) == 0 {
			break
		}
		i := bytes.IndexAny(rest, " \t")
		if i < 0 {
			i = len(rest)
		}
		f[k], rest = rest[:i], rest[i:]
		k++
	}
	if k < 7 {
		return lineErr(r.name, r.line, "", string(ln), "IAGA-2002 data line needs date, time, day of year and four values: %s", quoteText(string(ln)))
	}
	if k > 7 {
		at := len(ln) - len(rest) - len(f[7]) + 1
		return lineErr(r.name, r.line, "", string(f[7]), "IAGA-2002 data line has a value after the four elements: %s at character %d (the format has date, time, day of year and four values)", quoteText(string(f[7])), at)
	}
	ts := string(f[0]) + "T" + string(f[1]) + "Z"
	tm, err := time.Parse("2006-01-02T15:04:05.999999999Z", ts)
	if err != nil {
		return lineErr(r.name, r.line, "DATE TIME", string(f[0])+" "+string(f[1]), "%s is not an IAGA-2002 date and time", quoteText(string(f[0])+" "+string(f[1])))
	}
	t := unixSeconds(tm)
	if doy, err := strconv.Atoi(string(f[2])); err != nil || doy != tm.YearDay() {
		return lineErr(r.name, r.line, "DOY", string(f[2]), "day of year %s does not match the date %s (day %03d)", quoteText(string(f[2])), f[0], tm.YearDay())
	}
	var v [4]float64
	for i := 0; i < 4; i++ {
		x, err := strconv.ParseFloat(string(f[3+i]), 64)
		if err != nil || !decimalText(f[3+i]) || math.IsInf(x, 0) {
			return lineErr(r.name, r.line, r.pl.header[1+i], string(f[3+i]), "%s is not a number", quoteText(string(f[3+i])))
		}
		if x >= iagaNotRecorded || r.nul[i] {
			x = math.NaN()
		}
		v[i] = x
	}
	text := string(f[0]) + " " + string(f[1])
	if r.pl.orderAll && t < r.last {
		// IAGA-2002 times are UTC: no clock change.
		return lineErr(r.name, r.line, "DATE TIME", text, "%s", backwardsMsg(t, r.last, text, r.lastText, fmt.Sprintf("line %d", r.lastLine), false))
	}
	r.last, r.lastText, r.lastLine = t, text, r.line
	e, n, u := r.toENU([3]float64{v[0], v[1], v[2]})
	rb.f[cTime] = append(rb.f[cTime], t)
	rb.f[cBx] = append(rb.f[cBx], e)
	rb.f[cBy] = append(rb.f[cBy], n)
	rb.f[cBz] = append(rb.f[cBz], u)
	if hasF {
		rb.f[cF] = append(rb.f[cF], v[3])
	}
	rb.line = append(rb.line, r.line)
	rb.n++
	return nil
}

// iagaReportedMismatch compares the element set the header's "Reported"
// field gives (reported, on line reportedLine; "" when there is none) with
// the elements of the column line (columns, on line columnLine), which
// are read. Elements of different kinds in one place (D or I, an angle in
// minutes of arc, against a field component in nT) are refused: one of
// the two lines is damaged, and reading D as a field gives nonsense
// without a sign. Elements of the same kind that differ are returned as a
// warning.
func iagaReportedMismatch(name string, reportedLine int, reported string, columnLine int, columns [4]string) (string, error) {
	rep := iagaElements(strings.ToUpper(strings.TrimSpace(reported)))
	if len(rep) == 0 {
		return "", nil
	}
	angle := func(e string) bool { return e == "D" || e == "I" }
	differ := false
	for i := 0; i < len(rep) && i < 4; i++ {
		if rep[i] == columns[i] || rep[i] == "NUL" || columns[i] == "NUL" {
			continue
		}
		differ = true
		if angle(rep[i]) != angle(columns[i]) {
			kind := func(e string) string {
				if angle(e) {
					return "an angle in minutes of arc"
				}
				return "a field component in nT"
			}
			return "", lineErr(name, columnLine, "", strings.Join(columns[:], ""),
				"the IAGA-2002 column line gives the elements %s, but the header's Reported field (line %d) gives %s: element %d would be read as %s (%s) where the header says %s (%s); one of the two lines is damaged: correct it",
				strings.Join(columns[:], ""), reportedLine, reported, i+1, columns[i], kind(columns[i]), rep[i], kind(rep[i]))
		}
	}
	if !differ {
		return "", nil
	}
	return fmt.Sprintf("%s:%d: the IAGA-2002 column line gives the elements %s, but the header's Reported field (line %d) gives %s: the column line's are read; if they are wrong, correct that line",
		name, columnLine, strings.Join(columns[:], ""), reportedLine, reported), nil
}

// iagaElements splits an element set such as "HDZF" or "HENULNUL" into
// its elements ("NUL" is one). Separators written between them ("H D Z
// F", "H,D,Z,F", "H|D|Z|F") are skipped: anything but a letter.
func iagaElements(s string) []string {
	var out []string
	for len(s) > 0 {
		if strings.HasPrefix(s, "NUL") {
			out, s = append(out, "NUL"), s[3:]
			continue
		}
		r, n := utf8.DecodeRuneInString(s)
		if unicode.IsLetter(r) {
			out = append(out, s[:n])
		}
		s = s[n:]
	}
	return out
}
