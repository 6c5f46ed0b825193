package ingest

import (
	"bytes"
	"fmt"
)

// A logger that loses power, or a copy that stops, can leave a CSV log
// whose last line stops inside its last value: every field is there but
// the last is short ("-462" for "-46214.04"), and the line has no line end.
// Such a line reads as a whole row with a wrong value. So a last line
// without a line end is compared with the data lines before it: when it is
// short of fields, or its last value is short of the digits that column
// has on every one of up to cutRefLines lines before it (fewer decimals, no
// exponent where they have one, fewer digits in a column of whole numbers,
// empty where none is, a number that stops at its point or exponent), or
// its last group name is a shorter start of the one before, the file is
// read without that line, with a warning naming the file, line, column and
// value. A whole line can look so (a logger that drops trailing zeros,
// "-46901.5" after fifty values with two decimals), and refusing the file
// for it left only --allow-unterminated, which dropped the line anyway:
// one reading lost, said, costs less than a wrong value read or a file
// refused; a line end after the line reads it. A last line whose values are
// as long as the others' is read as before, line end or not; so is one
// with no data line before it to compare with.

// cutRefLines is how many data lines before the last are compared with it.
const cutRefLines = 50

// cutTailBytes is how much of each chunk the splitter keeps, for the lines
// before a last line that comes alone in its chunk.
const cutTailBytes = 16 << 10

// numShape is how a number is written: digits before and after its point
// (a decimal comma counts as one) and of its exponent.
type numShape struct {
	intDigits, fracDigits, expDigits int
	point, exp                       bool
}

// shapeOf reads t's shape; ok is false when t is not written as a number.
func shapeOf(t []byte) (s numShape, ok bool) {
	i, n := 0, len(t)
	if i < n && (t[i] == '-' || t[i] == '+') {
		i++
	}
	for i < n && t[i]-'0' < 10 {
		i, s.intDigits = i+1, s.intDigits+1
	}
	if i < n && (t[i] == '.' || t[i] == ',') {
		i, s.point = i+1, true
		for i < n && t[i]-'0' < 10 {
			i, s.fracDigits = i+1, s.fracDigits+1
		}
	}
	if s.intDigits+s.fracDigits == 0 {
		return s, false
	}
	if i < n && (t[i] == 'e' || t[i] == 'E') {
		i, s.exp = i+1, true
		if i < n && (t[i] == '-' || t[i] == '+') {
			i++
		}
		for i < n && t[i]-'0' < 10 {
			i, s.expDigits = i+1, s.expDigits+1
		}
		if s.expDigits == 0 {
			return s, false
		}
	}
	return s, i == n
}

// shortValue tells whether last, the last value of an unterminated line,
// is short of the digits refs (the same column on the lines before) all
// have, and says how for the message; "" when it is not.
func shortValue(last []byte, refs [][]byte, group bool) string {
	if len(refs) == 0 {
		return ""
	}
	if group {
		prev := refs[0]
		if len(last) < len(prev) && bytes.HasPrefix(prev, last) {
			return fmt.Sprintf("is a shorter start of %s on the line before", quoteText(string(prev)))
		}
		return ""
	}
	minFrac, minInt, minExp := 1<<30, 1<<30, 1<<30
	allExp, anyEmpty := true, false
	nums := 0
	for _, t := range refs {
		if len(t) == 0 {
			anyEmpty = true
			continue
		}
		s, ok := shapeOf(t)
		if !ok {
			continue // a missing value or text: says nothing of the digits
		}
		nums++
		minFrac = min(minFrac, s.fracDigits)
		minInt = min(minInt, s.intDigits)
		if s.exp {
			minExp = min(minExp, s.expDigits)
		} else {
			allExp = false
		}
	}
	if nums == 0 {
		return ""
	}
	if len(last) == 0 {
		if anyEmpty {
			return ""
		}
		return "is empty where none of the lines before has an empty value"
	}
	s, ok := shapeOf(last)
	switch {
	case !ok:
		if isMissingText(last) && string(last) != "-" {
			// A dash alone may be a number cut after its sign.
			return ""
		}
		return "stops short of a number"
	case allExp && !s.exp:
		return "has no exponent where the lines before all have one"
	case s.exp && s.expDigits < minExp:
		return fmt.Sprintf("has %d exponent digits where the lines before have at least %d", s.expDigits, minExp)
	case s.fracDigits < minFrac:
		return fmt.Sprintf("has %d decimals where the lines before have at least %d", s.fracDigits, minFrac)
	case minFrac == 0 && !s.point && !s.exp && s.intDigits < minInt:
		return fmt.Sprintf("has %d digits where the lines before have at least %d", s.intDigits, minInt)
	}
	return ""
}

// cutLastLine looks at data, the input's last chunk, for a last line
// without a line end that may be cut short. keep is how much of data to
// parse; past it is that line, left out, and warn is the warning leaving
// it out (keep == len(data) when the line is read). line is the number of data's first
// line; tail holds the input's bytes before data, for the lines before a
// last line alone in data.
func (r *csvReader) cutLastLine(data []byte, line int, tail []byte) (keep int, warn string) {
	keep = len(data)
	if keep == 0 || data[keep-1] == '\n' {
		return keep, ""
	}
	cut, open, _ := r.lastRecordEnd(data)
	if open >= 0 {
		// A quote opened on the last line, which has no line end: the
		// line cut inside a quoted value ("T0 for "T01"), left out with
		// the same warning as one cut outside quotes. Before, it was
		// refused outright. A quote that runs on over line ends may be
		// a quote left open far up the file: refused as such.
		if bytes.IndexByte(data[cut+1:], '\n') >= 0 || r.pl == nil {
			return keep, ""
		}
		at := line + bytes.Count(data[:cut+1], []byte{'\n'})
		where := fmt.Sprintf("%s:%d", r.name, at)
		if f := len(splitFields(data[cut+1:open], r.delim, false, nil)) - 1; f >= 0 && f < len(r.pl.header) {
			where += ": column " + r.pl.header[f]
		}
		return cut + 1, fmt.Sprintf("%s: the last line has no line end and its quoted value %s is not closed: left out as a line cut short (a logger or copy that stopped); if it is whole, close the quote and end the file with a line end to read it", where, quoteText(string(data[open:])))
	}
	ln := bytes.TrimRight(data[cut+1:], "\r")
	if r.skipped(ln) {
		return keep, ""
	}
	at := line + bytes.Count(data[:cut+1], []byte{'\n'})
	fields := splitFields(ln, r.delim, r.ws, nil)
	if len(fields) == r.ncols+1 && len(bytes.TrimSpace(fields[r.ncols])) == 0 {
		fields = fields[:r.ncols]
	}
	var why, col, text, whole string
	switch {
	case len(fields) < r.ncols:
		why = fmt.Sprintf("has %d fields where the header has %d", len(fields), r.ncols)
		text = string(ln)
	case len(fields) == r.ncols:
		src := r.ncols - 1
		var u *usedCol
		for k := range r.used {
			if r.used[k].src == src {
				u = &r.used[k]
			}
		}
		if u == nil {
			return keep, "" // a column not read: whatever is cut there is not read
		}
		before := data[:cut+1]
		if len(before) < cutTailBytes && len(tail) > 0 {
			before = append(append([]byte(nil), tail...), before...)
			if i := bytes.IndexByte(before, '\n'); i >= 0 && len(tail) == cutTailBytes {
				before = before[i+1:] // the tail's first line may be a part of one
			}
		} else if len(before) > cutTailBytes {
			before = before[len(before)-cutTailBytes:]
			if i := bytes.IndexByte(before, '\n'); i >= 0 {
				before = before[i+1:]
			}
		}
		var refs [][]byte
		var fs [][]byte
		for len(before) > 0 && len(refs) < cutRefLines {
			before = bytes.TrimSuffix(before, []byte{'\n'})
			i := bytes.LastIndexByte(before, '\n')
			l := before[i+1:]
			before = before[:i+1]
			l = bytes.TrimRight(l, "\r")
			if r.skipped(l) {
				continue
			}
			fs = splitFields(l, r.delim, r.ws, fs[:0])
			if len(fs) == r.ncols+1 && len(bytes.TrimSpace(fs[r.ncols])) == 0 {
				fs = fs[:r.ncols]
			}
			if len(fs) != r.ncols {
				continue // a header line, or a line refused on its own
			}
			refs = append(refs, bytes.Trim(trimField(fs[src]), " \t"))
		}
		text = string(bytes.Trim(trimField(fields[src]), " \t"))
		how := shortValue([]byte(text), refs, u.c == cGroup)
		if how == "" {
			return keep, ""
		}
		col = r.pl.header[src]
		why = fmt.Sprintf("its last value %s %s", quoteText(text), how)
		whole = "; if it is whole, end the file with a line end to read it"
		if u.c != cGroup {
			whole = "; if it is whole (a logger that writes numbers without their trailing zeros), end the file with a line end to read it"
		}
	default:
		return keep, "" // a long row, refused as such
	}
	where := fmt.Sprintf("%s:%d", r.name, at)
	if col != "" {
		where += ": column " + col
	}
	return cut + 1, fmt.Sprintf("%s: the last line has no line end and %s: left out as a line cut short (a logger or copy that stopped)%s", where, why, whole)
}

// skipped tells whether a line (without its line end) holds no record: a
// blank or comment line, delimiters alone, NUL bytes alone or a DOS
// end-of-file mark.
func (r *csvReader) skipped(ln []byte) bool {
	t := bytes.TrimSpace(ln)
	switch {
	case len(t) == 0, len(r.comment) > 0 && bytes.HasPrefix(t, r.comment):
		return true
	case len(ln) == 1 && ln[0] == 0x1a, ln[0] == 0 && len(bytes.Trim(ln, "\x00")) == 0:
		return true
	case !r.ws && emptyRecord(ln, r.delim):
		return true
	}
	return false
}
