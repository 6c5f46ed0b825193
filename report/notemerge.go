package report

import (
	"strconv"
	"strings"
)

// Notes of one kind, the same words with different numbers, are merged
// into one line that gives each number as the range it takes over the
// notes ("widened 2.2–5.3 times") and lists the groups. On a survey of a
// cable that wanders (120 traverses), "Notes from the fits" listed 106
// notes, 56 of them the same note on correlated residuals with its own
// numbers, one per group, and the row of slight misfits in the findings
// table held 50 near-identical bullets: 18 phone screens and 6 printed
// pages of a narrow column (found in review).

// noteNumber is a number in a note: where it starts and ends in the text,
// and its value.
type noteNumber struct {
	at, end int
	v       float64
	// A range the note gives ("3.1-4.3") is one number from v to hi,
	// its ends written s[at:mid] and s[mid+1:end]; for a plain number
	// hi is v and mid is end.
	hi  float64
	mid int
}

// ends are the texts of n's least and greatest value in s.
func (n noteNumber) ends(s string) (lo, hi string) {
	if n.mid == n.end {
		return s[n.at:n.end], s[n.at:n.end]
	}
	return s[n.at:n.mid], s[n.mid+1 : n.end]
}

// noteNumbers finds the numbers in s that may vary between notes of one
// kind: decimal numbers, signed or not, with an exponent or not, that do
// not stand inside a word ("T001", "lag-1") nor name what a note is about
// ("conductor 2", "source 3", "line 2"), which stays part of its kind. A
// dash between two numbers ("3.1-4.3") is a range's, not a sign.
func noteNumbers(s string) []noteNumber {
	var out []noteNumber
	digit := func(i int) bool { return i >= 0 && i < len(s) && s[i] >= '0' && s[i] <= '9' }
	letter := func(i int) bool {
		return i >= 0 && i < len(s) && (s[i] >= 'a' && s[i] <= 'z' || s[i] >= 'A' && s[i] <= 'Z' || s[i] == '_')
	}
	alnum := func(i int) bool { return digit(i) || letter(i) }
	// scan returns the end of the unsigned number starting at digit i.
	scan := func(j int) int {
		for digit(j) {
			j++
		}
		if j+1 < len(s) && s[j] == '.' && digit(j+1) {
			for j++; digit(j); j++ {
			}
		}
		if j < len(s) && (s[j] == 'e' || s[j] == 'E') {
			k := j + 1
			if k < len(s) && (s[k] == '+' || s[k] == '-') {
				k++
			}
			if digit(k) {
				for digit(k) {
					k++
				}
				j = k
			}
		}
		return j
	}
	for i := 0; i < len(s); {
		if !digit(i) || alnum(i-1) {
			i++
			continue
		}
		start, j := i, scan(i)
		i = j
		if letter(j) {
			continue // inside a word ("2nd"): not a value
		}
		if start > 0 && s[start-1] == '-' && !alnum(start-2) {
			start-- // a sign, not a range's dash
		}
		v, err := strconv.ParseFloat(s[start:j], 64)
		if err != nil || namesSubject(s[:start]) || countsLines(s[j:]) {
			continue
		}
		n := noteNumber{at: start, end: j, v: v, hi: v, mid: j}
		if j+1 < len(s) && s[j] == '-' && digit(j+1) {
			// A range: "3.1-4.3".
			if k := scan(j + 1); !letter(k) {
				if hi, err := strconv.ParseFloat(s[j+1:k], 64); err == nil && hi >= v {
					n.hi, n.end = hi, k
					i = k
				}
			}
		}
		out = append(out, n)
	}
	return out
}

// countsLines reports whether the text after a number makes it a count of
// lines ("2-3 lines fit the readings better", "1 line"): what the note says,
// not a value, so notes that differ in it are not merged (found in review:
// merged, the tee's note no longer said which group hinted at 3 lines).
func countsLines(after string) bool {
	return strings.HasPrefix(after, " line ") || strings.HasPrefix(after, " lines") || strings.HasPrefix(after, " line)") ||
		strings.HasPrefix(after, " line,") || strings.HasPrefix(after, " line.") || after == " line"
}

// namesSubject reports whether the text before a number names what the
// note is about, so that the number is not a value.
func namesSubject(before string) bool {
	for _, w := range []string{"conductor ", "source ", "line ", "lines "} {
		if strings.HasSuffix(before, w) {
			return true
		}
	}
	return false
}

// noteKind is s with its numbers (noteNumbers) and the words in keys (the
// groups' names) taken out: notes of one kind have the same noteKind.
func noteKind(s string, keys map[string]bool) (kind string, nums []noteNumber) {
	s = maskKeys(s, keys)
	nums = noteNumbers(s)
	var b strings.Builder
	last := 0
	for _, n := range nums {
		b.WriteString(s[last:n.at])
		b.WriteString("\x00")
		last = n.end
	}
	b.WriteString(s[last:])
	return b.String(), nums
}

// groupWord stands in a merged note for a group's name in the notes it
// merges ("fit at T001" and "fit at T002": "fit at each group").
const groupWord = "each group"

// maskKeys replaces each whole word of s that is in keys by groupWord.
func maskKeys(s string, keys map[string]bool) string {
	if len(keys) == 0 {
		return s
	}
	var b strings.Builder
	word := func(c byte) bool {
		return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
	}
	for i := 0; i < len(s); {
		if !word(s[i]) {
			b.WriteByte(s[i])
			i++
			continue
		}
		j := i
		for j < len(s) && word(s[j]) {
			j++
		}
		if keys[s[i:j]] {
			b.WriteString(groupWord)
		} else {
			b.WriteString(s[i:j])
		}
		i = j
	}
	return b.String()
}

// mergedNote is the notes of one kind: the first's text with its group
// names masked, the numbers of each note, and their indices in the list
// merged.
type mergedNote struct {
	text  string
	nums  [][]noteNumber
	texts []string
	at    []int
}

// mergeNotes sorts notes into kinds (noteKind), in order of first
// appearance, and returns each kind's members (indices into notes). keys,
// when not nil, gives the names of the groups note i is about, which
// stand as groupWord in its kind: only its own, so that a note naming a
// neighbour ("between T17 and T19") keeps its names.
func mergeNotes(notes []string, keys func(i int) map[string]bool) []mergedNote {
	var out []mergedNote
	index := map[string]int{}
	for i, n := range notes {
		var own map[string]bool
		if keys != nil {
			own = keys(i)
		}
		kind, nums := noteKind(n, own)
		k, ok := index[kind]
		if !ok {
			k = len(out)
			index[kind] = k
			out = append(out, mergedNote{text: maskKeys(n, own)})
		}
		m := &out[k]
		m.nums = append(m.nums, nums)
		m.texts = append(m.texts, maskKeys(n, own))
		m.at = append(m.at, i)
	}
	return out
}

// line writes a kind's notes as one: the first's words, each number given
// as the range the notes' numbers span there ("2.2–5.3"), written as the
// notes wrote the least and the greatest; a number all the notes share
// stays as it is.
func (m *mergedNote) line() string {
	first := m.texts[0]
	var b strings.Builder
	last := 0
	for slot, n := range m.nums[0] {
		lo, hi := 0, 0
		for k := range m.nums {
			if m.nums[k][slot].v < m.nums[lo][slot].v {
				lo = k
			}
			if m.nums[k][slot].hi > m.nums[hi][slot].hi {
				hi = k
			}
		}
		b.WriteString(first[last:n.at])
		los, _ := m.nums[lo][slot].ends(m.texts[lo])
		_, his := m.nums[hi][slot].ends(m.texts[hi])
		if m.nums[lo][slot].v == m.nums[hi][slot].hi {
			b.WriteString(los)
		} else {
			b.WriteString(los + "–" + his)
		}
		last = n.end
	}
	b.WriteString(first[last:])
	return b.String()
}
