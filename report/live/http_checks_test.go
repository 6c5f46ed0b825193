package live

import (
	"encoding/json"
	"io"
	"net"
	"net/http"
	"strings"
	"testing"
)

// A parameter an endpoint does not take is refused, naming the ones it
// takes (a misspelt asset= listed every asset's alarms), and so is a time
// that is not finite.
func TestAPIUnknownParameters(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)
	for _, c := range []struct {
		path string
		says []string
	}{
		{"/api/v1/alarms?assets=fenwick-lane", []string{`unknown parameter "assets"`, "asset, kind"}},
		{"/api/v1/assets/fenwick-lane/history?since=1", []string{`unknown parameter "since"`, "from, to, limit, format, revisions"}},
		{"/api/v1/assets/fenwick-lane/history?from=inf", []string{`parameter from: "inf" is not a finite time`}},
		{"/api/v1/alarms?to=-Inf", []string{`parameter to: "-Inf" is not a finite time`}},
	} {
		resp, body := apiRequest(t, r, "GET", c.path)
		var e map[string]string
		if resp.StatusCode != 400 || json.Unmarshal([]byte(body), &e) != nil {
			t.Errorf("GET %s: %d %s, want 400 with a JSON error", c.path, resp.StatusCode, body)
			continue
		}
		for _, s := range c.says {
			if !strings.Contains(e["error"], s) {
				t.Errorf("GET %s: error %q does not say %q", c.path, e["error"], s)
			}
		}
	}
	if resp, body := apiRequest(t, r, "GET", "/api/v1/alarms?asset=fenwick-lane&kind=silent&from=1&to=2&since=1&limit=5&revisions=all&format=json"); resp.StatusCode != 200 {
		t.Errorf("every alarms parameter: %d %s", resp.StatusCode, body)
	}
}

// Listening off loopback with no service token, the 401 says that the
// server has none configured and where to set it.
func TestAPIOffLoopbackWithoutToken(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	text := strings.Replace(testSiteText, `token = "harrow-fen-test-token"`, `token_env = "UNDERCURRENT_FXLIVE_UNSET_TOKEN"`, 1)
	text = strings.Replace(text, `http = "127.0.0.1:0"`, `http = "0.0.0.0:0"`, 1)
	h := newHarness(t)
	r := h.start(testSite(t, text), "w1")
	defer r.stop(t)
	_, port, _ := net.SplitHostPort(r.svc.HTTPAddr())
	resp, body := apiRequestAt(t, "127.0.0.1:"+port, "/api/v1/assets")
	if resp != 401 || !strings.Contains(body, "no service token configured") || !strings.Contains(body, "$UNDERCURRENT_FXLIVE_UNSET_TOKEN") {
		t.Errorf("GET /api/v1/assets off loopback without a token: %d %s", resp, body)
	}
}

func apiRequestAt(t *testing.T, addr, path string) (int, string) {
	t.Helper()
	resp, err := http.Get("http://" + addr + path)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}
