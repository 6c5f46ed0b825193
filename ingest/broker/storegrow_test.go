package broker

import (
	"context"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// A store that filled the disk stayed full after space was freed, until
// serve was restarted: nats-server sizes a store without a bound once, at
// start, from the free disk. The embedded server now starts with that
// same bound set explicitly, and GrowStore raises it to what the disk
// space free now gives. The disk is placed (diskFree): 2 MiB free at
// start, a 1.5 MiB store, filled; then 14 MiB more once space is "freed".
func TestGrowStoreAfterSpaceFreed(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	// A disk of size bytes holding only the store.
	dir := t.TempDir()
	size := int64(2 << 20)
	was := diskFree
	diskFree = func(string) (int64, error) { return size - dirBytes(dir), nil }
	t.Cleanup(func() { diskFree = was })
	s := startTestServer(t, ServerConfig{MQTTPort: -1, StoreDir: dir})
	if got := s.ns.JetStreamConfig().MaxStore; got != (2<<20)/4*3 {
		t.Fatalf("store bound at start %d, want three quarters of the 2 MiB free", got)
	}
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: "FILL", Subjects: []string{"fill"}}); err != nil {
		t.Fatal(err)
	}
	payload := make([]byte, 32<<10)
	full := func() bool {
		_, err := js.Publish(ctx, "fill", payload)
		if err != nil && !strings.Contains(err.Error(), "insufficient resources") {
			t.Fatal(err)
		}
		return err != nil
	}
	for i := 0; !full(); i++ {
		if i > 100 {
			t.Fatal("a 1.5 MiB store took 100 messages of 32 KiB")
		}
	}
	if from, to, err := s.GrowStore(); err != nil || to != from {
		t.Fatalf("with no space freed: bound %d to %d, err %v; want unchanged", from, to, err)
	}
	size = 16 << 20 // space freed beside the store
	from, to, err := s.GrowStore()
	if err != nil {
		t.Fatal(err)
	}
	if !(to > from) || s.ns.JetStreamConfig().MaxStore != to {
		t.Fatalf("bound %d to %d (server: %d) once space was freed; want it raised", from, to, s.ns.JetStreamConfig().MaxStore)
	}
	if full() {
		t.Error("the store still refuses writes after its bound was raised")
	}
}

// A bound given in ServerConfig.MaxStore is the operator's: GrowStore
// leaves it.
func TestGrowStoreKeepsGivenBound(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1, MaxStore: 1 << 20})
	if from, to, err := s.GrowStore(); err != nil || to != from {
		t.Errorf("given bound moved from %d to %d (err %v)", from, to, err)
	}
	if got := s.ns.JetStreamConfig().MaxStore; got != 1<<20 {
		t.Errorf("store bound %d, want the 1 MiB given", got)
	}
}
