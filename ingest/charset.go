package ingest

import (
	"bytes"
	"fmt"
	"strings"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

// A CSV file's text is read as UTF-8 where it is valid UTF-8, and each
// byte that is not (a byte that starts no valid UTF-8 character) as
// Windows-1252 (code page 1252, "Western European (Windows)"), the
// encoding older spreadsheets on Windows save "CSV" in: its bytes
// 0xA0-0xFF are those of Latin-1 (ISO 8859-1) and 0x80-0x9F hold
// printable characters (the en dash 0x96, the euro sign 0x80, the quotes
// 0x84, 0x93) where Latin-1 has invisible control characters. Its header
// names, comment lines and text values (group names) are read so alike,
// so that "Straße", "Öl" and "Äl" come out as themselves in valid UTF-8
// and stay distinct. A Windows-1252 text almost never holds a valid
// UTF-8 sequence (a letter such as Ã followed by a symbol from 0x80 to
// 0xBF), so it reads as before; a UTF-8 file with one stray byte keeps
// every other name as it is. Found in review: the file was judged whole
// on its head, and one Latin-1 byte there turned every UTF-8 "Südhang"
// into "SÃ¼dhang".

// cp1252High holds the characters of Windows-1252 bytes 0x80-0x9F (the
// WHATWG Encoding Standard's index for windows-1252, which Microsoft's
// code page 1252 table matches; its five unassigned bytes 0x81, 0x8D,
// 0x8F, 0x90 and 0x9D map to the C1 control of the same number, as both
// do).
var cp1252High = [32]rune{
	'€', 0x81, '‚', 'ƒ', '„', '…', '†', '‡', 'ˆ', '‰', 'Š', '‹', 'Œ', 0x8D, 'Ž', 0x8F,
	0x90, '‘', '’', '“', '”', '•', '–', '—', '˜', '™', 'š', '›', 'œ', 0x9D, 'ž', 'Ÿ',
}

// decodeCP1252 returns b as UTF-8 text: its valid UTF-8 characters as
// they are, each other byte read as Windows-1252.
func decodeCP1252(b []byte) string {
	var sb strings.Builder
	sb.Grow(len(b) + len(b)/4)
	for i := 0; i < len(b); {
		c := b[i]
		if c < 0x80 {
			sb.WriteByte(c)
			i++
			continue
		}
		if r, n := utf8.DecodeRune(b[i:]); r != utf8.RuneError || n > 1 {
			sb.Write(b[i : i+n])
			i += n
			continue
		}
		if c < 0xA0 {
			sb.WriteRune(cp1252High[c-0x80])
		} else {
			sb.WriteRune(rune(c))
		}
		i++
	}
	return sb.String()
}

// hasHigh reports whether b holds a byte outside ASCII.
func hasHigh(b []byte) bool {
	for _, c := range b {
		if c >= 0x80 {
			return true
		}
	}
	return false
}

// textValue returns a text value of a CSV file as UTF-8: as it is when it
// is valid UTF-8, else with each byte that is not UTF-8 read as
// Windows-1252 and bad true (the first such value is warned of).
func textValue(b []byte) (s string, bad bool) {
	if !hasHigh(b) || utf8.Valid(b) {
		return string(b), false
	}
	return decodeCP1252(b), true
}

// firstNonUTF8 returns the offset of the first byte of b that does not
// start a valid UTF-8 character, -1 if there is none. A character cut
// short at the end of b counts only when b is the whole text (atEOF).
func firstNonUTF8(b []byte, atEOF bool) int {
	for i := 0; i < len(b); {
		if b[i] < 0x80 {
			i++
			continue
		}
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			if !atEOF && !utf8.FullRune(b[i:]) {
				return -1
			}
			return i
		}
		i += n
	}
	return -1
}

// lineOf returns the line number (from first) of offset i of b.
func lineOf(b []byte, i, first int) int {
	return first + bytes.Count(b[:i], []byte{'\n'})
}

// cp1252Warning is the warning of a CSV file with a byte that is not
// UTF-8, at its first line holding one.
func cp1252Warning(file string, line int) string {
	return fmt.Sprintf("%s:%d: a byte that is not UTF-8 (this is the first line with one): such bytes are read as Windows-1252 (Western European, which holds Latin-1), as older spreadsheets save \"CSV\", and the rest of the file as UTF-8; if names read wrong, save or export it again as UTF-8 text (in a spreadsheet, \"CSV UTF-8\")", file, line)
}

// sameName reports whether the column names a and b are the same once
// both are in Unicode normalisation form NFC, so that a name saved
// decomposed ("Ho\u0308he", as macOS writes names) matches the one typed
// ("H\u00f6he"); fold compares them ignoring case and surrounding blanks
// as well, and takes a no-break space (U+00A0, as spreadsheets and word
// processors put between a word and its unit), a figure space (U+2007)
// or a narrow no-break space (U+202F) for a space: "Mag\u00a0X" in a
// header looks the same as "Mag X" typed (found in review: the mapping
// failed with "no column "Mag X" (columns found: ..., Mag X, ...)").
func sameName(a, b string, fold bool) bool {
	if a == b {
		return true
	}
	a, b = norm.NFC.String(a), norm.NFC.String(b)
	if fold {
		a, b = plainSpaces.Replace(a), plainSpaces.Replace(b)
		return strings.EqualFold(strings.TrimSpace(a), strings.TrimSpace(b))
	}
	return a == b
}

// plainSpaces turns the no-break spaces into plain ones (sameName).
var plainSpaces = strings.NewReplacer("\u00a0", " ", "\u2007", " ", "\u202f", " ")
