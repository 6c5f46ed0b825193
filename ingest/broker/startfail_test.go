package broker

import (
	"fmt"
	"net"
	"os"
	"strings"
	"sync"
	"testing"
)

// Two embedded brokers on one store directory would both append to the
// same JetStream files: the second is refused at once, naming the store
// and the process holding it, and the store is free again once the first
// has shut down.
func TestStoreDirInUseRefused(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	dir := t.TempDir()
	s1, err := StartServer(ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	s2, err := StartServer(ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err == nil {
		s2.Shutdown()
		s1.Shutdown()
		t.Fatal("a second broker started on a store in use")
	}
	want := fmt.Sprintf("store %s is in use by process %d", dir, os.Getpid())
	if !strings.Contains(err.Error(), want) {
		t.Errorf("error %q, want it to say %q", err, want)
	}
	s1.Shutdown()
	s3, err := StartServer(ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err != nil {
		t.Fatalf("store not free after the first broker shut down: %v", err)
	}
	s3.Shutdown()
}

// A port in use fails the start at once with the listener's own error
// naming that port (the MQTT one here, the NATS port being free), which is
// also passed to Errorf, not only to the notices.
func TestBusyPortNamed(t *testing.T) {
	if testing.Short() {
		t.Skip("starts brokers")
	}
	for _, which := range []string{"mqtt", "nats"} {
		t.Run(which, func(t *testing.T) {
			busy, err := net.Listen("tcp", "127.0.0.1:0")
			if err != nil {
				t.Fatal(err)
			}
			defer busy.Close()
			port := busy.Addr().(*net.TCPAddr).Port
			cfg := ServerConfig{StoreDir: t.TempDir(), MQTTPort: port}
			if which == "nats" {
				cfg.Port, cfg.MQTTPort = port, -1
			}
			var mu sync.Mutex
			var errs []string
			cfg.Errorf = func(format string, a ...any) {
				mu.Lock()
				errs = append(errs, fmt.Sprintf(format, a...))
				mu.Unlock()
			}
			s, err := StartServer(cfg)
			if err == nil {
				s.Shutdown()
				t.Fatal("started with its port in use")
			}
			addr := fmt.Sprintf("127.0.0.1:%d", port)
			if !strings.Contains(err.Error(), addr) || !strings.Contains(err.Error(), "address already in use") {
				t.Errorf("error %q does not name %s in use", err, addr)
			}
			if strings.Contains(err.Error(), "not ready after") {
				t.Errorf("error %q: waited for readiness instead of reporting the listener", err)
			}
			mu.Lock()
			defer mu.Unlock()
			if len(errs) == 0 || !strings.Contains(strings.Join(errs, "\n"), addr) {
				t.Errorf("Errorf got %q, want the listener's error", errs)
			}
		})
	}
}
