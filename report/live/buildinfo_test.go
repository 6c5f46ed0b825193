package live

import (
	"io"
	"net/http"
	"strings"
	"testing"
)

// /metrics names the running build: uc_build_info{version,revision} 1,
// from Config.Version and Config.Revision. Before, no metric told which
// build ran (rv24d finding 7).
func TestBuildInfoMetric(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	svc, stop := h.runConfig(t, Config{Site: testSite(t, testSiteText), Worker: "w1", NewEstimator: newMean,
		Version: "v0.0.0-test", Revision: "0123abcd+modified"}, "w1")
	resp, err := http.Get("http://" + svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	b, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if want := `uc_build_info{revision="0123abcd+modified",version="v0.0.0-test"} 1`; !strings.Contains(string(b), want) {
		t.Errorf("metrics lack %s", want)
	}
	if err := stop(); err != nil {
		t.Fatal(err)
	}
}
