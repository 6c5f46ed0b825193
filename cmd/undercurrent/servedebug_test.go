package main

import (
	"context"
	"io"
	"log/slog"
	"net"
	"net/http"
	"strings"
	"testing"
)

// TestServeDebugAddrLoopbackOnly: --debug-addr binds a bare port to
// 127.0.0.1 and refuses a host off loopback before listening (nothing is
// sent to it).
func TestServeDebugAddrLoopbackOnly(t *testing.T) {
	ln, err := listenDebug(":0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	if ip := ln.Addr().(*net.TCPAddr).IP; !ip.Equal(net.IPv4(127, 0, 0, 1)) {
		t.Errorf("a bare port listened on %v, want 127.0.0.1", ip)
	}
	for _, addr := range []string{"0.0.0.0:0", "[::]:0", "192.0.2.7:0", "example.invalid:0"} {
		ln, err := listenDebug(addr)
		if err == nil {
			ln.Close()
			t.Errorf("--debug-addr %s: listened, want refused off loopback", addr)
			continue
		}
		if !strings.Contains(err.Error(), "loopback only") {
			t.Errorf("--debug-addr %s: %v, want it to say loopback only", addr, err)
		}
	}
	if _, err := listenDebug("6060"); err == nil || !strings.Contains(err.Error(), "want host:port") {
		t.Errorf("--debug-addr 6060: %v, want a host:port error", err)
	}
}

// TestServeDebugAddrServesHeap: the listener serves the heap profile with
// the runtime's memory statistics (what a long replay's measurement reads)
// and nothing but /debug/pprof/.
func TestServeDebugAddrServesHeap(t *testing.T) {
	ln, err := listenDebug("127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() {
		serveDebug(ctx, ln, slog.New(slog.NewTextHandler(io.Discard, nil)))
		close(done)
	}()
	defer func() { cancel(); <-done }()
	base := "http://" + ln.Addr().String()
	get := func(path string) (int, string) {
		resp, err := http.Get(base + path)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		body, _ := io.ReadAll(resp.Body)
		return resp.StatusCode, string(body)
	}
	code, body := get("/debug/pprof/heap?gc=1&debug=1")
	if code != http.StatusOK || !strings.Contains(body, "# HeapInuse = ") {
		t.Errorf("heap profile: %d, %.200q; want 200 with the MemStats lines", code, body)
	}
	if code, _ := get("/metrics"); code != http.StatusNotFound {
		t.Errorf("/metrics on the debug listener: %d, want 404 (the API is elsewhere)", code)
	}
}
