package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestLocateTimeOrderPerGroup: traverses logged out of order (time runs
// forward within each traverse and back between them) are refused by
// default, naming the line, and located with --time-order per-group, with
// the same answer as the log in time order.
func TestLocateTimeOrderPerGroup(t *testing.T) {
	dir := t.TempDir()
	s, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	// Move the last traverse to the front.
	last := s.Group[s.Len()-1]
	var front, rest []int
	for i := range s.Len() {
		if s.Group[i] == last {
			front = append(front, i)
		} else {
			rest = append(rest, i)
		}
	}
	if len(front) == 0 || len(rest) == 0 {
		t.Fatal("the log has one traverse")
	}
	re := reordered(s, append(front, rest...))
	reord := filepath.Join(dir, "reordered.csv")
	if err := ingest.WriteSamples(reord, re); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--count", "1", reord)
	if code == 0 || !strings.Contains(errOut, "time goes backwards") || !strings.Contains(errOut, "reordered.csv:") {
		t.Fatalf("exit %d, %q: want a refusal naming the file and line", code, errOut)
	}
	want := mustCLI(t, "locate", "--group-by", "group", "--count", "1", filepath.Join(dir, "line.csv"))
	got := mustCLI(t, "locate", "--group-by", "group", "--count", "1", "--time-order", "per-group", reord)
	// The table lists the traverses by key: the same lines in both.
	if table(want) != table(got) {
		t.Errorf("per-group order changed the answer:\n%s\nwant\n%s", got, want)
	}
	if code, _, errOut := cli(t, "locate", "--time-order", "sideways", reord); code != 2 || !strings.Contains(errOut, "--time-order") {
		t.Errorf("a bad --time-order: exit %d, %q; want a usage error", code, errOut)
	}
}

// table keeps the per-traverse lines of locate's summary (those starting
// with a traverse key), sorted, without the timing line.
func table(out string) string {
	var keep []string
	for _, l := range strings.Split(out, "\n") {
		if strings.HasPrefix(strings.TrimSpace(l), "T") {
			keep = append(keep, strings.TrimSpace(l))
		}
	}
	return strings.Join(keep, "\n")
}

// TestConvertUnterminatedStream: an Arrow IPC stream file without its
// end-of-stream marker (Arrow columnar format, "IPC Streaming Format": the
// stream ends with 0xFFFFFFFF 0x00000000) is refused by default and read
// with --allow-unterminated, with a warning.
func TestConvertUnterminatedStream(t *testing.T) {
	dir := t.TempDir()
	full := filepath.Join(dir, "line.arrows")
	s, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if err := ingest.WriteSamples(full, s); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(full)
	if err != nil {
		t.Fatal(err)
	}
	eos := []byte{0xff, 0xff, 0xff, 0xff, 0, 0, 0, 0}
	if len(b) < 8 || string(b[len(b)-8:]) != string(eos) {
		t.Fatalf("the stream does not end with the marker: % x", b[max(0, len(b)-8):])
	}
	cut := filepath.Join(dir, "cut.arrows")
	if err := os.WriteFile(cut, b[:len(b)-8], 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.csv")
	if code, _, errOut := cli(t, "convert", cut, out); code == 0 || !strings.Contains(errOut, "end-of-stream") {
		t.Fatalf("exit %d, %q: want a refusal", code, errOut)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused conversion left %s", out)
	}
	code, _, errOut := cli(t, "convert", "--allow-unterminated", cut, out)
	if code != 0 || !strings.Contains(errOut, "warning:") || !strings.Contains(errOut, "end-of-stream") {
		t.Fatalf("exit %d, %q: want the rows with a warning", code, errOut)
	}
	got, err := ingest.ReadSamples(out)
	if err != nil {
		t.Fatal(err)
	}
	if got.Len() != s.Len() {
		t.Errorf("%d rows, want %d", got.Len(), s.Len())
	}
}

// reordered returns the rows of s (time, position, field and group) in the
// given order.
func reordered(s *ingest.Samples, order []int) *ingest.Samples {
	re := *s
	pick := func(v []float64) []float64 {
		out := make([]float64, len(order))
		for k, i := range order {
			out[k] = v[i]
		}
		return out
	}
	re.Time, re.X, re.Y, re.Z, re.Bx, re.By, re.Bz = pick(s.Time), pick(s.X), pick(s.Y), pick(s.Z), pick(s.Bx), pick(s.By), pick(s.Bz)
	re.Group = make([]string, len(order))
	for k, i := range order {
		re.Group[k] = s.Group[i]
	}
	return &re
}
