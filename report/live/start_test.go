package live

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// startSite is testSiteText with a [service] start (when service is not
// empty) and an asset start (when asset is not empty).
func startSite(service, asset string) string {
	s := testSiteText
	if service != "" {
		s = strings.Replace(s, "[service]\n", "[service]\nstart = \""+service+"\"\n", 1)
	}
	if asset != "" {
		s = strings.Replace(s, `window = "500ms"`, "window = \"500ms\"\nstart = \""+asset+"\"", 1)
	}
	return s
}

// checkWindows asserts exactly one estimate for each window lo..hi-1
// (counted from t0, as publish numbers them) with meanEstimator's known
// answer, and none for any other window.
func checkWindows(t *testing.T, ests []Estimate, lo, hi int64) {
	t.Helper()
	k0 := int64(math.Floor(t0/0.5 + 1e-7))
	seen := map[int64]int{}
	for _, e := range ests {
		k := e.Window - k0
		seen[k]++
		if k < lo || k >= hi {
			t.Errorf("estimate for window %d, want only windows %d..%d", k, lo, hi-1)
			continue
		}
		want := 1001 + 10*float64(k)
		if len(e.Conductors) != 1 || math.Abs(e.Conductors[0].Current-want) > 1e-6 {
			t.Errorf("window %d: estimate %+v, want current %v", k, e.Conductors, want)
		}
		if e.Samples != 150 || e.Sensors != 3 {
			t.Errorf("window %d used %d samples from %d sensors, want 150 from 3", k, e.Samples, e.Sensors)
		}
	}
	for k := lo; k < hi; k++ {
		if seen[k] != 1 {
			t.Errorf("window %d has %d estimates, want exactly 1", k, seen[k])
		}
	}
}

// readCheckpoint returns the asset's checkpoint, or nil when there is none.
func (h *harness) readCheckpoint(asset string) *checkpoint {
	h.t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	kv, err := h.js.KeyValue(ctx, broker.BucketState)
	if err != nil {
		h.t.Fatal(err)
	}
	e, err := kv.Get(ctx, checkpointKey(asset))
	if errors.Is(err, jetstream.ErrKeyNotFound) {
		return nil
	}
	if err != nil {
		h.t.Fatal(err)
	}
	var ck checkpoint
	if err := json.Unmarshal(e.Value(), &ck); err != nil {
		h.t.Fatal(err)
	}
	return &ck
}

// oldMessages is how many UC_DATA messages publish(0, 2) stores: 20
// rounds of 0.1 s batches from 3 sensors.
const oldMessages = 60

// An asset without a checkpoint and start "new" (here the service-wide
// default) skips the batches already stored (windows 0..3) and estimates
// the windows whose data arrives after its first start (4..7).
func TestStartNew(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	h.publish(0, 2) // windows 0..3, stored before the asset's first start
	r := h.start(testSite(t, startSite("new", "")), "w1")
	waitFor(t, 20*time.Second, "the first checkpoint", func() bool { return h.readCheckpoint("fenwick-lane") != nil })
	ck := h.readCheckpoint("fenwick-lane")
	if ck.ResumeSeq != oldMessages+1 || ck.Start != "new" {
		t.Errorf("first checkpoint resumes at %d with start %q, want %d and \"new\"", ck.ResumeSeq, ck.Start, oldMessages+1)
	}
	h.publish(2, 2) // windows 4..7
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	r.stop(t)
	checkWindows(t, h.estimates(), 4, 8)
}

// A duration counts back from the asset's first start, and an RFC 3339
// time is taken as it stands: either way only the batches stored from
// then on are read. Both sets of batches are stored before the start, so
// "new" would give nothing and "retained" all eight windows.
func TestStartFromTime(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	for _, tc := range []struct {
		name  string
		start func(mark time.Time) string
	}{
		{"duration", func(time.Time) string { return "24h" }},
		{"RFC 3339 time", func(mark time.Time) string { return mark.UTC().Format(time.RFC3339Nano) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h := newHarness(t)
			h.publish(0, 2) // windows 0..3
			time.Sleep(20 * time.Millisecond)
			mark := time.Now()
			time.Sleep(20 * time.Millisecond)
			h.publish(2, 2) // windows 4..7
			// The first start is placed 24 h after mark.
			defer func() { wallClock = time.Now }()
			wallClock = func() time.Time { return mark.Add(24 * time.Hour) }
			r := h.start(testSite(t, startSite("", tc.start(mark))), "w1")
			waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
			r.stop(t)
			checkWindows(t, h.estimates(), 4, 8)
			if ck := h.readCheckpoint("fenwick-lane"); ck == nil || ck.Start != tc.start(mark) {
				t.Errorf("checkpoint %+v, want one holding start %q", ck, tc.start(mark))
			}
		})
	}
}

// "retained" on the asset overrides a service-wide "new" and reads
// everything the stream holds, as an asset did before the option existed.
func TestStartRetained(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	h.publish(0, 2)
	r := h.start(testSite(t, startSite("new", "retained")), "w1")
	h.publish(2, 2)
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	r.stop(t)
	checkWindows(t, h.estimates(), 0, 8)
	if ck := h.readCheckpoint("fenwick-lane"); ck == nil || ck.Start != "" {
		t.Errorf("checkpoint %+v, want one without a recorded start", ck)
	}
}

// Once an asset has a checkpoint the start option is ignored: batches
// stored while the service was down (windows 4..7) are read after a
// restart with start "new" exactly as without it.
func TestStartCheckpointWins(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 2)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	r.stop(t)
	h.publish(2, 2) // stored while no worker runs
	r = h.start(testSite(t, startSite("new", "new")), "w2")
	waitFor(t, 30*time.Second, "8 estimates", func() bool { return len(h.estimates()) >= 8 })
	r.stop(t)
	checkWindows(t, h.estimates(), 0, 8)
}

// The start is resolved once, at the first start, and kept in the first
// checkpoint: a service stopped before any new data arrives resumes from
// that place, so batches stored while it was down are not lost to a
// second "new".
func TestStartPlacedOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	h.publish(0, 2)
	site := testSite(t, startSite("", "new"))
	r := h.start(site, "w1")
	waitFor(t, 20*time.Second, "the first checkpoint", func() bool { return h.readCheckpoint("fenwick-lane") != nil })
	r.stop(t)
	if ck := h.readCheckpoint("fenwick-lane"); ck.ResumeSeq != oldMessages+1 {
		t.Errorf("after a drain without data the checkpoint resumes at %d, want %d", ck.ResumeSeq, oldMessages+1)
	}
	h.publish(2, 2) // stored while no worker runs
	r = h.start(site, "w2")
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	r.stop(t)
	checkWindows(t, h.estimates(), 4, 8)
}

func TestParseStart(t *testing.T) {
	at := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
	first := time.Date(2026, 12, 2, 7, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		in   string
		kind StartKind
		set  broker.SourceSettings
	}{
		{"retained", StartRetained, broker.SourceSettings{All: true}},
		{"new", StartNew, broker.SourceSettings{}},
		{"24h", StartBack, broker.SourceSettings{From: first.Add(-24 * time.Hour)}},
		{"90m", StartBack, broker.SourceSettings{From: first.Add(-90 * time.Minute)}},
		{"2026-12-01T06:00:00Z", StartAt, broker.SourceSettings{From: at}},
		{"2026-12-01T07:00:00+01:00", StartAt, broker.SourceSettings{From: at}},
	} {
		s, err := ParseStart(tc.in)
		if err != nil {
			t.Errorf("ParseStart(%q): %v", tc.in, err)
			continue
		}
		if s.Kind() != tc.kind {
			t.Errorf("ParseStart(%q) is kind %d, want %d", tc.in, s.Kind(), tc.kind)
		}
		got := s.source(first)
		if got.All != tc.set.All || !got.From.Equal(tc.set.From) {
			t.Errorf("%q maps to %+v, want %+v", tc.in, got, tc.set)
		}
		back, err := ParseStart(s.String())
		if err != nil || back.source(first).From != got.From || back.Kind() != s.Kind() {
			t.Errorf("%q written as %q reads back as %+v, %v", tc.in, s.String(), back, err)
		}
	}
}

// Every asset gets a start: its own, else the service's, else "retained".
func TestStartDefaults(t *testing.T) {
	second := strings.Replace(strings.SplitN(testSiteText, "[[asset]]", 2)[1], `name = "fenwick-lane"`, `name = "kestrel-moor"`, 1)
	second = strings.Replace(second, `window = "500ms"`, "window = \"500ms\"\nstart = \"6h\"", 1)
	for _, tc := range []struct {
		service   string
		want1     string
		want2     string
		wantSvc   string
		withFirst string
	}{
		{"", "retained", "6h", "retained", ""},
		{"new", "new", "6h", "new", ""},
		{"new", "retained", "6h", "new", "retained"},
	} {
		text := startSite(tc.service, tc.withFirst) + "[[asset]]" + second
		s := testSite(t, text)
		if got := [3]string{s.Service.Start.String(), s.Assets[0].Start.String(), s.Assets[1].Start.String()}; got != [3]string{tc.wantSvc, tc.want1, tc.want2} {
			t.Errorf("service %q, first asset %q: starts %q, want %q", tc.service, tc.withFirst, got, [3]string{tc.wantSvc, tc.want1, tc.want2})
		}
	}
}

// A bad start is refused with the file, the line and column, the asset
// (or the service) and the value.
func TestStartRefused(t *testing.T) {
	two := testSiteText + "[[asset]]" + strings.Replace(strings.SplitN(testSiteText, "[[asset]]", 2)[1], `name = "fenwick-lane"`, `name = "kestrel-moor"`, 1)
	secondBad := strings.Replace(two, `window = "500ms"`, "window = \"500ms\"\nstart = \"12h\"", 1)
	i := strings.LastIndex(secondBad, `window = "500ms"`)
	secondBad = secondBad[:i] + "window = \"500ms\"\nstart = \"last tuesday\"" + secondBad[i+len(`window = "500ms"`):]
	for _, tc := range []struct {
		name, text, bad string
		want            []string
	}{
		{"word", startSite("", "yesterday"), `start = "yesterday"`, []string{`asset "fenwick-lane": start "yesterday": want "retained", "new", a duration`}},
		{"negative duration", startSite("", "-2h"), `start = "-2h"`, []string{`asset "fenwick-lane": start "-2h"`, "must be positive"}},
		{"zero duration", startSite("", "0s"), `start = "0s"`, []string{`start "0s"`, "must be positive"}},
		{"future time", startSite("", "2999-01-01T00:00:00Z"), `start = "2999`, []string{`asset "fenwick-lane": start "2999-01-01T00:00:00Z" is in the future`}},
		{"time without zone", startSite("", "2026-12-01T06:00:00"), `start = "2026`, []string{`start "2026-12-01T06:00:00": want`}},
		{"a number", strings.Replace(startSite("", ""), `window = "500ms"`, "window = \"500ms\"\nstart = 24", 1), "start = 24", []string{`asset "fenwick-lane": start "24": want`}},
		{"service default", startSite("sometime", ""), `start = "sometime"`, []string{`service: start "sometime": want`}},
		{"second asset", secondBad, `start = "last tuesday"`, []string{`asset "kestrel-moor": start "last tuesday"`}},
		{"second asset after an unquoted date-time", strings.Replace(secondBad, `start = "12h"`, "start = 2026-12-01T06:00:00Z", 1), `start = "last tuesday"`, []string{`asset "kestrel-moor": start "last tuesday"`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseSite("harrow-fen.toml", []byte(tc.text))
			if err == nil {
				t.Fatal("accepted")
			}
			line := strings.Count(tc.text[:strings.Index(tc.text, tc.bad)], "\n") + 1
			prefix := fmt.Sprintf("live: harrow-fen.toml:%d:", line)
			if !strings.HasPrefix(err.Error(), prefix) {
				t.Errorf("error %q, want it to start %q", err, prefix)
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
		})
	}
}

func ExampleParseStart() {
	for _, v := range []string{"retained", "new", "24h", "2026-12-01T06:00:00Z", "fortnight"} {
		s, err := ParseStart(v)
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Println(s)
	}
	// Output:
	// retained
	// new
	// 24h
	// 2026-12-01T06:00:00Z
	// start "fortnight": want "retained", "new", a duration such as "24h" or an RFC 3339 time such as "2026-12-01T06:00:00Z"
}

// The commented example site sets the service default and overrides it
// for one asset.
func TestExampleSiteStarts(t *testing.T) {
	s := harrowFen(t)
	if got := [3]string{s.Service.Start.String(), s.Asset("fenwick-lane").Start.String(), s.Asset("kestrel-moor").Start.String()}; got != [3]string{"retained", "retained", "1h"} {
		t.Errorf("starts (service, fenwick-lane, kestrel-moor) = %q", got)
	}
}

// A TOML date-time may be written unquoted.
func TestStartUnquotedDateTime(t *testing.T) {
	s := testSite(t, strings.Replace(testSiteText, `window = "500ms"`, "window = \"500ms\"\nstart = 2026-12-01T06:00:00Z", 1))
	a := s.Assets[0].Start
	if a.Kind() != StartAt || !a.source(time.Now()).From.Equal(time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)) {
		t.Errorf("start = 2026-12-01T06:00:00Z read as %v (kind %d)", a, a.Kind())
	}
}
