package live

import (
	"context"
	"errors"
	"io"
	"log/slog"
	"net/http"
	"strings"
	"testing"
	"time"
)

// Many refused messages of one reason are logged as one line with the
// first's error and then one line with how many more were refused
// ("29 refused as unknown-sensor in the last minute", with the first
// and last sequences and the last error), not as one WARN per message
// (rv24d t4: 13,620 "message refused" lines in 23 s from one replay).
// The counters still count every one. Before, the log held 30 lines.
func TestRefusedMessagesLoggedTogether(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	logs := &lockedBuffer{}
	svc, stop := h.runConfig(t, Config{Site: testSite(t, testSiteText), Worker: "w1", NewEstimator: newMean,
		Logger: slog.New(slog.NewTextHandler(logs, nil))}, "w1")
	const n = 30
	for i := 0; i < n; i++ {
		if _, err := h.js.Publish(context.Background(), "uc.data.fenwick-lane.s9", []byte(`{"time":[1],"bx":[1],"by":[1],"bz":[1]}`)); err != nil {
			t.Fatal(err)
		}
	}
	metrics := func() string {
		resp, err := http.Get("http://" + svc.HTTPAddr() + "/metrics")
		if err != nil {
			return ""
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		return string(b)
	}
	waitFor(t, 30*time.Second, "30 dead letters counted", func() bool {
		return strings.Contains(metrics(), `uc_dead_letters_total{reason="unknown-sensor"} 30`)
	})
	if err := stop(); err != nil && !errors.Is(err, context.Canceled) {
		t.Fatal(err)
	}
	var single, together []string
	for _, line := range strings.Split(logs.String(), "\n") {
		switch {
		case strings.Contains(line, "message refused"):
			single = append(single, line)
		case strings.Contains(line, "refused as unknown-sensor"):
			together = append(together, line)
		}
	}
	if len(single) != 1 || !strings.Contains(single[0], `sensor \"s9\"`) {
		t.Errorf("%d single lines, want 1 with the first's error:\n%s", len(single), strings.Join(single, "\n"))
	}
	if len(together) != 1 || !strings.Contains(together[0], "29 refused as unknown-sensor in the last minute") ||
		!strings.Contains(together[0], "count=29") || !strings.Contains(together[0], "seq_first=") || !strings.Contains(together[0], "seq_last=") {
		t.Errorf("lines logged together: %q; want one of 29 refused as unknown-sensor in the last minute with the sequences", together)
	}
}
