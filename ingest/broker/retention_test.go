package broker

import (
	"context"
	"errors"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// Review rv29a, finding 6: the estimate and alarm streams had no max age
// nor byte bound (6.2 MB a day for one four-sensor asset with 10 s
// windows), so a full store refused new estimates instead of the oldest
// giving way. Setup now makes them with the defaults, or the bounds
// given, and the oldest discarded first.
func TestRetentionEstimateAlarmStreamsMadeBounded(t *testing.T) {
	ctx, js := brokerJS(t)
	if _, err := Setup(ctx, js, StreamSettings{}); err != nil {
		t.Fatal(err)
	}
	checkRetention(t, ctx, js, StreamEstimates, DefaultEstimateMaxAge, -1)
	checkRetention(t, ctx, js, StreamAlarms, DefaultAlarmMaxAge, -1)

	set := StreamSettings{EstimateMaxAge: 30 * 24 * time.Hour, EstimateMaxBytes: 1 << 20, AlarmMaxAge: 90 * 24 * time.Hour, AlarmMaxBytes: 256 << 10}
	if _, err := Setup(ctx, js, set); err != nil {
		t.Fatal(err)
	}
	checkRetention(t, ctx, js, StreamEstimates, set.EstimateMaxAge, set.EstimateMaxBytes)
	checkRetention(t, ctx, js, StreamAlarms, set.AlarmMaxAge, set.AlarmMaxBytes)
}

// A store made before the bounds (streams with neither max age nor byte
// bound, as every earlier serve made them) gets them on the next start,
// keeping the history it holds that is within them.
func TestRetentionAppliedToUnboundedStreams(t *testing.T) {
	ctx, js := brokerJS(t)
	for _, name := range []string{StreamEstimates, StreamAlarms} {
		prefix := EstimatePrefix
		if name == StreamAlarms {
			prefix = AlarmPrefix
		}
		// The configuration earlier versions gave (streams.go before the fix).
		if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: name, Subjects: []string{prefix + ".>"}, Duplicates: time.Hour, Storage: jetstream.MemoryStorage}); err != nil {
			t.Fatal(err)
		}
		if _, err := js.Publish(ctx, prefix+".kestrel-moor", []byte(`{"window":1}`)); err != nil {
			t.Fatal(err)
		}
	}
	_, before := streamInfo(t, ctx, js, StreamEstimates)
	if before.Config.MaxAge != 0 || before.Config.MaxBytes > 0 {
		t.Fatalf("the old stream was made with max age %v, max bytes %d; want none", before.Config.MaxAge, before.Config.MaxBytes)
	}
	if _, err := Setup(ctx, js, StreamSettings{Memory: true, AlarmMaxBytes: 1 << 20}); err != nil {
		t.Fatal(err)
	}
	checkRetention(t, ctx, js, StreamEstimates, DefaultEstimateMaxAge, -1)
	checkRetention(t, ctx, js, StreamAlarms, DefaultAlarmMaxAge, 1<<20)
	for _, name := range []string{StreamEstimates, StreamAlarms} {
		if _, info := streamInfo(t, ctx, js, name); info.State.Msgs != 1 {
			t.Errorf("%s holds %d messages after the update; want the 1 stored before", name, info.State.Msgs)
		}
	}
}

// Past the max age the oldest estimates are discarded (the broker's
// clock), and past the byte bound the oldest give way to new ones, which
// are still taken.
func TestRetentionOldEstimatesDropped(t *testing.T) {
	ctx, js := brokerJS(t)
	const limit = 16 << 10
	if _, err := Setup(ctx, js, StreamSettings{EstimateMaxBytes: limit, AlarmMaxAge: time.Second}); err != nil {
		t.Fatal(err)
	}
	payload := make([]byte, 1<<10)
	for i := 0; i < 64; i++ { // 64 KiB, four times the bound
		if _, err := js.Publish(ctx, EstimateSubject("kestrel-moor"), payload); err != nil {
			t.Fatalf("estimate %d refused: %v", i, err)
		}
	}
	_, info := streamInfo(t, ctx, js, StreamEstimates)
	if info.State.Bytes > limit || info.State.LastSeq != 64 || info.State.FirstSeq <= 1 {
		t.Errorf("estimates: %d bytes, sequences %d to %d; want at most %d bytes ending at 64, the first ones discarded",
			info.State.Bytes, info.State.FirstSeq, info.State.LastSeq, limit)
	}

	// The alarms' max age of 1 s: the first alarm goes, the stream takes
	// new ones after it.
	if _, err := js.Publish(ctx, AlarmSubject("kestrel-moor", "silent"), []byte(`{"window":1}`)); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(20 * time.Second)
	for {
		_, info := streamInfo(t, ctx, js, StreamAlarms)
		if info.State.Msgs == 0 && info.State.LastSeq == 1 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("alarms: %d messages, sequences %d to %d 20 s after the only one was stored with a max age of 1 s; want it discarded",
				info.State.Msgs, info.State.FirstSeq, info.State.LastSeq)
		}
		time.Sleep(50 * time.Millisecond)
	}
	if ack, err := js.Publish(ctx, AlarmSubject("kestrel-moor", "silent"), []byte(`{"window":2}`)); err != nil || ack.Sequence != 2 {
		t.Fatalf("alarm after the first was discarded: %v, %v; want sequence 2 stored", ack, err)
	}
}

// checkRetention fails unless stream name stands with max age age, byte
// bound maxBytes (-1: none) and the oldest messages discarded first.
func checkRetention(t *testing.T, ctx context.Context, js jetstream.JetStream, name string, age time.Duration, maxBytes int64) {
	t.Helper()
	_, info := streamInfo(t, ctx, js, name)
	c := info.Config
	if c.MaxAge != age || c.MaxBytes != maxBytes || c.Discard != jetstream.DiscardOld {
		t.Errorf("%s: max age %v, max bytes %d, discard %v; want %v, %d, %v", name, c.MaxAge, c.MaxBytes, c.Discard, age, maxBytes, jetstream.DiscardOld)
	}
	if c.Duplicates > age {
		t.Errorf("%s: duplicate window %v longer than the max age %v", name, c.Duplicates, age)
	}
}

// An estimate byte bound larger than the store can reserve stops Setup
// with a *BoundError naming the estimate stream, as the data and
// dead-letter bounds do.
func TestRetentionEstimateBoundTooLarge(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 64 << 20})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	_, err := Setup(ctx, js, StreamSettings{EstimateMaxBytes: 1 << 30})
	var be *BoundError
	if !errors.As(err, &be) || be.Stream != StreamEstimates || be.MaxBytes != 1<<30 {
		t.Fatalf("Setup with a 1 GiB estimate bound on a 64 MiB store: %v; want a *BoundError for %s", err, StreamEstimates)
	}
}
