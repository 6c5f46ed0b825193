package main

import (
	"fmt"
	"math"

	"undercurrent/ingest"
)

// A calibration log appended to itself (the rows given again after the
// last, its time going back to the start) was fitted with every reading
// twice: the spin's offset standard errors came out smaller by the square
// root of 2 (± 0.03 nT where ± 0.04 was right), without a sign (found in
// review). calibrate reads its logs in any time order (no method uses the
// time), so it is not refused; the repeat is warned of, as locate refuses
// a survey log given twice (surveyrepeats.go).

// minCalRepeat is the fewest rows, in a stretch that repeats earlier rows
// exactly after the time goes back, taken for a log appended to itself.
const minCalRepeat = 10

// calibrationRepeats returns the warning for the log at path (s, as read;
// rows maps readings to data rows, nil: one to one) when, where its time
// goes back, a stretch of minCalRepeat or more rows repeats earlier rows
// exactly (time and field), naming the first such row's line; "" when
// none does.
func calibrationRepeats(path string, s *ingest.Samples, rows []int, rf *readFlags) string {
	if s.NoTime || s.Len() < 2*minCalRepeat {
		return ""
	}
	firstAt := map[float64]int{} // the first row at each time
	same := func(i, j int) bool {
		return s.Time[i] == s.Time[j] && s.Bx[i] == s.Bx[j] && s.By[i] == s.By[j] && s.Bz[i] == s.Bz[j]
	}
	repeated, first, back := 0, -1, 0.0
	for i := 0; i < s.Len(); {
		t := s.Time[i]
		if i > 0 && t < s.Time[i-1] {
			if j, ok := firstAt[t]; ok {
				k := 0
				for i+k < s.Len() && j+k < i && same(i+k, j+k) {
					k++
				}
				if k >= minCalRepeat {
					if first < 0 {
						first, back = i, s.Time[i-1]-t
					}
					repeated += k
					i += k
					continue
				}
			}
		}
		if _, ok := firstAt[t]; !ok && !math.IsNaN(t) {
			firstAt[t] = i
		}
		i++
	}
	if repeated == 0 {
		return ""
	}
	row := first
	if rows != nil && row < len(rows) {
		row = rows[row]
	}
	where := fmt.Sprintf("data row %d", row+1)
	if lines := dataRowLines(path, []int{row}, rf.comment, len(rf.header) == 0); lines != nil {
		where = fmt.Sprintf("line %d", lines[0])
	}
	return fmt.Sprintf("%s: %d of its %d readings repeat earlier ones exactly (the same time and field), from %s on, where the time goes back %.4g s: the log appended to itself? Each is fitted twice, and the calibration's standard errors come out too small (by up to the square root of 2); give each reading once",
		path, repeated, s.Len(), where, back)
}
