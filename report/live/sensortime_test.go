package live

import (
	"context"
	"fmt"
	"io"
	"math"
	"net/http"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// The floor is 2000-01-01T00:00:00Z in Unix seconds: by the POSIX
// "Seconds Since the Epoch" formula (IEEE Std 1003.1, Base Definitions
// 4.16), 30 years from 1970 holding 7 leap days give 10957 days of
// 86400 s, 946684800 s.
func TestMinSensorTime(t *testing.T) {
	if want := int64(10957 * 86400); minSensorTime != want {
		t.Errorf("minSensorTime %d, want %d", minSensorTime, want)
	}
	if got := time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC).Unix(); got != minSensorTime {
		t.Errorf("2000-01-01 is %d, minSensorTime %d", got, minSensorTime)
	}
}

// Sample times that cannot be Unix seconds from a working clock are
// refused, with the reason; plausible ones, old or recent, pass.
func TestCheckTimes(t *testing.T) {
	stored := time.Date(2026, 12, 2, 15, 0, 0, 0, time.UTC)
	now := float64(stored.Unix())
	cases := []struct {
		name string
		t0   float64
		n    int
		want string // "" accepted
	}{
		{"now", now, 100, ""},
		{"a log from 2001 replayed with its own times", float64(time.Date(2001, 3, 1, 0, 0, 0, 0, time.UTC).Unix()), 100, ""},
		{"exactly 2000-01-01", minSensorTime, 1, ""},
		{"59 minutes ahead", now + 59*60, 100, ""},
		{"ends just past an hour ahead", now + 3600 - 0.5, 100, "(2026-12-02T16:00:00Z) is more than 1h0m0s ahead of the broker's clock (2026-12-02T15:00:00Z)"},
		{"epoch milliseconds", now * 1000, 100, "ahead of the broker's clock (2026-12-02T15:00:00Z) (it reads as Unix milliseconds: times are Unix seconds)"},
		{"epoch microseconds", (now - 86400) * 1e6, 100, "(it reads as Unix microseconds: times are Unix seconds)"},
		{"1e300", 1e300, 1, "sample time 1e+300 (after the year 5000) is more than 1h0m0s ahead of the broker's clock (2026-12-02T15:00:00Z)"},
		{"time since power-up", 12.5, 100, "sample time 12.5 is before 2000-01-01T00:00:00Z"},
		{"negative", -1e300, 1, "before 2000-01-01"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b := mkBatch(tc.t0, 100, tc.n, 0)
			err := checkTimes("uc.data.fenwick-lane.fl-w1", b, stored, time.Hour)
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("refused: %v", err)
			case tc.want != "" && err == nil:
				t.Errorf("accepted, want an error with %q", tc.want)
			case tc.want != "" && !strings.Contains(err.Error(), tc.want):
				t.Errorf("error %q lacks %q", err, tc.want)
			}
		})
	}
}

// A time beyond the window-index range is refused by the assembler itself
// before it changes anything, so the sensor's next batch is still in order.
func TestAssemblerOutOfRange(t *testing.T) {
	a := newAssembler(500*time.Millisecond, 0, 1)
	now := time.Unix(0, 0)
	for _, tt := range []float64{1e300, -1e300, 1e16} {
		if res, _ := a.add(0, 1, mkBatch(tt, 1000, 1, 0), now); res != outOfRange {
			t.Errorf("t = %g: %v, want outOfRange", tt, res)
		}
	}
	if !math.IsInf(a.water[0], -1) || len(a.open) != 0 || !a.arrival.IsZero() {
		t.Fatalf("refused batches changed the state: water %v, %d open, arrival %v", a.water[0], len(a.open), a.arrival)
	}
	if res, _ := a.add(0, 2, mkBatch(t0, 1000, 10, 0), now); res != added {
		t.Fatalf("next correct batch: %v, want added", res)
	}
	if k := a.open[0].idx; k != int64(t0/0.5) {
		t.Errorf("window %d, want %d", k, int64(t0/0.5))
	}
}

// Reviewer's case: a batch in epoch milliseconds (or at 1e300, or from a
// clock that starts at zero) is dead-lettered as malformed with the
// reason, and the sensor's later correct batches are processed: every
// window has one estimate, none out of order.
func TestImplausibleTimesDeadLettered(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	h.publish(0, 1)
	ms := fmt.Sprintf(`{"t0":%d,"rate":100,"bx":[1,2,3],"by":[1,2,3],"bz":[1,2,3]}`, int64((t0+1)*1000))
	bad := map[string]string{
		ms: "(it reads as Unix milliseconds: times are Unix seconds)",
		`{"t0":1e300,"rate":1000,"bx":[1],"by":[1],"bz":[1]}`: "ahead of the broker's clock",
		`{"time":[3.5,3.6],"bx":[1,2],"by":[1,2],"bz":[1,2]}`: "before 2000-01-01",
	}
	for payload := range bad {
		if _, err := h.js.Publish(context.Background(), "uc.data.fenwick-lane.s0", []byte(payload)); err != nil {
			t.Fatal(err)
		}
	}
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "4 estimates", func() bool { return len(h.estimates()) >= 4 })
	checkExactlyOnce(t, h.estimates(), 4)

	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	st, err := h.js.Stream(ctx, broker.StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	found := map[string]bool{}
	for seq := info.State.FirstSeq; seq <= info.State.LastSeq && info.State.Msgs > 0; seq++ {
		m, err := st.GetMsg(ctx, seq)
		if err != nil {
			t.Fatal(err)
		}
		want, ok := bad[string(m.Data)]
		if !ok {
			t.Errorf("unexpected dead letter on %s: %s (%s)", m.Subject, m.Data, m.Header.Get(broker.HeaderError))
			continue
		}
		found[string(m.Data)] = true
		if m.Subject != broker.DeadLetterSubject(broker.ReasonMalformed) || m.Header.Get(broker.HeaderReason) != broker.ReasonMalformed {
			t.Errorf("%s: dead-lettered on %s with reason %q, want malformed", m.Data, m.Subject, m.Header.Get(broker.HeaderReason))
		}
		if e := m.Header.Get(broker.HeaderError); !strings.Contains(e, want) {
			t.Errorf("%s: error header %q lacks %q", m.Data, e, want)
		}
	}
	if len(found) != len(bad) {
		t.Errorf("%d of the %d implausible batches dead-lettered", len(found), len(bad))
	}
	resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if strings.Contains(string(body), `reason="out-of-order"`) {
		t.Error("correct batches after the implausible ones were refused as out of order")
	}
	for _, line := range strings.Split(string(body), "\n") {
		if v, ok := strings.CutPrefix(line, `uc_data_lag_seconds{asset="fenwick-lane"} `); ok {
			var lag float64
			fmt.Sscan(v, &lag)
			// The data are from 2025: the lag since the last window's end
			// is positive and years, not -1.8e12 s (a window dated in
			// milliseconds) or 9.2e18 s (an overflowed window index).
			if !(lag > 0 && lag < 1e9) {
				t.Errorf("data lag %v s", lag)
			}
		}
	}
	r.stop(t)
}
