package live

import (
	"bytes"
	"strings"
	"sync"
	"testing"
)

// lockedBuffer is a bytes.Buffer safe for a logger in another goroutine.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// TestDeadLetterWarningAdvisesRoomThatWorks checks serve's advice on a
// store too small for a bounded dead-letter stream against what the
// broker then does. The store is 10,000,000 bytes with data_max_bytes
// 8,000,000: the 2,000,000 bytes left are less than the least dead-letter
// bound, four times max_message_bytes (4 MiB by default). Before, the
// WARN advised setting broker.dlq_max_bytes, but that cannot be set below
// 4 MiB and a 4 MiB bound cannot be reserved: following the advice
// stopped serve. The WARN now names the room left and the least bound and
// advises a larger store or a smaller data_max_bytes; the run with
// dlq_max_bytes = 4 MiB shows that setting it fails (its error names the
// least value and what makes room), and the run with data_max_bytes
// lowered as advised (to 5,000,000, leaving 5,000,000) bounds the dead
// letters.
func TestDeadLetterWarningAdvisesRoomThatWorks(t *testing.T) {
	if testing.Short() {
		t.Skip("runs brokers and the service")
	}
	const store = 10_000_000
	run := func(brokerLines string) (logged string, err error) {
		t.Helper()
		return serveUntilBound(t, t.TempDir(), store, "store_max_bytes = 10_000_000\n"+brokerLines)
	}

	logged, err := run("data_max_bytes = 8_000_000")
	if err != nil {
		t.Fatalf("serve with 2,000,000 bytes left: %v", err)
	}
	warn := ""
	for _, ln := range strings.Split(logged, "\n") {
		if strings.Contains(ln, "level=WARN") && strings.Contains(ln, "dead-letter") {
			warn = ln
		}
	}
	if warn == "" {
		t.Fatalf("no WARN about the dead letters:\n%s", logged)
	}
	for _, want := range []string{"leaves 2000000 bytes", "at least 4194304", "four times service.max_message_bytes", "raise broker.store_max_bytes", "lower broker.data_max_bytes"} {
		if !strings.Contains(warn, want) {
			t.Errorf("WARN lacks %q:\n%s", want, warn)
		}
	}
	if strings.Contains(warn, "set broker.dlq_max_bytes") {
		t.Errorf("WARN advises setting broker.dlq_max_bytes, which cannot fit:\n%s", warn)
	}

	// Setting dlq_max_bytes to its least value stops serve: the advice
	// must not be to set it. The error says what can be done.
	_, err = run("data_max_bytes = 8_000_000\ndlq_max_bytes = 4_194_304")
	if err == nil {
		t.Fatal("serve started with a 4 MiB dead-letter bound on 2,000,000 bytes left")
	}
	for _, want := range []string{"UC_DLQ", "cannot be less than 4194304", "lower broker.data_max_bytes", "raise broker.store_max_bytes"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error lacks %q: %v", want, err)
		}
	}

	// Following the advice (a smaller data_max_bytes) bounds them.
	logged, err = run("data_max_bytes = 5_000_000")
	if err != nil {
		t.Fatalf("serve with data_max_bytes lowered: %v", err)
	}
	if !strings.Contains(logged, "dead letters kept up to a bound") || !strings.Contains(logged, "max_bytes=4194304") {
		t.Errorf("data_max_bytes lowered as advised: the dead letters are not bounded at 4194304:\n%s", logged)
	}
}
