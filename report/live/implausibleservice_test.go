package live

import (
	"bytes"
	"context"
	"io"
	"log/slog"
	"net/http"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"undercurrent/ingest/broker"
)

// syncBuffer is a bytes.Buffer safe for the service's goroutines.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// Implausible readings were taken silently. Through the service, with
// the site's noise given and a fit that leaves no residual at all (the
// test estimator: chi-square 0 on 2 degrees of freedom, as readings far
// smaller than the noise give), every window is published with quality
// "implausible", counted in uc_implausible_windows_total, and logged once
// at WARN, not per window; the implausible alarm is raised once, at the
// first window, and the later ones list it as ongoing.
func TestServiceMarksImplausibleWindows(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	site := testSite(t, strings.Replace(testSiteText, `window = "500ms"`, "window = \"500ms\"\nnoise = 2.0", 1))
	var logs syncBuffer
	svc, stop := h.runConfig(t, Config{Site: site, Worker: "w1", NewEstimator: newMean, Logger: slog.New(slog.NewTextHandler(&logs, nil))}, "w1")
	h.publish(0, 2)
	waitFor(t, 30*time.Second, "3 estimates", func() bool { return len(h.estimates()) >= 3 })
	resp, err := http.Get("http://" + svc.HTTPAddr() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	ests := h.estimates()
	for _, e := range ests {
		if e.Quality != "implausible" || len(e.Implausible) != 1 || !strings.Contains(e.Implausible[0], "reduced chi-square") {
			t.Errorf("window %d: quality %q, implausible %q; want implausible by its chi-square", e.Window, e.Quality, e.Implausible)
		}
	}
	// The estimates were read after the metrics: at least as many.
	counted := -1
	for _, l := range strings.Split(string(body), "\n") {
		if v, ok := strings.CutPrefix(l, `uc_implausible_windows_total{asset="fenwick-lane",check="chi2"} `); ok {
			counted, _ = strconv.Atoi(v)
		}
	}
	if counted < 3 || counted > len(ests) {
		t.Errorf("uc_implausible_windows_total for the chi2 check %d, want every implausible window counted (3 to %d)", counted, len(ests))
	}
	for i, e := range ests {
		n := 0
		for _, o := range e.Ongoing {
			if o.Kind == AlarmImplausible && o.Subject == checkChi2 {
				n = o.Windows
			}
		}
		if n != i+1 {
			t.Errorf("window %d: ongoing implausible chi2 for %d windows, want %d", e.Window, n, i+1)
		}
	}
	if n := strings.Count(logs.String(), "readings implausible"); n != 1 {
		t.Errorf("%d WARN lines for %d implausible windows, want 1 (logged when it begins)", n, len(ests))
	}
	alarms := 0
	ctx2, cancel2 := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel2()
	scan(ctx2, h.js, broker.StreamAlarms, broker.AlarmSubject("fenwick-lane", AlarmImplausible), func([]byte) bool { alarms++; return true })
	if alarms != 1 {
		t.Errorf("%d implausible alarms for %d implausible windows, want 1 (at the onset)", alarms, len(ests))
	}
}
