package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"time"
)

// rewriteTimes writes the simulated log src to dst with each time (Unix
// seconds) written by stamp, to the millisecond.
func rewriteTimes(t *testing.T, src, dst string, stamp func(time.Time) string) {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	header := true
	for i, ln := range lines {
		if strings.HasPrefix(ln, "#") {
			continue
		}
		if header {
			header = false
			if !strings.HasPrefix(ln, "time,") {
				t.Fatalf("%s: header %q", src, ln)
			}
			continue
		}
		v, rest, _ := strings.Cut(ln, ",")
		sec, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("%s:%d: %v", src, i+1, err)
		}
		lines[i] = stamp(time.UnixMilli(int64(math.Round(sec*1e3)))) + "," + rest
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLocateTimeOffsetAndDateOrder: a field engineer's logger on local
// summer time (UTC+02:00) writes day-first dates without the offset, as
// 02/02/2026 16:00:00.200. The single-line survey (seven traverses over a
// 25 A conductor) is simulated with its base station and its survey log
// written twice: as RFC 3339 times with "+02:00", and as those local
// day-first times. locate with the base correction on the local copy,
// given --time-offset +02:00 --date-order dmy, must give the same fits,
// findings and warnings as on the RFC 3339 copy. Before, the local copy
// was refused (no flag read such dates); with the dates in ISO order but
// no offset it is refused because the survey then lies 2 h after the base
// record, and the hint now names --time-offset +02:00.
func TestLocateTimeOffsetAndDateOrder(t *testing.T) {
	_, path := scenario(t, "single-line.toml")
	dir := t.TempDir()
	sim, base := filepath.Join(dir, "sim.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", path, "-o", sim, "--base-log", base)
	cest := time.FixedZone("", 2*3600)
	copyAs := func(sub string, stamp func(time.Time) string) string {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, sub, "walk.csv")
		rewriteTimes(t, sim, p, stamp)
		return p
	}
	rfc := copyAs("rfc", func(t time.Time) string { return t.In(cest).Format("2006-01-02T15:04:05.000Z07:00") })
	dmy := copyAs("dmy", func(t time.Time) string { return t.In(cest).Format("02/01/2006 15:04:05.000") })
	iso := copyAs("iso", func(t time.Time) string { return t.In(cest).Format("2006-01-02T15:04:05.000") })

	args := []string{"locate", "--json", "--group-by", "group", "--base", base}
	decode := func(out string) *resultDoc { return decodeOffLog(t, out) }
	want := decode(mustCLI(t, append(args, rfc)...))
	if len(want.Groups) != 7 {
		t.Fatalf("RFC 3339 copy: %d groups, want 7", len(want.Groups))
	}
	got := decode(mustCLI(t, append(args, "--time-offset", "+02:00", "--date-order", "dmy", dmy)...))
	if !reflect.DeepEqual(got.Groups, want.Groups) {
		t.Errorf("local day-first copy with --time-offset +02:00 --date-order dmy: groups differ from the RFC 3339 copy's\n got %+v\nwant %+v", got.Groups, want.Groups)
	}
	if !reflect.DeepEqual(got.Findings, want.Findings) || !reflect.DeepEqual(got.Conductors, want.Conductors) {
		t.Errorf("findings or conductors differ:\n got %+v %+v\nwant %+v %+v", got.Findings, got.Conductors, want.Findings, want.Conductors)
	}
	strip := func(ws []string, sub string) []string {
		var out []string
		for _, w := range ws {
			out = append(out, strings.ReplaceAll(w, filepath.Join(dir, sub), "DIR"))
		}
		return out
	}
	if g, w := strip(got.Warnings, "dmy"), strip(want.Warnings, "rfc"); !reflect.DeepEqual(g, w) {
		t.Errorf("warnings differ:\n got %q\nwant %q", g, w)
	}

	// Without the flags: refused, naming the flag and the order.
	code, _, errOut := cli(t, append(args, dmy)...)
	if code == 0 || !strings.Contains(errOut, "--date-order dmy") || !strings.Contains(errOut, "walk.csv:") {
		t.Errorf("day-first dates without --date-order: exit %d\n%s", code, errOut)
	}
	// ISO order, no offset: the survey is read 2 h late, off the base
	// record; the hint names the flag that fixes it.
	code, _, errOut = cli(t, append(args, iso)...)
	if code == 0 || !strings.Contains(errOut, "--time-offset +02:00") {
		t.Errorf("local ISO times without --time-offset: exit %d, want a refusal naming --time-offset +02:00\n%s", code, errOut)
	}
	got = decode(mustCLI(t, append(args, "--time-offset", "+0200", iso)...))
	if !reflect.DeepEqual(got.Groups, want.Groups) {
		t.Errorf("local ISO copy with --time-offset +0200: groups differ from the RFC 3339 copy's")
	}
	// The offset never moves the RFC 3339 copy, whose times carry theirs.
	got = decode(mustCLI(t, append(args, "--time-offset", "-05:30", rfc)...))
	if !reflect.DeepEqual(got.Groups, want.Groups) {
		t.Errorf("RFC 3339 copy with --time-offset -05:30: groups moved")
	}
}

// TestTimeOffsetFlagRefusals: nonsense in the new flags is refused as a
// usage error naming the flag, on every command that reads logs.
func TestTimeOffsetFlagRefusals(t *testing.T) {
	log := filepath.Join(t.TempDir(), "log.csv")
	if err := os.WriteFile(log, []byte("time,bx,by,bz\n2026-04-21T10:00:00,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	dir := filepath.Dir(log)
	for _, cmd := range [][]string{
		{"inspect", log}, {"convert", log, filepath.Join(dir, "out.parquet")}, {"locate", log},
		{"calibrate", "--spin", log, "-o", filepath.Join(dir, "cal.json")}, {"replay", "--asset", "a", log},
	} {
		for _, c := range []struct{ flag, value, want string }{
			{"--time-offset", "2", `--time-offset "2": want a UTC offset`},
			{"--time-offset", "+15:00", `no time zone is that far`},
			{"--date-order", "dym", `--date-order "dym": want dmy`},
		} {
			code, _, errOut := cli(t, append([]string{cmd[0], c.flag, c.value}, cmd[1:]...)...)
			if code == 0 || !strings.Contains(errOut, c.want) {
				t.Errorf("%v %s %s: exit %d, want an error with %q:\n%s", cmd, c.flag, c.value, code, c.want, errOut)
			}
		}
	}
}

// decodeOffLog reads locate --json output, leaving out each group's log
// path, which differs between copies of one log compared by design.
func decodeOffLog(t *testing.T, out string) *resultDoc {
	t.Helper()
	var doc resultDoc
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("locate --json output is not JSON: %v\n%.500s", err, out)
	}
	for i := range doc.Groups {
		doc.Groups[i].Log = ""
	}
	return &doc
}
