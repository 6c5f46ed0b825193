package broker

import (
	"context"
	"fmt"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// setupOn runs Setup against a broker started on dir with a store of
// maxStore bytes, giving Setup the store's size as serve does, and shuts
// the broker down again.
func setupOn(t *testing.T, dir string, maxStore int64, set StreamSettings) *Stores {
	t.Helper()
	s, err := StartServer(ServerConfig{StoreDir: dir, MQTTPort: -1, MaxStore: maxStore})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Shutdown()
	nc, js := connectJS(t, s.ClientURL(), Auth{})
	defer nc.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	set.StoreBytes = s.MaxStore()
	st, err := Setup(ctx, js, set)
	if err != nil {
		t.Fatal(err)
	}
	return st
}

// A default dead-letter bound found below its aim on a small store is
// found again when serve restarts on a larger store. It had been kept
// from the stream's mark: a 40 MB store gave 8 MiB, and the bound stayed
// 8 MiB after broker.store_max_bytes was raised to 2 GB (the serve before
// the mark found 256 MiB there); a store too small for any bound left the
// dead letters unbounded, and raising it as the warning advised changed
// nothing. A restart on a store of the same size keeps the bound found.
// Values: the package's own DefaultDeadLetterMaxBytes and
// MinDeadLetterMaxBytes; the stores are invented sizes.
func TestDeadLetterBoundFoundAgainOnLargerStore(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	for _, tc := range []struct {
		name         string
		small        int64
		smallBound   func(int64) bool
		smallWanted  string
		largerBound  int64
		sameStoreRun bool
	}{
		{"40 MB then 2 GB", 40_000_000, func(b int64) bool { return b > 0 && b < DefaultDeadLetterMaxBytes }, "a bound below the default", DefaultDeadLetterMaxBytes, true},
		{"10 MB (no bound) then 100 MB", 10_000_000, func(b int64) bool { return b == 0 }, "no bound", 0, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			first := setupOn(t, dir, tc.small, StreamSettings{DataMaxBytes: 8_000_000})
			if !tc.smallBound(first.DeadLetterMaxBytes) {
				t.Fatalf("on the small store: bound %d, want %s", first.DeadLetterMaxBytes, tc.smallWanted)
			}
			if tc.sameStoreRun {
				again := setupOn(t, dir, tc.small, StreamSettings{DataMaxBytes: 8_000_000})
				if again.DeadLetterMaxBytes != first.DeadLetterMaxBytes {
					t.Errorf("restart on the same store: bound %d, was %d", again.DeadLetterMaxBytes, first.DeadLetterMaxBytes)
				}
			}
			larger := int64(2 << 30)
			if tc.largerBound == 0 {
				larger = 100_000_000
			}
			got := setupOn(t, dir, larger, StreamSettings{DataMaxBytes: 8_000_000}).DeadLetterMaxBytes
			if tc.largerBound > 0 && got != tc.largerBound || tc.largerBound == 0 && got <= 0 {
				t.Errorf("after the store grew to %d bytes: bound %d (was %d), want %s", larger, got, first.DeadLetterMaxBytes,
					map[bool]string{true: fmt.Sprint(tc.largerBound), false: "a bound"}[tc.largerBound > 0])
			}
		})
	}
}

// A bound found below its aim by a Setup that does not know the store's
// size (a cluster) is taken by Setups started with it, but found again by
// one started later: a mark of that kind written long ago is probed again.
func TestDeadLetterOldMarkBelowAimFoundAgain(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 2 << 30})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	// The stream as a Setup on a smaller store left it an hour ago.
	cfg := jetstream.StreamConfig{Name: StreamDeadLetter, Subjects: []string{DeadLetterPrefix + ".>"}, Storage: jetstream.FileStorage,
		MaxAge: DeadLetterMaxAge, MaxBytes: 8 << 20, Discard: jetstream.DiscardOld,
		Metadata: map[string]string{deadLetterBoundKey: fmt.Sprintf("%d %d %d %d 0", 8<<20, DefaultDeadLetterMaxBytes, MinDeadLetterMaxBytes, time.Now().Add(-time.Hour).Unix())}}
	if _, err := js.CreateStream(ctx, cfg); err != nil {
		t.Fatal(err)
	}
	st, err := Setup(ctx, js, StreamSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if st.DeadLetterMaxBytes != DefaultDeadLetterMaxBytes {
		t.Errorf("bound %d, want %d: the store has room for it now", st.DeadLetterMaxBytes, DefaultDeadLetterMaxBytes)
	}
}

// After a serve with broker.dlq_max_bytes, a serve without it starts at
// once: it had waited 10 s in silence, taking the stream (left unmarked by
// the given bound) for one another serve was probing. It says the bound
// it replaces was given, so serve can warn that processes sharing the
// broker with different settings replace each other's bound.
func TestDeadLetterGivenThenDefault(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 2 << 30})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	var mu sync.Mutex
	var waited []string
	notify := func(msg string) {
		mu.Lock()
		waited = append(waited, msg)
		mu.Unlock()
	}
	given, err := Setup(ctx, js, StreamSettings{DeadLetterMaxBytes: 50_000_000, Notify: notify})
	if err != nil {
		t.Fatal(err)
	}
	if given.DeadLetterMaxBytes != 50_000_000 || given.DeadLetterReplaced != nil {
		t.Fatalf("given bound: %d, replaced %+v", given.DeadLetterMaxBytes, given.DeadLetterReplaced)
	}
	def, err := Setup(ctx, js, StreamSettings{Notify: notify})
	if err != nil {
		t.Fatal(err)
	}
	if len(waited) > 0 {
		t.Errorf("the default Setup waited for another process: %q", waited)
	}
	if def.DeadLetterMaxBytes != DefaultDeadLetterMaxBytes {
		t.Errorf("default bound %d, want %d", def.DeadLetterMaxBytes, DefaultDeadLetterMaxBytes)
	}
	if r := def.DeadLetterReplaced; r == nil || r.Bound != 50_000_000 || !r.Given {
		t.Errorf("replaced %+v, want the given 50000000", r)
	}
	// A restart with the same settings replaces nothing.
	again, err := Setup(ctx, js, StreamSettings{Notify: notify})
	if err != nil {
		t.Fatal(err)
	}
	if again.DeadLetterReplaced != nil || again.DeadLetterMaxBytes != DefaultDeadLetterMaxBytes || len(waited) > 0 {
		t.Errorf("restart: bound %d, replaced %+v, waited %q", again.DeadLetterMaxBytes, again.DeadLetterReplaced, waited)
	}
}

// A cluster refuses a new stream it has no room for with "no suitable
// peers for placement, insufficient storage" (err_code 10005, nats-server
// 2.15.2's JSClusterNoPeersErrF with the placement's reason), which the
// dead-letter probe must take for a store too small, not a hard error nor
// a placement to wait for; a 10005 without that reason is neither.
func TestInsufficientStorageOnCluster(t *testing.T) {
	for _, tc := range []struct {
		err  error
		want bool
	}{
		{&jetstream.APIError{Code: 400, ErrorCode: 10005, Description: "no suitable peers for placement, insufficient storage"}, true},
		{&jetstream.APIError{Code: 400, ErrorCode: 10005, Description: "no suitable peers for placement"}, false},
		{&jetstream.APIError{Code: 500, ErrorCode: 10047, Description: "insufficient storage resources available"}, true},
		{fmt.Errorf("wrapped: %w", &jetstream.APIError{Code: 400, ErrorCode: 10005, Description: "no suitable peers for placement, insufficient storage"}), true},
	} {
		if got := insufficientStorage(tc.err); got != tc.want {
			t.Errorf("%v: %v, want %v", tc.err, got, tc.want)
		}
	}
	// retrying gives the refusal back at once instead of trying again.
	tries := 0
	err := retrying(context.Background(), func(context.Context) error {
		tries++
		return &jetstream.APIError{Code: 400, ErrorCode: 10005, Description: "no suitable peers for placement, insufficient storage"}
	})
	if err == nil || tries != 1 {
		t.Errorf("retrying: %d tries, error %v", tries, err)
	}
}
