package broker

import (
	"context"
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"
	"time"
)

// A log shifted hours ahead of the clock was held back by MaxAhead
// without a word (review rv18b: 15 s of silence for a log 2 h ahead, and
// a shift of NaN or 1e300 waited forever). The first hold of a second or
// more is said once, through Notify, with the time it lasts until (UTC)
// and how long that is; nothing is stored meanwhile. The batches here are
// the fixture's (replayOfThree), shifted so that the first one's last
// time is 4 h ahead, with MaxAhead 1 h: a hold of 3 h less the few
// milliseconds between the shift's clock reading and Replay's.
func TestReplaySaysItHoldsAheadOfTheClock(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	_, ctx, js, batches := replayOfThree(t)
	run, stop := context.WithCancel(ctx)
	defer stop()
	b0 := batches[0]
	before := time.Now()
	shift := float64(before.Add(4*time.Hour).UnixNano())/1e9 - b0.Time[len(b0.Time)-1]
	var notes []string
	st, err := Replay(run, js, batches, &ReplaySettings{Shift: shift, MaxAhead: time.Hour, Notify: func(msg string) {
		notes = append(notes, msg)
		stop()
	}})
	if !errors.Is(err, context.Canceled) || st.Batches != 0 {
		t.Fatalf("error %v, %d batches stored; want the context's error and none", err, st.Batches)
	}
	if len(notes) != 1 {
		t.Fatalf("notes %q, want one", notes)
	}
	m := regexp.MustCompile(`^holding until (\d\d:\d\d:\d\d|\d{4}-\d\d-\d\d \d\d:\d\d:\d\d) UTC \(3\.0 h\): the log is ahead of the clock, its batch 1 of 3 beyond --max-ahead`).FindStringSubmatch(notes[0])
	if m == nil {
		t.Fatalf("note %q, want the hold's end and 3.0 h", notes[0])
	}
	layout := "15:04:05"
	if strings.Contains(m[1], "-") {
		layout = "2006-01-02 15:04:05"
	}
	got, err := time.Parse(layout, m[1])
	if err != nil {
		t.Fatal(err)
	}
	want := before.Add(3 * time.Hour).UTC()
	if layout == "15:04:05" {
		got = time.Date(want.Year(), want.Month(), want.Day(), got.Hour(), got.Minute(), got.Second(), 0, time.UTC)
	}
	// A minute either side: the printed time is whole seconds, and the
	// clock moves on between the test's reading and Replay's (a loaded
	// machine); a shift or limit misapplied is off by an hour.
	if d := got.Sub(want); d < -time.Minute || d > time.Minute {
		t.Errorf("holding until %v, want about %v", got, want)
	}
}

// secondsDuration keeps a wait within time.Duration: a shift of 1e300 s
// converted as it is gave an undefined Duration.
func TestSecondsDurationInRange(t *testing.T) {
	for _, tc := range []struct {
		s    float64
		want time.Duration
	}{
		{1.5, 1500 * time.Millisecond},
		{-3, 0},
		{math.NaN(), 0},
		{1e300, math.MaxInt64},
		{math.Inf(1), math.MaxInt64},
	} {
		if got := secondsDuration(tc.s); got != tc.want {
			t.Errorf("secondsDuration(%v) = %v, want %v", tc.s, got, tc.want)
		}
	}
}
