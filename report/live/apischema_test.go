package live

import (
	"encoding/csv"
	"encoding/json"
	"net/http/httptest"
	"strings"
	"testing"
)

// TestEstimateJSONVersionAndNames: an estimate's JSON carries
// schema_version, the frequency under frequency_hz (the name the history
// CSV gives it and its own frequency_sigma_hz's unit) beside the
// deprecated frequency, its window's start and end as RFC 3339 UTC beside
// the Unix seconds, an ongoing condition's since as since_utc, and
// revision 0 written as the history CSV writes it (found in review: none
// of these were there). It reads back as it was written.
func TestEstimateJSONVersionAndNames(t *testing.T) {
	e := Estimate{Asset: "fenwick-lane", Window: 3529454400, Start: 1764727200, End: 1764727200.5, Mode: "ac",
		Frequency: 50, Conductors: []ConductorEstimate{}, Quality: "good", Closed: "complete", Worker: "w1",
		Ongoing: []OngoingAlarm{{Kind: AlarmOverCurrent, Subject: "L1", Since: 1764727190.25, Windows: 21, Value: 410}}}
	b, err := json.Marshal(e)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	// 1764727200 s is 2025-12-03T02:00:00Z (date -u -d @1764727200).
	want := map[string]any{"schema_version": float64(APISchemaVersion), "frequency_hz": 50.0, "frequency": 50.0,
		"start": 1764727200.0, "start_utc": "2025-12-03T02:00:00Z", "end_utc": "2025-12-03T02:00:00.5Z", "revision": 0.0}
	for k, v := range want {
		if m[k] != v {
			t.Errorf("%s = %v, want %v (JSON %s)", k, m[k], v, b)
		}
	}
	on := m["ongoing"].([]any)[0].(map[string]any)
	if on["since_utc"] != "2025-12-03T01:59:50.25Z" || on["since"] != 1764727190.25 {
		t.Errorf("ongoing %v: want since 1764727190.25 and since_utc 2025-12-03T01:59:50.25Z", on)
	}
	var back Estimate
	if err := json.Unmarshal(b, &back); err != nil || back.Frequency != 50 || back.Start != e.Start || back.Ongoing[0] != e.Ongoing[0] {
		t.Errorf("read back as %+v (%v)", back, err)
	}

	// A clock that is not Unix time (a replayed log's seconds from 0)
	// has no UTC strings.
	e.Start, e.End, e.Ongoing = 12, 12.5, nil
	b, _ = json.Marshal(e)
	if strings.Contains(string(b), "_utc") {
		t.Errorf("estimate at 12 s: %s, want no *_utc fields", b)
	}
}

// TestAlarmJSONVersion: an alarm's JSON carries schema_version, its
// window's start and end and its since as RFC 3339 UTC, and revision 0.
func TestAlarmJSONVersion(t *testing.T) {
	a := Alarm{Asset: "fenwick-lane", Kind: AlarmDegraded, Window: 7, Start: 1764727200, End: 1764727201,
		Cleared: true, Windows: 3, Since: 1764727197, Message: "fit good again"}
	b, err := json.Marshal(a)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	json.Unmarshal(b, &m)
	want := map[string]any{"schema_version": float64(APISchemaVersion), "start_utc": "2025-12-03T02:00:00Z",
		"end_utc": "2025-12-03T02:00:01Z", "since_utc": "2025-12-03T01:59:57Z", "revision": 0.0, "window": 7.0}
	for k, v := range want {
		if m[k] != v {
			t.Errorf("%s = %v, want %v (JSON %s)", k, m[k], v, b)
		}
	}
	var back Alarm
	if err := json.Unmarshal(b, &back); err != nil || back != a {
		t.Errorf("read back as %+v (%v), want %+v", back, err, a)
	}
	a.Since = 0
	if b, _ = json.Marshal(a); strings.Contains(string(b), "since") {
		t.Errorf("alarm without since: %s, want no since or since_utc", b)
	}
}

// TestAPIErrorKinds: every API error status is sorted into a kind as the
// command line's --json error sorts its failures, and the body stays a
// map of strings with the message under "error".
func TestAPIErrorKinds(t *testing.T) {
	for code, kind := range map[int]string{400: "usage", 404: "usage", 405: "usage", 409: "usage", 413: "usage",
		401: "auth", 403: "auth", 502: "upstream", 503: "unavailable", 500: "internal"} {
		rec := httptest.NewRecorder()
		httpError(rec, code, "what went wrong")
		var e map[string]string
		if err := json.Unmarshal(rec.Body.Bytes(), &e); err != nil || e["error"] != "what went wrong" || e["kind"] != kind || rec.Code != code {
			t.Errorf("status %d: %d %s (%v), want kind %q", code, rec.Code, rec.Body, err, kind)
		}
	}
}

// TestAssetWindowSeconds: an asset in the API gives its window as a
// number of seconds (window_s) and its configured start as start_policy,
// beside the deprecated window ("500ms") and start ("retained"), whose
// names mean a window index and a window start in estimates and alarms.
func TestAssetWindowSeconds(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)
	for _, path := range []string{"/api/v1/assets", "/api/v1/assets/fenwick-lane"} {
		resp, body := apiRequest(t, r, "GET", path)
		if resp.StatusCode != 200 {
			t.Fatalf("GET %s: %d %s", path, resp.StatusCode, body)
		}
		var a map[string]any
		if path == "/api/v1/assets" {
			var l []map[string]any
			if err := json.Unmarshal([]byte(body), &l); err != nil || len(l) == 0 {
				t.Fatalf("GET %s: %s (%v)", path, body, err)
			}
			a = l[0]
		} else if err := json.Unmarshal([]byte(body), &a); err != nil {
			t.Fatalf("GET %s: %s (%v)", path, body, err)
		}
		if a["window_s"] != 0.5 || a["window"] != "500ms" || a["start_policy"] != "retained" || a["start"] != "retained" {
			t.Errorf("GET %s: window %v window_s %v start %v start_policy %v, want 500ms, 0.5, retained, retained",
				path, a["window"], a["window_s"], a["start"], a["start_policy"])
		}
	}
}

// TestHistoryCSVUTCAndVersion: the history CSV ends with the window's
// start and end as RFC 3339 UTC (after every column it had, which keep
// their places) and carries its version in X-Uc-Schema-Version.
func TestHistoryCSVUTCAndVersion(t *testing.T) {
	e := Estimate{Asset: "depot", Mode: "dc", Quality: "good", Start: 1764727200, End: 1764727201,
		Conductors: []ConductorEstimate{{Name: "cable", Current: 320, CurrentSigma: 0.002}}}
	rec := httptest.NewRecorder()
	writeEstimatesCSV(rec, []Estimate{e, {Asset: "depot", Quality: "failed", Start: 1764727201, End: 1764727202}})
	rows, err := csv.NewReader(strings.NewReader(rec.Body.String())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	n := len(rows[0])
	if n != 38 || rows[0][2] != "start" || rows[0][n-2] != "start_utc" || rows[0][n-1] != "end_utc" {
		t.Fatalf("header %v: want 38 columns, start third, start_utc and end_utc last", rows[0])
	}
	for i, want := range [][2]string{{"2025-12-03T02:00:00Z", "2025-12-03T02:00:01Z"}, {"2025-12-03T02:00:01Z", "2025-12-03T02:00:02Z"}} {
		if r := rows[i+1]; len(r) != n || r[n-2] != want[0] || r[n-1] != want[1] {
			t.Errorf("row %d %v: want start_utc %s, end_utc %s", i+1, r, want[0], want[1])
		}
	}
	if v := rec.Header().Get(HeaderSchemaVersion); v != "1" {
		t.Errorf("%s %q, want 1", HeaderSchemaVersion, v)
	}
}
