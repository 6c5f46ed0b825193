package broker

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// breakStreamDir puts a plain file where the embedded store keeps the
// message blocks of stream, so that the next block the stream starts
// cannot be created (ENOTDIR, even for root); restore puts the directory
// back.
func breakStreamDir(t testing.TB, storeDir, stream string) (restore func()) {
	t.Helper()
	dirs, _ := filepath.Glob(filepath.Join(storeDir, "jetstream", "*", "streams", stream, "msgs"))
	if len(dirs) != 1 {
		t.Fatalf("message directory of %s under %s: found %v", stream, storeDir, dirs)
	}
	msgs := dirs[0]
	if err := os.Rename(msgs, msgs+".moved"); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(msgs, []byte("not a directory"), 0o644); err != nil {
		t.Fatal(err)
	}
	return func() {
		os.Remove(msgs)
		os.Rename(msgs+".moved", msgs)
	}
}

// A stream of the embedded store whose write failed (here its next
// message block could not be created) refuses every later write with no
// answer to the publisher, and keeps doing so after the cause is gone,
// until the server is restarted (nats-server v2.15 keeps the error for
// the stream's life: filestore setWriteErr). StoreWriteError names the
// stream from the start of the failure until the restart, and is nil
// before and after.
func TestStoreWriteErrorUntilRestart(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	dir := t.TempDir()
	s := startTestServer(t, ServerConfig{MQTTPort: -1, StoreDir: dir})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	st, err := Setup(ctx, js, StreamSettings{LeaseTTL: 5 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	put := func(v []byte) error {
		pctx, pcancel := context.WithTimeout(ctx, 3*time.Second)
		defer pcancel()
		_, err := st.Workers.Put(pctx, "w1", v)
		return err
	}
	if err := put([]byte("beat")); err != nil {
		t.Fatal(err)
	}
	if err := s.StoreWriteError(); err != nil {
		t.Fatalf("a healthy store: %v", err)
	}
	restore := breakStreamDir(t, dir, "KV_"+BucketWorkers)
	// A value larger than what is left of the stream's first block
	// makes the store start a second one.
	if err := put(make([]byte, 5<<20)); err == nil {
		t.Fatal("a write into a stream whose block cannot be made was acknowledged")
	}
	err = s.StoreWriteError()
	if err == nil || !strings.Contains(err.Error(), "KV_"+BucketWorkers) || !strings.Contains(err.Error(), "write error") {
		t.Fatalf("StoreWriteError after the failed write: %v; want one naming KV_%s and its write error", err, BucketWorkers)
	}
	restore()
	if err := put([]byte("beat")); err == nil {
		t.Fatal("the stream took a write again without a restart; the latch this check is for is gone")
	}
	if err := s.StoreWriteError(); err == nil {
		t.Fatal("StoreWriteError is nil while the stream still refuses writes")
	}
	s.Shutdown()
	s = startTestServer(t, ServerConfig{MQTTPort: -1, StoreDir: dir})
	if err := s.StoreWriteError(); err != nil {
		t.Fatalf("after a restart: %v", err)
	}
	_, js = connectJS(t, s.ClientURL(), Auth{})
	if st, err = Setup(ctx, js, StreamSettings{LeaseTTL: 5 * time.Second}); err != nil {
		t.Fatal(err)
	}
	if err := put([]byte("beat")); err != nil {
		t.Fatalf("after a restart: %v", err)
	}
}

// BenchmarkStoreWriteError is the cost of the check serve makes at each
// lease round, on a store holding the pipeline's streams and buckets.
func BenchmarkStoreWriteError(b *testing.B) {
	s, err := StartServer(ServerConfig{MQTTPort: -1, StoreDir: b.TempDir()})
	if err != nil {
		b.Fatal(err)
	}
	defer s.Shutdown()
	nc, err := Connect(s.ClientURL(), "bench", Auth{})
	if err != nil {
		b.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := Setup(ctx, js, StreamSettings{LeaseTTL: 5 * time.Second}); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for b.Loop() {
		if err := s.StoreWriteError(); err != nil {
			b.Fatal(err)
		}
	}
}
