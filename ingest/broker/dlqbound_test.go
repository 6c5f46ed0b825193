package broker

import (
	"context"
	"errors"
	"strconv"
	"testing"
	"time"
)

// Every refused message was stored whole in UC_DLQ, which had no byte
// bound: refused data (a log replayed twice, a gateway sending late data)
// filled the store that data_max_bytes was meant to protect, until the
// broker refused everything. With DeadLetterMaxBytes the dead letters keep
// at most that many bytes, new ones still taken and the oldest giving way;
// a payload longer than keep is cut to keep bytes, its size in a header.
func TestDeadLetterStreamBounded(t *testing.T) {
	ctx, js := brokerJS(t)
	const limit = 256 << 10
	stores, err := Setup(ctx, js, StreamSettings{DeadLetterMaxBytes: limit})
	if err != nil {
		t.Fatal(err)
	}
	if stores.DeadLetterMaxBytes != limit {
		t.Errorf("applied bound %d, want %d", stores.DeadLetterMaxBytes, limit)
	}
	payload := make([]byte, 16<<10)
	const n = 64 // 1 MiB, four times the bound
	for i := 1; i <= n; i++ {
		if err := DeadLetter(ctx, js, ReasonLate, "uc.data.kestrel-moor.km-1", uint64(i), payload, 0, errors.New("late")); err != nil {
			t.Fatalf("dead letter %d refused: %v", i, err)
		}
	}
	st, info := streamInfo(t, ctx, js, StreamDeadLetter)
	if info.State.Bytes > limit || info.State.LastSeq != n || info.State.FirstSeq <= 1 {
		t.Errorf("dead letters hold %d bytes, sequences %d to %d; want at most %d bytes ending at %d, the first ones discarded",
			info.State.Bytes, info.State.FirstSeq, info.State.LastSeq, limit, n)
	}
	if info.Config.MaxAge != DeadLetterMaxAge {
		t.Errorf("dead letters kept %v, want %v", info.Config.MaxAge, DeadLetterMaxAge)
	}
	// An oversized message keeps its first keep bytes.
	big := make([]byte, 40000)
	if err := DeadLetter(ctx, js, ReasonOversized, "uc.data.kestrel-moor.km-1", n+1, big, 1000, errors.New("too big")); err != nil {
		t.Fatal(err)
	}
	m, err := st.GetLastMsgForSubject(ctx, DeadLetterSubject(ReasonOversized))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Data) != 1000 || m.Header.Get(HeaderTruncated) != strconv.Itoa(len(big)) {
		t.Errorf("oversized dead letter: %d bytes, %s %q; want 1000 bytes and the size %d", len(m.Data), HeaderTruncated, m.Header.Get(HeaderTruncated), len(big))
	}
}

// Without a bound given, the dead letters get DefaultDeadLetterMaxBytes,
// or about a quarter of a store too small for four times that, leaving
// the rest for the other streams and buckets (a 64 MiB store could
// reserve a 64 MiB bound, and then no bucket could be made); a store too
// small for MinDeadLetterMaxBytes leaves them unbounded rather than
// failing to start.
func TestDeadLetterDefaultBoundFitsStore(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	for _, tc := range []struct {
		name      string
		store     int64
		def       int64 // StreamSettings.DeadLetterDefault
		lo, hi    int64
		unbounded bool
	}{
		{"store of 64 MiB", 64 << 20, 0, MinDeadLetterMaxBytes, 16 << 20, false},
		{"store of 2 GiB", 2 << 30, 0, DefaultDeadLetterMaxBytes, DefaultDeadLetterMaxBytes, false},
		{"store of 2 GiB, default of 8 MiB", 2 << 30, 8 << 20, 8 << 20, 8 << 20, false},
		{"store of 64 MiB, default of 1 GiB", 64 << 20, 1 << 30, MinDeadLetterMaxBytes, 16 << 20, false},
		{"store of 1 MiB", 1 << 20, 0, 0, 0, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: tc.store})
			_, js := connectJS(t, s.ClientURL(), Auth{})
			ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
			defer cancel()
			stores, err := Setup(ctx, js, StreamSettings{DeadLetterDefault: tc.def})
			if err != nil {
				t.Fatal(err)
			}
			got := stores.DeadLetterMaxBytes
			if tc.unbounded && got != 0 || !tc.unbounded && (got < tc.lo || got > tc.hi) {
				t.Errorf("dead-letter bound %d on a %d-byte store, want %d to %d (0: none)", got, tc.store, tc.lo, tc.hi)
			}
		})
	}
}

// serve processes starting together each run Setup. The default
// dead-letter bound is found by trying bounds, so for a moment their
// stream configurations differ, and a create racing another process's
// create of UC_DLQ was refused ("stream name already in use": a serve
// stopped at start in TestServeSurvivesSIGKILL). Setups run together all
// succeed and agree on the bound.
func TestSetupConcurrentStarts(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	for round := 0; round < 12; round++ {
		s := startTestServer(t, ServerConfig{MQTTPort: -1})
		const n = 6
		errs := make(chan error, n)
		bounds := make(chan int64, n)
		for range n {
			go func() {
				_, js := connectJS(t, s.ClientURL(), Auth{})
				ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
				defer cancel()
				st, err := Setup(ctx, js, StreamSettings{})
				if err == nil {
					bounds <- st.DeadLetterMaxBytes
				}
				errs <- err
			}()
		}
		for range n {
			if err := <-errs; err != nil {
				t.Fatalf("round %d: %v", round, err)
			}
		}
		first := <-bounds
		for range n - 1 {
			if b := <-bounds; b != first {
				t.Errorf("round %d: bounds %d and %d", round, first, b)
			}
		}
	}
}
