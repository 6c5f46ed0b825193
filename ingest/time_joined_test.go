package ingest

import (
	"testing"
	"time"
)

// A date column and a time-of-day column, as European and Windows loggers
// write them (Datum;Uhrzeit), could not be read: the time of day alone was
// refused and no mapping joined the two. time=DATE+TIME joins them with a
// space before the time is parsed.
func TestTimeJoinedFromDateAndTimeColumns(t *testing.T) {
	const text = "Datum;Uhrzeit;x;y;z;bx;by;bz\n" +
		"02.02.2026;15:00:00,000;0;0;0;1;2;3\n" +
		"02.02.2026;15:00:00,200;0,1;0;0;1;2;3\n"
	path := writeFile(t, "log.csv", text)
	s, err := ReadSamples(path, WithColumns("time=Datum+Uhrzeit"), WithDateOrder(DateOrderDMY), WithTimeOffset(time.Hour))
	if err != nil {
		t.Fatal(err)
	}
	want := float64(time.Date(2026, 2, 2, 14, 0, 0, 0, time.UTC).Unix())
	if s.Len() != 2 || s.Time[0] != want || s.Time[1] != want+0.2 {
		t.Errorf("times %v, want %v and %v", s.Time, want, want+0.2)
	}
	// A name that does not split into two columns is refused naming the mapping.
	_, err = ReadSamples(path, WithColumns("time=Datum+Uhr"))
	wantErr(t, err, `mapping time=Datum+Uhr: no column "Datum+Uhr", and no two columns DATE+TIME`)
	// The time of day alone says how to join them.
	_, err = ReadSamples(path, WithColumns("time=Uhrzeit"))
	wantErr(t, err, "DATE+TIME")
	// Half a time is a missing one.
	_, err = ReadSamples(writeFile(t, "log.csv", "Datum;Uhrzeit;x;y;z;bx;by;bz\n02.02.2026;;0;0;0;1;2;3\n"),
		WithColumns("time=Datum+Uhrzeit"), WithDateOrder(DateOrderDMY))
	wantErr(t, err, "log.csv:2: column Datum: missing value")
}
