package ingest

import (
	"strings"
	"testing"
	"time"
)

// TestTimeZoneHalfHourRepeated: Lord Howe Island's clocks go back 30
// minutes, from 02:00 +11:00 to 01:30 +10:30 on 2026-04-05 (IANA tz
// database, Australia/Lord_Howe). Local times across it, written without
// an offset and read with the zone, are placed right, and the warnings
// name the 30 minutes repeated, not an hour. Before, they said "falls in
// the hour repeated". Invented readings.
func TestTimeZoneHalfHourRepeated(t *testing.T) {
	loc, err := time.LoadLocation("Australia/Lord_Howe")
	if err != nil {
		t.Skipf("no Lord Howe zone here: %v", err)
	}
	text := "time,bx,by,bz\n" +
		"2026-04-05T01:20:00,1,2,3\n" + // +11:00
		"2026-04-05T01:40:00,1,2,3\n" + // first time round, +11:00
		"2026-04-05T01:35:00,1,2,3\n" + // steps back: second time round, +10:30
		"2026-04-05T02:10:00,1,2,3\n" // +10:30
	s, err := ReadSamples(writeFile(t, "lhi.csv", text), WithTimeZone(loc))
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"2026-04-04T14:20:00Z", "2026-04-04T14:40:00Z", "2026-04-04T15:05:00Z", "2026-04-04T15:40:00Z"}
	for i, w := range want {
		if got := time.Unix(int64(s.Time[i]), 0).UTC().Format(time.RFC3339); got != w {
			t.Errorf("row %d: %s, want %s", i, got, w)
		}
	}
	w := strings.Join(s.Warnings, "\n")
	for _, want := range []string{
		"lhi.csv:3: column time: \"2026-04-05T01:40:00\" falls in the 30 minutes repeated when the clocks of Australia/Lord_Howe went back: it and the times after it are read at +11:00 (the first time round) while the log's times go forward; check the readings of those 30 minutes",
		"lhi.csv:4: column time: \"2026-04-05T01:35:00\" falls in the 30 minutes repeated when the clocks of Australia/Lord_Howe went back and steps back from the time before: it and the times of those 30 minutes after it are read at +10:30 (the second time round)",
	} {
		if !strings.Contains(w, want) {
			t.Errorf("warnings lack %q:\n%s", want, w)
		}
	}
	if strings.Contains(w, "hour repeated") {
		t.Errorf("a 30-minute change worded as an hour:\n%s", w)
	}
}
