package live

import (
	"encoding/json"
	"io"
	"net/http"
	"strings"
	"testing"
)

// apiRequest sends method path to the running service and returns the
// response (body read) and its body.
func apiRequest(t *testing.T, r *running, method, path string) (*http.Response, string) {
	t.Helper()
	req, err := http.NewRequest(method, "http://"+r.svc.HTTPAddr()+path, nil)
	if err != nil {
		t.Fatal(err)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp, string(b)
}

// Bad requests are refused with a JSON {"error": ..., "kind": "usage"}
// whose message says what is
// wrong: an unknown alarm kind (naming the known ones), a format the
// alarms do not have, a parameter given empty, an unknown path (404) and
// a method the path does not take (405 with an Allow header, which RFC
// 9110 section 15.5.6 requires of a 405).
func TestAPIRefusals(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)

	cases := []struct {
		method, path string
		code         int
		says         []string // in the error message
	}{
		{"GET", "/api/v1/alarms?kind=bogus", 400, append([]string{`"bogus"`}, AlarmKinds...)},
		{"GET", "/api/v1/alarms?format=csv", 400, []string{`"csv"`, `"json"`}},
		{"GET", "/api/v1/alarms?format=xml", 400, []string{`"xml"`, `"json"`}},
		{"GET", "/api/v1/assets/fenwick-lane/history?from=", 400, []string{"from is empty"}},
		{"GET", "/api/v1/assets/fenwick-lane/history?to=&from=1", 400, []string{"to is empty"}},
		{"GET", "/api/v1/assets/fenwick-lane/history?limit=", 400, []string{"limit is empty"}},
		{"GET", "/api/v1/alarms?since=", 400, []string{"since is empty"}},
		{"GET", "/api/v1/alarms?from=", 400, []string{"from is empty"}},
		{"GET", "/api/v1/alarms?asset=", 400, []string{"asset is empty"}},
		{"GET", "/api/v1/alarms?kind=", 400, []string{"kind is empty"}},
		{"GET", "/api/v1/alarms?revisions=", 400, []string{"revisions is empty"}},
		{"GET", "/api/v1/assets/fenwick-lane/history?format=", 400, []string{"format is empty"}},
		{"GET", "/api/v1/nothing-here", 404, []string{"/api/v1/nothing-here"}},
		{"GET", "/api/v2/alarms", 404, []string{"/api/v2/alarms"}},
		{"DELETE", "/api/v1/assets", 405, []string{"DELETE", "GET"}},
		{"POST", "/api/v1/alarms", 405, []string{"POST", "GET"}},
		{"GET", "/api/v1/assets/fenwick-lane/restart", 405, []string{"GET", "POST"}},
	}
	for _, c := range cases {
		resp, body := apiRequest(t, r, c.method, c.path)
		if resp.StatusCode != c.code {
			t.Errorf("%s %s: %d %s, want %d", c.method, c.path, resp.StatusCode, body, c.code)
			continue
		}
		if ct := resp.Header.Get("Content-Type"); ct != "application/json" {
			t.Errorf("%s %s: Content-Type %q, want application/json", c.method, c.path, ct)
		}
		// The body is {"error": MESSAGE, "kind": KIND}: "error" the
		// string it always was, kind beside it (as the command line's
		// --json error sorts a failure), every member a string so that a
		// client decoding into a map of strings keeps working.
		var e map[string]string
		if err := json.Unmarshal([]byte(body), &e); err != nil || len(e) != 2 {
			t.Errorf("%s %s: body %q is not {\"error\", \"kind\"} (%v)", c.method, c.path, body, err)
			continue
		}
		msg := e["error"]
		if msg == "" || e["kind"] != "usage" {
			t.Errorf("%s %s: body %q, want a message and kind \"usage\"", c.method, c.path, body)
		}
		for _, s := range c.says {
			if !strings.Contains(msg, s) {
				t.Errorf("%s %s: error %q does not say %q", c.method, c.path, msg, s)
			}
		}
		if c.code == 405 {
			allow := resp.Header.Get("Allow")
			if !strings.Contains(allow, c.says[1]) || strings.Contains(allow, c.method) {
				t.Errorf("%s %s: Allow %q, want it to list %s and not %s", c.method, c.path, allow, c.says[1], c.method)
			}
		}
	}

	// What is still accepted: every known kind, format=json, parameters
	// left out, and the routes that exist.
	for _, path := range []string{
		"/api/v1/alarms?kind=" + strings.Join(AlarmKinds, "&kind="),
		"/api/v1/alarms?kind=" + AlarmDegraded,
		"/api/v1/alarms?kind=" + AlarmOverCurrent + "&format=json",
		"/api/v1/alarms?from=1&to=2&limit=5",
		"/api/v1/assets/fenwick-lane/history?format=csv",
		"/api/v1/assets",
	} {
		if resp, body := apiRequest(t, r, "GET", path); resp.StatusCode != 200 {
			t.Errorf("GET %s: %d %s, want 200", path, resp.StatusCode, body)
		}
	}
	for _, k := range AlarmKinds {
		if resp, body := apiRequest(t, r, "GET", "/api/v1/alarms?kind="+k); resp.StatusCode != 200 || strings.TrimSpace(body) != "[]" {
			t.Errorf("GET /api/v1/alarms?kind=%s: %d %s, want 200 []", k, resp.StatusCode, body)
		}
	}
}
