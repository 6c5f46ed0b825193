package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"net/http/pprof"
	"time"
)

// listenDebug opens serve's --debug-addr listener: Go's runtime profiles
// (net/http/pprof) under /debug/pprof/, off unless the flag is given, on a
// listener of its own apart from the HTTP API. A bare port (":6060") is
// bound to 127.0.0.1, and an address off loopback is refused: a profile
// shows the process's insides (a goroutine dump holds the site's names,
// a heap profile its allocation sites) and a CPU profile costs CPU while
// it runs, so it is for someone on the machine (or through an SSH
// tunnel), not for the network. It was added to measure serve's memory
// during a long replay (review rv25c finding 5): /debug/pprof/heap?gc=1
// &debug=1 ends with runtime.MemStats after a garbage collection.
func listenDebug(addr string) (net.Listener, error) {
	host, port, err := net.SplitHostPort(addr)
	if err != nil {
		return nil, usageErrorf("--debug-addr %q: want host:port or :port: %v", addr, err)
	}
	if host == "" {
		host = "127.0.0.1"
	}
	if !loopbackHost(host) {
		return nil, usageErrorf("--debug-addr %q: the profiles are served on loopback only (127.0.0.1, ::1 or localhost): they show the process's insides to anyone who reaches them", addr)
	}
	ln, err := net.Listen("tcp", net.JoinHostPort(host, port))
	if err != nil {
		return nil, fmt.Errorf("--debug-addr %q: %w", addr, err)
	}
	return ln, nil
}

// loopbackHost tells whether host names a loopback address.
func loopbackHost(host string) bool {
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// debugMux serves the pprof handlers only.
func debugMux() *http.ServeMux {
	mux := http.NewServeMux()
	mux.HandleFunc("/debug/pprof/", pprof.Index)
	mux.HandleFunc("/debug/pprof/cmdline", pprof.Cmdline)
	mux.HandleFunc("/debug/pprof/profile", pprof.Profile)
	mux.HandleFunc("/debug/pprof/symbol", pprof.Symbol)
	mux.HandleFunc("/debug/pprof/trace", pprof.Trace)
	return mux
}

// serveDebug serves the profiles on ln until ctx ends.
func serveDebug(ctx context.Context, ln net.Listener, log *slog.Logger) {
	srv := &http.Server{Handler: debugMux(), ReadHeaderTimeout: 10 * time.Second}
	go func() {
		<-ctx.Done()
		sctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
		defer cancel()
		srv.Shutdown(sctx)
	}()
	log.Info("profiles served", "debug_addr", "http://"+ln.Addr().String()+"/debug/pprof/")
	if err := srv.Serve(ln); err != nil && !errors.Is(err, http.ErrServerClosed) {
		log.Warn("the --debug-addr listener stopped", "err", err)
	}
}
