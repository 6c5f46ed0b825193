package broker

import (
	"context"
	"errors"
	"testing"
	"time"
)

// TestDeadLetterDefaultBoundTriesFloor checks that the default dead-letter
// bound tries the least bound itself before leaving the dead letters
// unbounded. Aimed at 100,000,000 bytes beside a 400,000,000-byte data
// bound on a 405,000,000-byte store (5,000,000 bytes left), the bounds
// tried halve from 400,000,000 through 6,250,000 to 3,125,000 and never
// land on 4 MiB: before, the dead letters were left unbounded (and serve
// advised setting broker.dlq_max_bytes, which 4 MiB would have satisfied).
// Now 4 MiB, which the 5,000,000 bytes hold, is tried and kept. The
// broker's reservation rule (a stream's byte bound is reserved in the
// store) is nats-server's.
func TestDeadLetterDefaultBoundTriesFloor(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 405_000_000})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	stores, err := Setup(ctx, js, StreamSettings{DataMaxBytes: 400_000_000, DeadLetterDefault: 100_000_000})
	if err != nil {
		t.Fatal(err)
	}
	if stores.DeadLetterMaxBytes != MinDeadLetterMaxBytes {
		t.Errorf("dead-letter bound %d with 5,000,000 bytes left, want %d (0: none)", stores.DeadLetterMaxBytes, MinDeadLetterMaxBytes)
	}
}

// TestDeadLetterMinAndBoundError checks StreamSettings.DeadLetterMin and
// the error for a bound the store cannot reserve. With 3,000,000 bytes
// left (a 403,000,000-byte store, 400,000,000 for the data), the default
// least bound of 4 MiB does not fit and the dead letters are unbounded;
// a least bound of 2 MiB (a caller taking messages of up to 512 KiB) fits
// and is applied. A fixed bound of 5,000,000 bytes is refused with a
// *BoundError naming the stream and the bound.
func TestDeadLetterMinAndBoundError(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	for _, tc := range []struct {
		name      string
		set       StreamSettings
		want      int64
		boundErr  bool
		errStream string
	}{
		{"default least bound", StreamSettings{}, 0, false, ""},
		{"least bound of 2 MiB", StreamSettings{DeadLetterMin: 2 << 20}, 2 << 20, false, ""},
		{"fixed bound of 5,000,000", StreamSettings{DeadLetterMaxBytes: 5_000_000}, 0, true, StreamDeadLetter},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 403_000_000})
			_, js := connectJS(t, s.ClientURL(), Auth{})
			ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
			defer cancel()
			set := tc.set
			set.DataMaxBytes = 400_000_000
			stores, err := Setup(ctx, js, set)
			if tc.boundErr {
				var be *BoundError
				if !errors.As(err, &be) || be.Stream != tc.errStream || be.MaxBytes != set.DeadLetterMaxBytes {
					t.Fatalf("error %v, want a *BoundError for %s, %d bytes", err, tc.errStream, set.DeadLetterMaxBytes)
				}
				if !insufficientStorage(err) {
					t.Errorf("the *BoundError %v does not unwrap to the broker's refusal", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if stores.DeadLetterMaxBytes != tc.want {
				t.Errorf("dead-letter bound %d, want %d (0: none)", stores.DeadLetterMaxBytes, tc.want)
			}
		})
	}
}
