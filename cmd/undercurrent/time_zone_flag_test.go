package main

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// euWall writes the instant t as the wall clock of a zone whose standard
// time is std hours east of UTC and that keeps the European Union's summer
// time (Directive 2000/84/EC: from 01:00 UTC on the last Sunday of March
// to 01:00 UTC on the last Sunday of October, one hour ahead). Worked out
// by hand for 2026 only, the year of these logs: those Sundays are 29
// March and 25 October (1 January 2026 is a Thursday).
func euWall(t time.Time, std int) string {
	t = t.UTC()
	on := time.Date(2026, 3, 29, 1, 0, 0, 0, time.UTC)
	off := time.Date(2026, 10, 25, 1, 0, 0, 0, time.UTC)
	if t.Year() != 2026 {
		panic("euWall: 2026 only")
	}
	h := std
	if !t.Before(on) && t.Before(off) {
		h++
	}
	return t.Add(time.Duration(h) * time.Hour).Format("2006-01-02T15:04:05.000")
}

// TestLocateTimeZoneAcrossClockChanges: the single-line survey walked
// across the night Berlin's clocks go forward (29 March 2026, 01:00 UTC)
// and across the night they go back (25 October), its times written as
// Berlin wall-clock readings without an offset, and its base log as
// London's (the same rule, standard time UTC+0), read with --time-zone
// Europe/Berlin and --base-time-zone Europe/London, gives the groups of
// the same logs in seconds since 1970. With one offset (--time-offset) the
// spring survey draws the clocks-forward warning (and its readings after
// the change are an hour late) and the autumn survey is refused as going
// backwards; with the zone the warning is not given and the autumn
// survey's repeated hour is warned of as read in order.
func TestLocateTimeZoneAcrossClockChanges(t *testing.T) {
	for _, c := range []struct {
		name, start string
		offset      string // the offset in force at the start, for the one-offset run
	}{
		{"spring", `start = "2026-03-29T00:59:00Z"`, "+01:00"},
		{"autumn", `start = "2026-10-25T00:58:30Z"`, "+02:00"},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			toml := filepath.Join(dir, "walk.toml")
			raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
			if err != nil {
				t.Fatal(err)
			}
			text := strings.Replace(string(raw), `start = "2026-02-02T14:00:00Z"`, c.start, 1)
			if text == string(raw) {
				t.Fatal("single-line.toml has no start line to replace")
			}
			if err := os.WriteFile(toml, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			sim, base := filepath.Join(dir, "sim.csv"), filepath.Join(dir, "base.csv")
			mustCLI(t, "simulate", toml, "-o", sim, "--base-log", base)
			walk, baseLocal := filepath.Join(dir, "walk.csv"), filepath.Join(dir, "base-local.csv")
			rewriteTimes(t, sim, walk, func(t time.Time) string { return euWall(t, 1) })
			rewriteTimes(t, base, baseLocal, func(t time.Time) string { return euWall(t, 0) })

			args := []string{"locate", "--json", "--group-by", "group"}
			want := decodeOffLog(t, mustCLI(t, append(args, "--base", base, sim)...))
			got := decodeOffLog(t, mustCLI(t, append(args, "--time-zone", "Europe/Berlin", "--base", baseLocal, "--base-time-zone", "Europe/London", walk)...))
			if len(want.Groups) != 7 || !reflect.DeepEqual(got.Groups, want.Groups) {
				t.Errorf("Berlin wall times with --time-zone, London base with --base-time-zone: groups differ from the logs in seconds\n got %+v\nwant %+v", got.Groups, want.Groups)
			}
			warn := strings.Join(got.Warnings, "\n")
			if strings.Contains(warn, "time steps forward") || strings.Contains(warn, "give no UTC offset") {
				t.Errorf("with --time-zone: warned of local times read at one offset:\n%s", warn)
			}
			if c.name == "autumn" && !strings.Contains(warn, "(the second time round), keeping the log's times in order") {
				t.Errorf("autumn with --time-zone: no warning of the repeated hour:\n%s", warn)
			}

			code, out, errOut := cli(t, append(args, "--time-offset", c.offset, walk)...)
			switch c.name {
			case "spring":
				if code != 0 || !strings.Contains(out, "time steps forward") {
					t.Errorf("spring at one offset: exit %d, want the clocks-forward warning\n%.2000s%s", code, out, errOut)
				}
			case "autumn":
				if code == 0 || !strings.Contains(errOut, "time goes backwards") {
					t.Errorf("autumn at one offset: exit %d, want the step back refused\n%s", code, errOut)
				}
			}
		})
	}
}

// TestTimeZoneFlagRefusals: an unknown zone, or a zone with an offset, is
// refused as a usage error naming the flags, on every command that reads
// logs; --base-time-zone needs --base and is not taken with
// --base-time-offset.
func TestTimeZoneFlagRefusals(t *testing.T) {
	log := filepath.Join(t.TempDir(), "log.csv")
	if err := os.WriteFile(log, []byte("time,bx,by,bz\n2026-04-21T10:00:00,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	dir := filepath.Dir(log)
	for _, cmd := range [][]string{
		{"inspect", log}, {"convert", log, filepath.Join(dir, "out.parquet")}, {"locate", log},
		{"calibrate", "--spin", log, "-o", filepath.Join(dir, "cal.json")}, {"replay", "--asset", "a", log},
	} {
		for _, c := range []struct {
			flags []string
			want  string
		}{
			{[]string{"--time-zone", "Europe/Berlinn"}, `--time-zone "Europe/Berlinn": not an IANA zone name`},
			{[]string{"--time-zone", "Europe/Berlin", "--time-offset", "+01:00"}, "--time-zone Europe/Berlin and --time-offset +01:00: give one"},
		} {
			code, _, errOut := cli(t, append(append([]string{cmd[0]}, c.flags...), cmd[1:]...)...)
			if code != 2 || !strings.Contains(errOut, c.want) {
				t.Errorf("%v %v: exit %d, want a usage error with %q:\n%s", cmd, c.flags, code, c.want, errOut)
			}
		}
	}
	code, _, errOut := cli(t, "locate", "--base-time-zone", "Europe/London", log)
	if code != 2 || !strings.Contains(errOut, "--base-time-zone needs --base") {
		t.Errorf("--base-time-zone without --base: exit %d\n%s", code, errOut)
	}
	code, _, errOut = cli(t, "locate", "--base", log, "--base-time-zone", "Europe/London", "--base-time-offset", "+01:00", log)
	if code != 2 || !strings.Contains(errOut, "give one") {
		t.Errorf("--base-time-zone with --base-time-offset: exit %d\n%s", code, errOut)
	}
}

// TestInspectTimeZone: inspect reads a log in the zone given, its first
// time the instant by the EU rule (euWall), and says so in no warning of
// times without an offset.
func TestInspectTimeZone(t *testing.T) {
	log := filepath.Join(t.TempDir(), "log.csv")
	if err := os.WriteFile(log, []byte("time,bx,by,bz\n2026-10-25T02:30:00,1,2,3\n2026-10-25T02:10:00,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := mustCLI(t, "inspect", "--time-zone", "Europe/Berlin", log)
	// 02:30 the first time round is 00:30 UTC, 02:10 the second 01:10.
	if euWall(time.Date(2026, 10, 25, 0, 30, 0, 0, time.UTC), 1) != "2026-10-25T02:30:00.000" ||
		euWall(time.Date(2026, 10, 25, 1, 10, 0, 0, time.UTC), 1) != "2026-10-25T02:10:00.000" {
		t.Fatal("euWall does not give the log's wall times")
	}
	for _, want := range []string{"2026-10-25T00:30:00", "2026-10-25T01:10:00", "second time round"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect --time-zone: output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "give no UTC offset") {
		t.Errorf("inspect --time-zone: warned of times without an offset:\n%s", out)
	}
}
