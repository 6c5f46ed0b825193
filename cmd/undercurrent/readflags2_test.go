package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// kestrelMoorWithBase writes the Kestrel Moor survey and its base-station
// log (as the README's walk-through makes them) into dir.
func kestrelMoorWithBase(t *testing.T, dir string) (survey string, base *ingest.Samples) {
	t.Helper()
	sc, _ := scenario(t, "kestrel-moor-step.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	b, err := simulate.SimulateBase(sc)
	if err != nil {
		t.Fatal(err)
	}
	survey = filepath.Join(dir, "survey.csv")
	if err := ingest.WriteSamples(survey, s); err != nil {
		t.Fatal(err)
	}
	return survey, b
}

// TestLocateBaseTakesReadFlags: --allow-unterminated and --time-order
// apply to the base log as to the survey logs. A base stream cut before
// its end-of-stream marker is refused, pointing at --allow-unterminated,
// and read with it (with a warning); a base log whose time steps back is
// refused, and read with --time-order any, put in time order, with the
// same answer as the base log in order.
func TestLocateBaseTakesReadFlags(t *testing.T) {
	dir := t.TempDir()
	survey, b := kestrelMoorWithBase(t, dir)
	good := filepath.Join(dir, "base.csv")
	if err := ingest.WriteSamples(good, b); err != nil {
		t.Fatal(err)
	}
	want := table(mustCLI(t, "locate", "--group-by", "group", "--base", good, survey))

	stream := filepath.Join(dir, "base.arrows")
	if err := ingest.WriteSamples(stream, b); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(stream)
	if err != nil {
		t.Fatal(err)
	}
	cut := filepath.Join(dir, "bcut.arrows")
	if err := os.WriteFile(cut, raw[:len(raw)-8], 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--base", cut, survey)
	if code != 1 || !strings.Contains(errOut, "bcut.arrows") || !strings.Contains(errOut, "--allow-unterminated") || strings.Contains(errOut, "ingest.With") {
		t.Errorf("cut base stream: exit %d, %q: want a refusal pointing at --allow-unterminated", code, errOut)
	}
	out := mustCLI(t, "locate", "--group-by", "group", "--allow-unterminated", "--base", cut, survey)
	// One record batch: the count takes the singular.
	if !strings.Contains(out, "warning: "+cut+": Arrow IPC stream stops at byte") || !strings.Contains(out, "in 1 record batch,") {
		t.Errorf("cut base stream read: no warning in\n%s", out)
	}
	if got := table(out); got != want {
		t.Errorf("cut base stream (the whole record, only the marker cut): table\n%s\nwant\n%s", got, want)
	}

	// Swap two rows in the middle of the base log.
	back := *b
	back.Time, back.Bx, back.By, back.Bz = append([]float64(nil), b.Time...), append([]float64(nil), b.Bx...), append([]float64(nil), b.By...), append([]float64(nil), b.Bz...)
	i := b.Len() / 2
	for _, c := range [][]float64{back.Time, back.Bx, back.By, back.Bz} {
		c[i], c[i+1] = c[i+1], c[i]
	}
	bback := filepath.Join(dir, "bback.csv")
	if err := ingest.WriteSamples(bback, &back); err != nil {
		t.Fatal(err)
	}
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--base", bback, survey)
	if code != 1 || !strings.Contains(errOut, "bback.csv:") || !strings.Contains(errOut, "time goes backwards") {
		t.Errorf("base log stepping back: exit %d, %q: want a refusal naming the line", code, errOut)
	}
	out = mustCLI(t, "locate", "--group-by", "group", "--time-order", "any", "--base", bback, survey)
	if !strings.Contains(out, "warning: "+bback+": time goes backwards at 1 row (--time-order any)") {
		t.Errorf("no warning of the reordered base log in\n%s", out)
	}
	if got := table(out); got != want {
		t.Errorf("reordered base log: table\n%s\nwant\n%s", got, want)
	}
}

// TestReplayTimeOrder: replay's default time order is per-group (the
// broker needs each sensor's readings in order; sensors may follow one
// another), --time-order is honoured, and a sensor's repeated time is
// refused naming the data rows, with the time in full. The broker
// address is closed: a log that passes the checks fails at the
// connection, after the checks.
func TestReplayTimeOrder(t *testing.T) {
	dir := t.TempDir()
	s, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	write := func(name string, order []int) string {
		re := reordered(s, order)
		p := filepath.Join(dir, name)
		if err := ingest.WriteSamples(p, re); err != nil {
			t.Fatal(err)
		}
		return p
	}
	n := s.Len()
	var lastFirst []int // the last sensor's rows first: ordered per group
	last := s.Group[n-1]
	for i := range n {
		if s.Group[i] == last {
			lastFirst = append(lastFirst, i)
		}
	}
	for i := range n {
		if s.Group[i] != last {
			lastFirst = append(lastFirst, i)
		}
	}
	perGroup := write("pergroup.csv", lastFirst)
	swapped := make([]int, n) // two rows of the first sensor swapped
	for i := range swapped {
		swapped[i] = i
	}
	swapped[10], swapped[11] = 11, 10
	back := write("back.csv", swapped)
	repeat := make([]int, n) // row 12 repeats row 11
	for i := range repeat {
		repeat[i] = i
	}
	repeat[11] = 10
	dup := write("repeat.csv", repeat)

	replay := func(args ...string) (int, string) {
		code, out, errOut := cli(t, append([]string{"replay", "--asset", "fenwick-lane", "--broker", "nats://127.0.0.1:1", "--wait", "1s"}, args...)...)
		return code, out + errOut
	}
	// Flag descriptions are wrapped (helpWidth): compare words.
	if h := mustCLI(t, "help", "replay"); !strings.Contains(strings.Join(strings.Fields(h), " "), `(default "per-group")`) {
		t.Errorf("replay's help does not give its default time order:\n%s", h)
	}
	passed := func(out string) bool { return strings.Contains(out, "connect nats://127.0.0.1:1") }
	if code, out := replay(perGroup); code != 1 || !passed(out) {
		t.Errorf("sensors one after another, default order: exit %d, %q: want the checks passed", code, out)
	}
	if code, out := replay("--time-order", "ordered", perGroup); passed(out) || !strings.Contains(out, "pergroup.csv:") || !strings.Contains(out, "time goes backwards") {
		t.Errorf("sensors one after another, --time-order ordered: exit %d, %q: want a refusal", code, out)
	}
	if code, out := replay(back); passed(out) || !regexp.MustCompile(`back\.csv:\d+: column time`).MatchString(out) || strings.Contains(out, "broker:") {
		t.Errorf("a step back within a sensor: exit %d, %q: want a refusal naming the line", code, out)
	}
	code, out := replay("--time-order", "any", back)
	if code != 1 || !passed(out) || !strings.Contains(out, "warning: "+back+": time goes backwards at 1 row (--time-order any)") {
		t.Errorf("a step back, --time-order any: exit %d, %q: want the rows put in order with a warning", code, out)
	}
	tm := s.Time[10]
	full := strconv.FormatFloat(tm, 'f', -1, 64)
	code, out = replay(dup)
	if code != 1 || passed(out) || !strings.Contains(out, "repeat.csv: data rows 11 and 12 of sensor \""+s.Group[10]+"\" have the same time, "+full) {
		t.Errorf("a repeated time: exit %d, %q: want a refusal naming the rows and the time %s", code, out, full)
	}
}

// TestFlagValueErrorsAreUsageErrors: a bad --unit or --column value is a
// usage error (exit 2, with the hint to the help) in every command that
// reads logs, as a bad --time-order or --frame is, before the log is
// read; so is an output location that cannot be used.
func TestFlagValueErrorsAreUsageErrors(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	for _, cmd := range [][]string{
		{"locate", log},
		{"inspect", log},
		{"convert", log, filepath.Join(dir, "out.csv")},
		{"calibrate", "--zero", log},
		{"replay", "--asset", "a", log},
	} {
		for _, bad := range [][]string{
			{"--unit", "bx=furlong"},
			{"--column", "bogus=x"},
			{"--time-order", "sideways"},
			{"--frame", "upside"},
		} {
			args := append(append([]string{cmd[0]}, bad...), cmd[1:]...)
			code, _, errOut := cli(t, args...)
			if code != 2 || !strings.Contains(errOut, bad[0]+" ") || !strings.Contains(errOut, `run "undercurrent help `+cmd[0]+`" for usage`) {
				t.Errorf("%s: exit %d, %q: want a usage error naming %s", strings.Join(args, " "), code, errOut, bad[0])
			}
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out.csv")); !os.IsNotExist(err) {
		t.Error("a refused convert wrote its output")
	}
	held := filepath.Join(dir, "held")
	if err := os.Mkdir(held, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(held, "notes.txt"), []byte("mine"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"locate", "-o", held, log},
		{"locate", "-o", log, log},
		{"locate", "-o", filepath.Join(log, "res"), log}, // a parent that is a file
	} {
		if code, _, errOut := cli(t, args...); code != 2 {
			t.Errorf("%s: exit %d, %q: want a usage error", strings.Join(args, " "), code, errOut)
		}
	}
}

// TestMessagesWording: an empty log names its file; messages and help
// speak of the flags, give the Earth's band the check uses (15000-80000
// nT, ingest's and input.go's earthMinNT/earthMaxNT), and count in the
// singular for one.
func TestMessagesWording(t *testing.T) {
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty.csv")
	if err := os.WriteFile(empty, []byte("time,x,y,z,bx,by,bz\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "locate", empty); code != 1 || errOut != "undercurrent locate: "+empty+": no data rows\n" {
		t.Errorf("empty log: exit %d, %q", code, errOut)
	}
	nobz := filepath.Join(dir, "nobz.csv")
	if err := os.WriteFile(nobz, []byte("time,x,y,z,bx,by,Bvert\n0,0,0,0,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "locate", nobz); code != 1 || !strings.Contains(errOut, "give one with --column bz=NAME") {
		t.Errorf("missing column: exit %d, %q: want --column named", code, errOut)
	}
	notime := filepath.Join(dir, "notime.csv")
	if err := os.WriteFile(notime, []byte("stamp,x,y,z,bx,by,bz\n0,0,0,0,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "locate", notime); code != 1 || !strings.Contains(errOut, "no column for time") || !strings.Contains(errOut, "give one with --column time=NAME") {
		t.Errorf("missing time column: exit %d, %q: want --column time=NAME suggested", code, errOut)
	}
	if code, _, errOut := cli(t, "convert", nobz); code != 2 || !strings.Contains(errOut, "got 1 argument\n") {
		t.Errorf("one argument: exit %d, %q", code, errOut)
	}
	// A log in microtesla read as nT: the unit warning, without a label.
	s, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	for i := range s.Len() {
		s.Bx[i], s.By[i], s.Bz[i] = s.Bx[i]/1000, s.By[i]/1000, s.Bz[i]/1000
	}
	micro := filepath.Join(dir, "micro.csv")
	if err := ingest.WriteSamples(micro, s); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "locate", "--group-by", "group", micro)
	if !strings.Contains(out, "warning: "+micro+": median |B| is") || !strings.Contains(out, "15000-80000 nT") || strings.Contains(out, "field:") || strings.Contains(out, "20000-70000") {
		t.Errorf("unit warning:\n%s", out)
	}
	help := mustCLI(t, "help", "locate")
	for _, w := range []string{"15000-80000 nT", "--time-order", "--allow-unterminated", "suggests --despike", "--group-by"} {
		if !strings.Contains(help, w) {
			t.Errorf("locate's help lacks %q", w)
		}
	}
	if strings.Contains(help, "20000-70000") {
		t.Error("locate's help gives another band than the check's")
	}
	if h := mustCLI(t, "help", "simulate"); strings.Contains(h, "while reading") || !strings.Contains(h, "Exit status") {
		t.Errorf("simulate's help:\n%s", h)
	}
}

// TestReplayRefusesTimesBefore2000: a log whose times start at zero (or
// shifted before 2000) would be refused by the pipeline batch by batch;
// replay refuses it before connecting, naming --now and --shift.
func TestReplayRefusesTimesBefore2000(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "zero.csv")
	if err := os.WriteFile(log, []byte("time,bx,by,bz,group\n0,1,2,3,s1\n0.1,1,2,3,s1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "replay", log, "--asset", "x", "--broker", "nats://127.0.0.1:1", "--wait", "1ms")
	if code != 1 || !strings.Contains(errOut, "before 2000-01-01") || !strings.Contains(errOut, "--now") {
		t.Errorf("exit %d, %q: want a refusal naming --now", code, errOut)
	}
}
