package broker

import (
	"context"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// A serve joining a broker where a serve of an earlier version made the
// dead-letter stream a moment ago, with a bound and no mark (as those
// versions leave it), waited deadLetterMarkWait (10 s) logging "waiting
// up to 10s for the dead-letter bound another serve is finding" although
// nothing would ever mark it (review rv24d, finding 10). Only a stream made by a probe
// of this version (deadLetterProbeKey) is waited for now: Setup probes
// the older stream's bound at once and says nothing of waiting.
func TestDeadLetterOlderStreamNotWaitedFor(t *testing.T) {
	s, err := StartServer(ServerConfig{StoreDir: t.TempDir(), MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Shutdown()
	nc, js := connectJS(t, s.ClientURL(), Auth{})
	defer nc.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	// As a serve of an earlier version made it: its default bound, no
	// metadata of ours.
	if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: StreamDeadLetter, Subjects: []string{DeadLetterPrefix + ".>"},
		MaxAge: DeadLetterMaxAge, MaxBytes: DefaultDeadLetterMaxBytes, Discard: jetstream.DiscardOld}); err != nil {
		t.Fatal(err)
	}
	var mu sync.Mutex
	var told []string
	st, err := Setup(ctx, js, StreamSettings{Notify: func(msg string) {
		mu.Lock()
		told = append(told, msg)
		mu.Unlock()
	}})
	if err != nil {
		t.Fatal(err)
	}
	mu.Lock()
	defer mu.Unlock()
	if len(told) > 0 {
		t.Errorf("Setup waited for a mark an earlier version never writes: %q", told)
	}
	if st.DeadLetterMaxBytes != DefaultDeadLetterMaxBytes {
		t.Errorf("dead-letter bound %d, want the default %d on a store with room for it", st.DeadLetterMaxBytes, DefaultDeadLetterMaxBytes)
	}
	info, err := js.Stream(ctx, StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	if m := readDeadLetterMark(info.CachedInfo()); !m.ok {
		t.Errorf("the stream is not marked after Setup: %v", info.CachedInfo().Config.Metadata)
	}
}
