package ingest

import (
	"strings"
	"testing"
)

// TestHeightWarningEveryColumnRead: a lat/lon log with no height whose
// every column is read was told "(columns not read: none); if one of them
// is the height", pointing at columns there are none of (found in review).
// It now says every column is read and none is a height, and names no
// unread columns.
func TestHeightWarningEveryColumnRead(t *testing.T) {
	const text = "time,lat,lon,bx,by,bz\n" +
		"0,52.1000000,-1.3000000,100,18000,-44000\n" +
		"1,52.1000900,-1.3000000,100,18000,-44000\n"
	s, err := ReadSamples(writeFile(t, "rover.csv", text))
	if err != nil {
		t.Fatal(err)
	}
	w := strings.Join(s.Warnings, "\n")
	if !strings.Contains(w, "no column for height beside latitude and longitude") {
		t.Fatalf("no height warning: %q", w)
	}
	for _, bad := range []string{"columns not read: none", "if one of them"} {
		if strings.Contains(w, bad) {
			t.Errorf("warning %q says %q with every column read", w, bad)
		}
	}
	if !strings.Contains(w, "every column of the log is read") {
		t.Errorf("warning %q does not say every column is read", w)
	}
}

// TestHeightWarningLeftOut checks WithHeightWarning(false), the option a
// base-station correction reads its base log with (its positions are not
// used): a base log that holds its fixed latitude and longitude drew advice
// to map a height that could change nothing (found in review).
func TestHeightWarningLeftOut(t *testing.T) {
	const text = "time,lat,lon,bx,by,bz\n" +
		"0,52.1000000,-1.3000000,100,18000,-44000\n" +
		"1,52.1000000,-1.3000000,100,18000,-44000\n"
	s, err := ReadSamples(writeFile(t, "base.csv", text), WithHeightWarning(false))
	if err != nil {
		t.Fatal(err)
	}
	if w := strings.Join(s.Warnings, "\n"); strings.Contains(w, "no column for height") {
		t.Errorf("WithHeightWarning(false), yet warned: %s", w)
	}
}
