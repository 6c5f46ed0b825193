package calibrate

import (
	"math"
	"strings"
	"testing"
)

// TestNyquistRefusalNamesRepeatedStamps checks that a 500 Hz log whose
// times were cut to whole seconds, refused for 50 Hz as above the
// Nyquist frequency its stamps give (0.5 Hz), says that most readings
// share a stamp and how many: 3000 readings 2 ms apart span 6 s, so 2994
// repeat the time before and 500 share each stamp. Before, the refusal
// named only the 0.5 Hz, read as a log sampled at 1 Hz. A log whose times
// are its own (the same readings with their milliseconds) demodulates.
// The field is an invented 50 Hz tone.
func TestNyquistRefusalNamesRepeatedStamps(t *testing.T) {
	const n = 3000
	mk := func(whole bool) *Columns {
		c := &Columns{Time: make([]float64, n)}
		for k := range c.B {
			c.B[k] = make([]float64, n)
		}
		for i := range n {
			tt := 1000 + 0.002*float64(i)
			c.B[0][i] = 20 * math.Sin(2*math.Pi*50*tt)
			c.B[1][i], c.B[2][i] = 1200, -46000
			if whole {
				tt = math.Floor(tt + 1e-9)
			}
			c.Time[i] = tt
		}
		return c
	}
	_, err := DemodulateColumns(mk(true), &DemodSettings{Freq: 50, Window: 0.2})
	if err == nil {
		t.Fatal("whole-second stamps demodulated at 50 Hz")
	}
	for _, w := range []string{"Nyquist frequency 0.5 Hz", "2994 of its 3000 readings have the time of the reading before them", "about 500 readings a stamp", "milliseconds or finer"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("refusal lacks %q: %v", w, err)
		}
	}
	if _, err := DemodulateColumns(mk(false), &DemodSettings{Freq: 50, Window: 0.2}); err != nil {
		t.Errorf("the same log with its milliseconds: %v", err)
	}
}
