package ingest

import (
	"strings"
	"testing"
)

// TestCurrentRecord: a current record (time and a current column, no field) is read
// with WithCurrentRecord, the unit taken from the name's suffix or a unit option, a
// missing value kept as NaN when missing values are allowed; without the option it is
// refused for want of bx, and with it a log without a current column is refused naming
// the column. Invented fixture.
func TestCurrentRecord(t *testing.T) {
	write := func(name, text string) string { return writeFile(t, name, text) }
	amps := write("amps.csv", "time,current_A\n0,100\n1,110\n2,\n3,90\n")
	s, err := ReadSamples(amps, WithCurrentRecord(true), WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Current) != 4 || s.Current[0] != 100 || s.Current[1] != 110 || s.Current[2] == s.Current[2] || s.Current[3] != 90 || s.Bx != nil {
		t.Errorf("current %v, bx %v: want [100 110 NaN 90] and no field", s.Current, s.Bx)
	}
	if s.Meta["missing_rows"] != "1" {
		t.Errorf("missing rows %q, want 1", s.Meta["missing_rows"])
	}
	milli := write("milli.csv", "t,I\n0,2500\n1,2600\n")
	s, err = ReadSamples(milli, WithCurrentRecord(true), WithColumns("current=I"), WithUnits("current=mA"))
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Current) != 2 || s.Current[0] != 2.5 || s.Current[1] != 2.6 {
		t.Errorf("current %v, want [2.5 2.6] A", s.Current)
	}
	if _, err := ReadSamples(amps, WithAllowMissing(true)); err == nil || !strings.Contains(err.Error(), "no column for bx") {
		t.Errorf("a current record read as a magnetometer log: %v", err)
	}
	field := write("field.csv", "time,bx,by,bz\n0,1,2,3\n1,1,2,3\n")
	if _, err := ReadSamples(field, WithCurrentRecord(true)); err == nil || !strings.Contains(err.Error(), "no column for current") {
		t.Errorf("a field log read as a current record: %v", err)
	}
}
