package main

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// TestBaseLogLocalTimes: the base log of a crew whose loggers write local
// day-first times without their offset (02/02/2026 16:00:00.000, UTC+02:00)
// was refused with "give the order ... with --date-order dmy", a flag the
// user had given and the base log did not take, and no flag read its local
// times. The base takes --date-order now (or --base-date-order) and
// --base-time-offset; with them the fits equal those with the RFC 3339
// base. Without --base-time-offset the base lies 2 h off the survey and the
// refusal names --base-time-offset +02:00.
func TestBaseLogLocalTimes(t *testing.T) {
	_, path := scenario(t, "single-line.toml")
	dir := t.TempDir()
	sim, base := filepath.Join(dir, "sim.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", path, "-o", sim, "--base-log", base)
	cest := time.FixedZone("", 2*3600)
	dmyStamp := func(t time.Time) string { return t.In(cest).Format("02/01/2006 15:04:05.000") }
	walk, baseDMY := filepath.Join(dir, "walk.csv"), filepath.Join(dir, "base-dmy.csv")
	rewriteTimes(t, sim, walk, dmyStamp)
	rewriteTimes(t, base, baseDMY, dmyStamp)
	if b, _ := os.ReadFile(baseDMY); !strings.Contains(string(b), "/2026 ") {
		t.Fatalf("base copy has no day-first dates:\n%.300s", b)
	}
	decode := func(out string) *resultDoc { return decodeOffLog(t, out) }
	args := []string{"locate", "--json", "--group-by", "group", "--time-offset", "+02:00", "--date-order", "dmy"}
	want := decode(mustCLI(t, append(args, "--base", base, walk)...))
	got := decode(mustCLI(t, append(args, "--base", baseDMY, "--base-time-offset", "+02:00", walk)...))
	if len(want.Groups) != 7 || !reflect.DeepEqual(got.Groups, want.Groups) {
		t.Errorf("local day-first base with --base-time-offset +02:00: groups differ from the RFC 3339 base's\n got %+v\nwant %+v", got.Groups, want.Groups)
	}
	// Without its offset the base is read as UTC, 2 h late: the hint
	// names the base's flag.
	code, _, errOut := cli(t, append(args, "--base", baseDMY, walk)...)
	if code == 0 || !strings.Contains(errOut, "--base-time-offset +02:00") {
		t.Errorf("local base without --base-time-offset: exit %d, want a refusal naming --base-time-offset +02:00\n%s", code, errOut)
	}
	// A survey in RFC 3339 times and no --date-order: the base's refusal
	// names the base's flag, not the survey's.
	rfc := filepath.Join(dir, "walk-rfc.csv")
	rewriteTimes(t, sim, rfc, func(t time.Time) string { return t.In(cest).Format("2006-01-02T15:04:05.000Z07:00") })
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--base", baseDMY, rfc)
	if code == 0 || !strings.Contains(errOut, "--base-date-order dmy") {
		t.Errorf("day-first base without a date order: exit %d, want a refusal naming --base-date-order dmy\n%s", code, errOut)
	}
	got = decode(mustCLI(t, "locate", "--json", "--group-by", "group", "--base", baseDMY, "--base-date-order", "dmy", "--base-time-offset", "+02:00", rfc))
	if !reflect.DeepEqual(got.Groups, want.Groups) {
		t.Errorf("RFC 3339 survey, base with --base-date-order dmy --base-time-offset +02:00: groups differ")
	}
}
