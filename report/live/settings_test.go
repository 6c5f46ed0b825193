package live

import (
	"encoding/json"
	"log/slog"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/calibrate"
)

// Two workers on one broker whose site files give fenwick-lane different
// max_current (1035 and 150 A, as a site file updated on one host and
// not yet on the other): each heartbeat carries the asset's settings
// digest, each worker logs a WARN naming the asset and both digests, and
// the asset endpoint shows the thresholds in force, the digest and the
// other worker. Before, the heartbeat carried the asset names only and
// nothing was said: the alarms depended on which worker held the lease.
func TestSettingsDifferWarned(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	siteA := testSite(t, testSiteText)
	siteB := testSite(t, strings.Replace(testSiteText, "max_current = 1035", "max_current = 150", 1))
	logsA, logsB := &lockedBuffer{}, &lockedBuffer{}
	a, stopA := h.runConfig(t, Config{Site: siteA, Worker: "wa", NewEstimator: newMean, Logger: slog.New(slog.NewTextHandler(logsA, nil))}, "wa")
	_, stopB := h.runConfig(t, Config{Site: siteB, Worker: "wb", NewEstimator: newMean, HTTP: "-", Logger: slog.New(slog.NewTextHandler(logsB, nil))}, "wb")
	dA, dB := settingsDigest(siteA.Asset("fenwick-lane")), settingsDigest(siteB.Asset("fenwick-lane"))
	if dA == dB || len(dA) != settingsDigestLen {
		t.Fatalf("digests %q and %q: want two different %d-digit digests for different max_current", dA, dB, settingsDigestLen)
	}
	for _, l := range []struct {
		logs        *lockedBuffer
		ours, other string
	}{{logsA, dA, dB}, {logsB, dB, dA}} {
		waitFor(t, 20*time.Second, "the WARN of other settings", func() bool {
			for _, line := range strings.Split(l.logs.String(), "\n") {
				if strings.Contains(line, "level=WARN") && strings.Contains(line, "other settings") && strings.Contains(line, "asset=fenwick-lane") &&
					strings.Contains(line, "settings_digest="+l.ours) && strings.Contains(line, "other_settings_digest="+l.other) {
					return true
				}
			}
			return false
		})
	}
	var info AssetInfo
	get := func() {
		r := &running{svc: a}
		_, body := apiRequest(t, r, "GET", "/api/v1/assets/fenwick-lane")
		if err := json.Unmarshal([]byte(body), &info); err != nil {
			t.Fatalf("asset endpoint: %v: %s", err, body)
		}
	}
	get()
	if info.Thresholds == nil || info.Thresholds.MaxCurrent != 1035 || info.SettingsDigest != dA {
		t.Fatalf("asset endpoint: thresholds %+v digest %q; want max_current 1035 and digest %s", info.Thresholds, info.SettingsDigest, dA)
	}
	if len(info.SettingsDiffer) != 1 || info.SettingsDiffer[0].Worker != "wb" || info.SettingsDiffer[0].Digest != dB {
		t.Fatalf("asset endpoint: settings_differ %+v; want worker wb with digest %s", info.SettingsDiffer, dB)
	}
	if err := stopB(); err != nil {
		t.Fatal(err)
	}
	if err := stopA(); err != nil {
		t.Fatal(err)
	}
}

// The WARN comes once per change: the same other digest seen at every
// lease round is not logged again; a new digest from that worker is, and
// one that agrees again, then differs again, is. Workers of an earlier
// version (no digests) are not judged.
func TestSettingsDifferWarnedOncePerChange(t *testing.T) {
	logs := &lockedBuffer{}
	site := testSite(t, testSiteText)
	s := &Service{site: site, id: "wa", log: slog.New(slog.NewTextHandler(logs, nil)),
		digests: map[string]string{"fenwick-lane": settingsDigest(site.Asset("fenwick-lane"))}}
	ours := s.digests["fenwick-lane"]
	beat := func(d string) map[string]workerBeat {
		return map[string]workerBeat{"wa": {Settings: s.digests}, "old": {Assets: []string{"fenwick-lane"}},
			"wb": {Assets: []string{"fenwick-lane"}, Settings: map[string]string{"fenwick-lane": d}}}
	}
	count := func() int { return strings.Count(logs.String(), "other settings") }
	for i, step := range []struct {
		theirs string
		want   int
	}{{"aaaaaaaaaaaa", 1}, {"aaaaaaaaaaaa", 1}, {"aaaaaaaaaaaa", 1}, {"bbbbbbbbbbbb", 2}, {"bbbbbbbbbbbb", 2},
		{ours, 2}, {ours, 2}, {"bbbbbbbbbbbb", 3}} {
		differ := s.compareSettings(beat(step.theirs))
		if got := count(); got != step.want {
			t.Fatalf("round %d (other digest %s): %d WARNs so far, want %d:\n%s", i, step.theirs, got, step.want, logs.String())
		}
		if same := step.theirs == ours; same != (len(differ["fenwick-lane"]) == 0) {
			t.Fatalf("round %d: differ %+v with other digest %s (ours %s)", i, differ, step.theirs, ours)
		}
	}
}

// The digest changes with a calibration file's contents at the same path
// (a new calibration written over the old one), with a sensor's position
// and with a conductor's own limit, and not with the description.
func TestSettingsDigestCovers(t *testing.T) {
	dir := t.TempDir()
	cal := filepath.Join(dir, "s0.json")
	write := func(off float64) {
		c := calibrate.FromOffset(calibrate.MethodZero, &calibrate.OffsetResult{Offset: [3]float64{off, 0, 0}, Determined: [3]bool{true, true, true}})
		if err := c.Save(cal); err != nil {
			t.Fatal(err)
		}
	}
	write(250)
	base := testSite(t, strings.Replace(testSiteText, `name = "s0"`, `name = "s0"
  calibration = "`+cal+`"`, 1)).Asset("fenwick-lane")
	d0 := settingsDigest(base)
	other := *base
	other.Description = "another description"
	if settingsDigest(&other) != d0 {
		t.Error("the description changed the digest")
	}
	sensors := append([]SensorConfig(nil), base.Sensors...)
	sensors[1].Position[2] = 0.4
	other = *base
	other.Sensors = sensors
	if settingsDigest(&other) == d0 {
		t.Error("a sensor's position did not change the digest")
	}
	conds := append([]ConductorConfig(nil), base.Conductors...)
	v := 90.0
	conds[0].MaxCurrent = &v
	other = *base
	other.Conductors = conds
	if settingsDigest(&other) == d0 {
		t.Error("a conductor's max_current did not change the digest")
	}
	write(260)
	if settingsDigest(base) == d0 {
		t.Error("a calibration file rewritten at the same path did not change the digest")
	}
}
