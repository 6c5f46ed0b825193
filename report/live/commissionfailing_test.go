package live

import (
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// A commissioning fit that misses the readings (a bend held as lines, a
// busbar) used to show nothing on the asset's endpoint and raise no alarm
// for twenty commissioning periods and more (rv22a: 121 tries, 496 s of
// readings, only a WARN per window in the log), then stop. The endpoint
// now says commissioning: "failing: <reason> (try N of at most M, ...)"
// from the first failed fit, and a commissioning alarm is raised once,
// at the third try (commissionAlarmAfter: one more commissioning period
// of 1 s of 0.5 s windows), while the asset goes on trying.
func TestCommissionFailingShownAndAlarmedEarly(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	var calls atomic.Int64
	svc, stop := runStopSite(t, h, misfitCommissioner{&calls})
	defer stop()
	info := func() AssetInfo { return fenwickInfo(t, svc) }
	// One second, two windows: the first try.
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "the first try", func() bool { return calls.Load() >= 1 })
	waitFor(t, 30*time.Second, "the endpoint's commissioning state", func() bool { return info().Commissioning != "" })
	if ai := info(); !strings.HasPrefix(ai.Commissioning, "failing: the 1 fitted lines miss") || !strings.Contains(ai.Commissioning, "try 1 of at most 40") || ai.Stopped != "" {
		t.Errorf("after the first try: commissioning %q, stopped %q; want failing at try 1 of 40, not stopped", ai.Commissioning, ai.Stopped)
	}
	if n := len(commissioningAlarms(h)); n != 0 {
		t.Errorf("%d commissioning alarms after the first try, want none yet", n)
	}
	// Three seconds more, six windows: tries 2 to 7; the alarm at the
	// third, once.
	h.publish(1, 3)
	waitFor(t, 30*time.Second, "seven tries", func() bool { return calls.Load() >= 7 })
	waitFor(t, 30*time.Second, "the endpoint at try 7", func() bool { return strings.Contains(info().Commissioning, "try 7 of") })
	alarms := commissioningAlarms(h)
	if len(alarms) != 1 || !strings.Contains(alarms[0].Message, "failed in each of 3 tries") || !strings.Contains(alarms[0].Message, "stopped after 40 tries") ||
		!strings.Contains(alarms[0].Message, `kind = "segment"`) {
		t.Errorf("commissioning alarms %+v; want one, at the third try, saying when it stops and naming segments", alarms)
	}
	if ai := info(); ai.Stopped != "" {
		t.Errorf("stopped %q after 7 tries, want still trying", ai.Stopped)
	}
	stop()
}
