package live

import (
	"bytes"
	"errors"
	"log/slog"
	"strings"
	"testing"
)

// The dead letters had no byte bound and the embedded broker's store no
// setting: [broker] dlq_max_bytes and store_max_bytes reach them, and a
// data_max_bytes without a dlq_max_bytes aims the dead letters' bound at
// a quarter of it (at least four of the largest messages taken).
func TestSiteDeadLetterAndStoreBounds(t *testing.T) {
	site := func(broker string) (*Site, error) {
		return ParseSite("site.toml", []byte("[broker]\n"+broker+"\n"+minimalSite))
	}
	cases := []struct {
		broker                 string
		dlq, dlqDefault, store int64
	}{
		{"", 0, 0, 0}, // 0: the broker's default (see broker.StreamSettings)
		{"data_max_bytes = 400_000_000", 0, 100_000_000, 0},
		{"data_max_bytes = 15_000_000", 0, 4 << 20, 0}, // a quarter is less than 4 x 1 MiB
		{"dlq_max_bytes = 50_000_000\nstore_max_bytes = 2_000_000_000", 50_000_000, 0, 2_000_000_000},
	}
	for _, tc := range cases {
		s, err := site(tc.broker)
		if err != nil {
			t.Errorf("%q: %v", tc.broker, err)
			continue
		}
		if s.Broker.DLQMaxBytes != tc.dlq || s.dlqDefault() != tc.dlqDefault || s.Broker.StoreMaxBytes != tc.store {
			t.Errorf("%q: dlq_max_bytes %d (default %d), store_max_bytes %d; want %d (%d), %d",
				tc.broker, s.Broker.DLQMaxBytes, s.dlqDefault(), s.Broker.StoreMaxBytes, tc.dlq, tc.dlqDefault, tc.store)
		}
	}
	for _, bad := range []struct{ broker, want string }{
		{"dlq_max_bytes = 1_000_000", "four times service.max_message_bytes"},
		{"dlq_max_bytes = -1", "broker.dlq_max_bytes -1"},
		{"store_max_bytes = -5", "broker.store_max_bytes -5"},
	} {
		if _, err := site(bad.broker); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("%q: error %v, want one containing %q", bad.broker, err, bad.want)
		}
	}
}

// A full store was reported with advice that did not work: freeing disk
// space changes nothing while serve runs, as the embedded broker sizes its
// store at start. The ERROR line says to restart serve.
func TestStoreFullSaysRestart(t *testing.T) {
	var buf bytes.Buffer
	s := &Service{log: slog.New(slog.NewTextHandler(&buf, nil)), met: newMetrics()}
	s.noteStore(errors.New("nats: API error: code=503 err_code=10023 description=insufficient resources"))
	line := buf.String()
	for _, want := range []string{"level=ERROR", "store_max_bytes", "restart serve"} {
		if !strings.Contains(line, want) {
			t.Errorf("store-full log %q lacks %q", line, want)
		}
	}
}
