package live

import (
	"bytes"
	"log/slog"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"

	"undercurrent/calibrate"
)

// TestNewWarnsOfOldCalibration: a sensor's calibration whose spin was
// logged two years ago was applied by serve without a word (found in
// review, for locate). New warns of it in the log, naming the asset, the
// sensor and the spin's date; a calibration spun last week, and one that
// records no times, are not warned of.
func TestNewWarnsOfOldCalibration(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, taken *calibrate.TimeSpan) string {
		t.Helper()
		c := &calibrate.Calibration{
			Version: calibrate.Version, Method: calibrate.MethodEllipsoid, Created: time.Now().UTC().Truncate(time.Second),
			Matrix:    [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
			LogsTaken: taken,
		}
		p := filepath.Join(dir, name)
		if err := c.Save(p); err != nil {
			t.Fatal(err)
		}
		return p
	}
	now := time.Now().UTC().Truncate(time.Second)
	old := now.AddDate(-2, 0, 0)
	paths := []string{
		write("old.json", &calibrate.TimeSpan{First: old, Last: old.Add(5 * time.Minute)}),
		write("recent.json", &calibrate.TimeSpan{First: now.AddDate(0, 0, -7), Last: now.AddDate(0, 0, -7).Add(5 * time.Minute)}),
		write("untimed.json", nil),
	}
	text := strings.Replace(stopSiteText, `name = "s0"`, `name = "s0"`+"\n  calibration = \""+paths[0]+"\"", 1)
	text = strings.Replace(text, `name = "s1"`, `name = "s1"`+"\n  calibration = \""+paths[1]+"\"", 1)
	text = strings.Replace(text, `name = "s2"`, `name = "s2"`+"\n  calibration = \""+paths[2]+"\"", 1)
	var logs bytes.Buffer
	// New only keeps the connection; nothing here reaches a broker.
	if _, err := New(Config{Site: testSite(t, text), Conn: &nats.Conn{}, Worker: "w1", Logger: slog.New(slog.NewTextHandler(&logs, nil))}); err != nil {
		t.Fatal(err)
	}
	out := logs.String()
	if n := strings.Count(out, "calibration out of date"); n != 1 {
		t.Fatalf("%d warnings of an out-of-date calibration, want 1 (sensor s0):\n%s", n, out)
	}
	if !strings.Contains(out, "sensor=s0") || !strings.Contains(out, "(a spin of "+old.Format("2006-01-02")+"), more than the 365 days") {
		t.Errorf("warning does not name sensor s0 and its spin of %s:\n%s", old.Format("2006-01-02"), out)
	}
}
