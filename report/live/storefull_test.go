package live

import (
	"context"
	"io"
	"net/http"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// With the broker's store used up, no lease can be renewed and nothing
// can be stored: /readyz must say so (503), as must uc_store_full, until
// space is freed. The store is a 1 MiB JetStream file store, filled with
// messages on a subject no worker reads.
func TestReadinessFailsWhileStoreFull(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	srv, err := broker.StartServer(broker.ServerConfig{StoreDir: t.TempDir(), MQTTPort: -1, MaxStore: 1 << 20})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	nc, err := broker.Connect(srv.ClientURL(), "test-publisher", broker.Auth{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, _ := jetstream.New(nc)
	h := &harness{t: t, srv: srv, js: js, nc: nc}
	r := h.start(testSite(t, testSiteText), "w1")
	get := func(path string) (int, string) {
		resp, err := http.Get("http://" + r.svc.HTTPAddr() + path)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		return resp.StatusCode, string(body)
	}
	if code, body := get("/readyz"); code != http.StatusOK {
		t.Fatalf("readyz %d %q before the store filled", code, body)
	}
	filler := make([]byte, 32<<10)
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	for i := 0; ; i++ {
		if i > 100 {
			t.Fatal("the 1 MiB store took 100 messages of 32 KiB")
		}
		if _, err := js.Publish(ctx, "uc.est.filler", filler); err != nil {
			if !strings.Contains(err.Error(), "insufficient resources") {
				t.Fatal(err)
			}
			break
		}
	}
	waitFor(t, 30*time.Second, "readyz to fail", func() bool {
		code, _ := get("/readyz")
		return code == http.StatusServiceUnavailable
	})
	if _, body := get("/readyz"); !strings.Contains(body, "store full") {
		t.Errorf("readyz body %q does not say the store is full", body)
	}
	if _, m := get("/metrics"); !strings.Contains(m, "\nuc_store_full 1\n") {
		t.Error("uc_store_full is not 1 while the store is full")
	}
	st, err := js.Stream(ctx, broker.StreamEstimates)
	if err != nil {
		t.Fatal(err)
	}
	if err := st.Purge(ctx, jetstream.WithPurgeSubject("uc.est.filler")); err != nil {
		t.Fatal(err)
	}
	waitFor(t, 30*time.Second, "readyz to recover once space is freed", func() bool {
		code, _ := get("/readyz")
		return code == http.StatusOK
	})
	if _, m := get("/metrics"); !strings.Contains(m, "\nuc_store_full 0\n") {
		t.Error("uc_store_full is not 0 once space is freed")
	}
	r.stop(t)
}
