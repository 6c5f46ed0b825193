package ingest

import (
	"strings"
	"testing"
)

// A CSV file whose "# undercurrent.frame: ned" line states north, east,
// down (the geophysical X north, Y east, Z down of IAGA-2002 and
// observatory practice) is turned to east, north, up as WithFrame(FrameNED)
// turns it: east = Y, north = X, up = -Z. Before, the line was dropped and
// the columns were read as east, north, up.
func TestFrameLineNED(t *testing.T) {
	p := writeFile(t, "ned.csv", "# undercurrent.frame: ned\ntime,bx,by,bz\n0,19104.059,2870.096,45940\n60,19104.5,2870.5,45941\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 2870.096 || s.By[0] != 19104.059 || s.Bz[0] != -45940 {
		t.Errorf("first row east, north, up = %v, %v, %v; want 2870.096, 19104.059, -45940", s.Bx[0], s.By[0], s.Bz[0])
	}
	if s.Frame != FrameENU || s.InFrame != FrameNED || !s.InFrameStated {
		t.Errorf("Frame %v, InFrame %v (stated %v); want enu, read from ned, stated", s.Frame, s.InFrame, s.InFrameStated)
	}
	// Given the same, WithFrame(FrameNED) reads the same values.
	g, err := ReadSamples(writeFile(t, "plain.csv", "time,bx,by,bz\n0,19104.059,2870.096,45940\n"), WithFrame(FrameNED))
	if err != nil {
		t.Fatal(err)
	}
	if g.Bx[0] != s.Bx[0] || g.By[0] != s.By[0] || g.Bz[0] != s.Bz[0] {
		t.Errorf("WithFrame(FrameNED): %v %v %v, the frame line: %v %v %v", g.Bx[0], g.By[0], g.Bz[0], s.Bx[0], s.By[0], s.Bz[0])
	}
	if g.InFrame != FrameNED || !g.InFrameStated {
		t.Errorf("WithFrame(FrameNED): InFrame %v, stated %v", g.InFrame, g.InFrameStated)
	}
	// A frame given overrides the line, with a warning.
	r, err := Open(p, WithFrame(FrameENU))
	if err != nil {
		t.Fatal(err)
	}
	w := Warnings(r)
	r.Release()
	if len(w) != 1 || !strings.Contains(w[0], "says its columns are north, east, down (ned), but they are read as east, north, up (enu)") {
		t.Errorf("warnings %q: want the override of the frame line said", w)
	}
	// A log stating nothing is assumed east, north, up, and says so.
	d, err := ReadSamples(writeFile(t, "d.csv", "time,bx,by,bz\n0,1,2,3\n"))
	if err != nil {
		t.Fatal(err)
	}
	if d.InFrame != FrameENU || d.InFrameStated {
		t.Errorf("no frame line: InFrame %v, stated %v; want enu, assumed", d.InFrame, d.InFrameStated)
	}
}

// A frame line that names no frame is refused, naming the value, rather
// than read as east, north, up.
func TestFrameLineUnknown(t *testing.T) {
	p := writeFile(t, "nez.csv", "# undercurrent.frame: nez\ntime,bx,by,bz\n0,1,2,3\n")
	_, err := ReadSamples(p)
	wantErr(t, err, `undercurrent.frame is "nez", which names no frame (want enu, ned or sensor)`)
}

// Attitude columns in a log not read in the sensor frame are read but
// applied by nothing (only a sensor-frame log is turned by its attitude,
// README "Input formats"): a warning names them and --frame sensor. A
// sensor-frame log, by the option or by its metadata, is not warned about.
func TestAttitudeUnusedWarning(t *testing.T) {
	body := "time,bx,by,bz,roll,pitch,yaw\n0,1000,2000,45000,3,-2,120\n"
	p := writeFile(t, "tilt.csv", body)
	r, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	w := Warnings(r)
	r.Release()
	if len(w) != 1 || !strings.Contains(w[0], "attitude columns roll, pitch, yaw: read but not applied") || !strings.Contains(w[0], "on the command line --frame sensor") {
		t.Errorf("warnings %q: want the unused attitude named with --frame sensor", w)
	}
	q := writeFile(t, "quat.csv", "time,bx,by,bz,qw,qx,qy,qz\n0,1000,2000,45000,1,0,0,0\n")
	if r, err = Open(q, WithFrame(FrameNED)); err != nil {
		t.Fatal(err)
	}
	w = Warnings(r)
	r.Release()
	if len(w) != 1 || !strings.Contains(w[0], "qw, qx, qy, qz") || !strings.Contains(w[0], "north, east, down (ned)") {
		t.Errorf("quaternion read as ned: warnings %q", w)
	}
	for _, c := range []struct {
		name string
		path string
		opts []Option
	}{
		{"WithFrame(FrameSensor)", p, []Option{WithFrame(FrameSensor)}},
		{"sensor frame line", writeFile(t, "s.csv", "# undercurrent.frame: sensor\n"+body), nil},
	} {
		r, err := Open(c.path, c.opts...)
		if err != nil {
			t.Fatal(err)
		}
		if w := Warnings(r); len(w) > 0 {
			t.Errorf("%s: warnings %q", c.name, w)
		}
		r.Release()
	}
}
