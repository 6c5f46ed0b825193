package ingest

import (
	"bytes"
	"math"
)

// groupingAdvice is what a message says of a number that looks written
// with digit grouping (thousands separators).
const groupingAdvice = "looks like digit grouping (thousands separators); export without them"

// groupSeps are the separators spreadsheets and locales group digits with:
// point, comma, apostrophe (and the right single quote some fonts give
// it), space, no-break space and narrow no-break space.
var groupSeps = []string{".", ",", "'", "\u2019", " ", "\u00a0", "\u202f"}

// groupedText reports whether t is [sign] one to three digits followed by
// one or more groups of a separator and exactly three digits, all with one
// separator, then optionally a decimal part written with another mark
// ("18.861", "18 860,934", "18'860.934", "1.234.567"), and returns the
// separator. A single "." or "," group is what a decimal with three
// decimals also looks like: the caller decides.
func groupedText(t []byte) (sep string, groups int, ok bool) {
	if len(t) > 0 && (t[0] == '-' || t[0] == '+') {
		t = t[1:]
	}
	i := 0
	for i < len(t) && t[i] >= '0' && t[i] <= '9' {
		i++
	}
	if i == 0 || i > 3 {
		return "", 0, false
	}
	t = t[i:]
	for len(t) > 0 {
		s := ""
		for _, g := range groupSeps {
			if bytes.HasPrefix(t, []byte(g)) {
				s = g
				break
			}
		}
		if s == "" || (sep != "" && s != sep) {
			break
		}
		rest := t[len(s):]
		if len(rest) < 3 || !allDigits(rest[:3]) || (len(rest) > 3 && rest[3] >= '0' && rest[3] <= '9') {
			break
		}
		sep, groups, t = s, groups+1, rest[3:]
	}
	if groups == 0 {
		return "", 0, false
	}
	if len(t) == 0 {
		return sep, groups, true
	}
	// A decimal part with the other mark.
	if (t[0] == '.' || t[0] == ',') && string(t[0]) != sep && len(t) > 1 && allDigits(t[1:]) {
		return sep, groups, true
	}
	return "", 0, false
}

// groupingHint is what the "is not a number" message adds for a refused
// text that looks written with digit grouping, "" for others.
// decComma says the file is read with decimal commas.
func groupingHint(t []byte, decComma bool) string {
	sep, groups, ok := groupedText(t)
	if !ok {
		return ""
	}
	// One comma group alone in a file read with decimal points may be a
	// decimal comma (the caller's other hint says so); a point group alone
	// in a file read with decimal commas, or any group followed by a
	// decimal part, is grouping.
	if groups == 1 && sep == "," && !decComma && !bytes.ContainsAny(t[bytes.Index(t, []byte(sep))+1:], ".,") {
		return ""
	}
	what := "separator"
	switch sep {
	case " ", "\u00a0", "\u202f":
		what = "space"
	case "'", "\u2019":
		what = "apostrophe"
	case ".":
		what = "point"
	case ",":
		what = "comma"
	}
	return " (" + groupingAdvice + ": the " + what + " groups the digits by three)"
}

// groupingCol gathers, for one mapped number column, what the grouping
// check needs: a value that holds the file's decimal mark with one to three
// digits before it and exactly three after ("18.861"), whether any value
// holds the mark otherwise (a decimal), and the whole numbers without a
// mark.
type groupingCol struct {
	grouped    int    // values d{1,3} mark ddd
	first      []byte // the first of them
	firstLine  int
	other      bool    // a value with the mark in another form: decimals
	ints       int     // whole numbers without the mark
	intExample []byte  // the first of them
	intMax     float64 // largest |whole number|
	// Where a whole number and a grouped value follow one another in the
	// column, the two readings of the grouped one are weighed: grpVotes
	// count the pairs closer with it read as grouped (958 then 1.028 as
	// 1028), decVotes those closer with it read as a decimal (-152 then
	// -151.273). prev is the last value, prevKind 1 whole, 2 grouped.
	grpVotes, decVotes int
	prev               float64
	prevKind           int
}

// vote weighs a whole number w beside a value g written d{1,3}.ddd.
func (c *groupingCol) vote(w, g float64) {
	if math.Abs(w-1000*g) < math.Abs(w-g) {
		c.grpVotes++
	} else {
		c.decVotes++
	}
}

// checkDigitGrouping peeks at the data records (as firstRecordDecimalComma
// does) and refuses a file whose number column reads digit grouping as
// decimals: every value with the decimal mark has one to three digits
// before it and exactly three after ("18.861" beside "958" as a
// spreadsheet's "#.##0" format writes 18861 and 958), and the same column
// holds whole numbers below 1000 without the mark (zero, a receiver's "no
// fix" or a logger's "no value", is no evidence), and where a whole number
// and such a value follow one another the value read as grouped is the
// nearer to it (958 then 1.028, as 1028), never the value read as a
// decimal (-152 then -151.273: a shortest-form decimal column of a few
// rows, none of which happens to have fewer decimals). Read as decimals such a
// column holds two scales at once (18.861 and 958). A column written with
// three decimals throughout ("%.3f") has no whole numbers; one written in
// shortest form has values with fewer decimals: neither is refused. The
// check is skipped when the caller gave the decimal mark (WithDecimalComma),
// which says the marks are decimals. first is the line of the first record
// in the peek.
func (r *csvReader) checkDigitGrouping(first int) error {
	if r.cfg.decimalComma != 0 {
		return nil
	}
	mark := byte('.')
	if r.decComma {
		mark = ','
	}
	peek, _ := r.br.Peek(64 << 10)
	cols := make(map[int]*groupingCol)
	var fields [][]byte
	line := first - 1
	for len(peek) > 0 {
		var ln []byte
		ln, peek = cutLine(peek)
		line++
		ln = bytes.TrimRight(ln, "\r")
		t := bytes.TrimSpace(ln)
		if len(t) == 0 || (len(r.comment) > 0 && bytes.HasPrefix(t, r.comment)) {
			continue
		}
		fields = splitFields(ln, r.delim, r.ws, fields[:0])
		for _, u := range r.used {
			if u.c == cGroup || u.c == cTime || u.src >= len(fields) {
				continue
			}
			f := bytes.Trim(trimField(fields[u.src]), " \t")
			if len(f) == 0 {
				continue
			}
			c := cols[u.src]
			if c == nil {
				c = &groupingCol{}
				cols[u.src] = c
			}
			k := bytes.IndexByte(f, mark)
			if k < 0 {
				if allDigits(bytes.TrimLeft(f, "+-")) && len(bytes.TrimLeft(f, "+-")) > 0 {
					v, _ := parseNumber(f)
					if v == 0 {
						continue // a receiver's "no fix", a logger's "no value": no evidence
					}
					if c.ints == 0 {
						c.intExample = append([]byte(nil), f...)
					}
					c.ints++
					c.intMax = math.Max(c.intMax, math.Abs(v))
					if c.prevKind == 2 {
						c.vote(v, c.prev)
					}
					c.prev, c.prevKind = v, 1
				} else {
					c.prevKind = 0
				}
				continue
			}
			d := bytes.TrimLeft(f[:k], "+-")
			if len(d) >= 1 && len(d) <= 3 && allDigits(d) && len(f)-k-1 == 3 && allDigits(f[k+1:]) {
				if c.grouped == 0 {
					c.first, c.firstLine = append([]byte(nil), f...), line
				}
				c.grouped++
				v, _, _ := parseDecimalComma(f, nil)
				if mark == '.' {
					v, _ = parseNumber(f)
				}
				if c.prevKind == 1 {
					c.vote(c.prev, v)
				}
				c.prev, c.prevKind = v, 2
			} else {
				c.other = true
				c.prevKind = 0
			}
		}
	}
	var worst *groupingCol
	src := -1
	for s, c := range cols {
		if c.grouped == 0 || c.other || c.ints == 0 || c.intMax > 999 || c.grpVotes == 0 || c.decVotes > 0 {
			continue
		}
		if worst == nil || c.firstLine < worst.firstLine || (c.firstLine == worst.firstLine && s < src) {
			worst, src = c, s
		}
	}
	if worst == nil {
		return nil
	}
	return lineErr(r.name, worst.firstLine, r.pl.header[src], string(worst.first),
		"%s %s: in this column every number with a %q has exactly three digits after it, beside whole numbers below 1000 such as %s, so read as decimals the column would hold two scales at once (if these really are decimals, give the decimal mark: the option WithDecimalComma(%v), on the command line --decimal-comma=%v)",
		quoteText(string(worst.first)), groupingAdvice, string(mark), quoteText(string(worst.intExample)), r.decComma, r.decComma)
}

// cutLine splits the first line (without its newline) from peek's bytes,
// giving the rest after it; rest is nil on the last line.
func cutLine(peek []byte) (ln, rest []byte) {
	if i := bytes.IndexByte(peek, '\n'); i >= 0 {
		return peek[:i], peek[i+1:]
	}
	return peek, nil
}
