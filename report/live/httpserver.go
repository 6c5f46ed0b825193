package live

import (
	"net"
	"net/http"
	"time"

	"golang.org/x/net/netutil"
)

// httpLimits bounds what clients of the HTTP API may hold. Before, only
// the header read was bounded: an idle keep-alive connection was held for
// ever and there was no cap on connections, so some 20,000 idle ones used
// up serve's file descriptors, which it shares with the embedded broker
// (whose store then failed its writes until serve was restarted).
type httpLimits struct {
	// ReadHeader and Read bound reading a request's header and all of it
	// (request bodies are small: a restart body is at most 64 KiB).
	ReadHeader, Read time.Duration
	// Write bounds writing an answer; the largest, a history of
	// MaxQueryLimit windows, is written in a few seconds.
	Write time.Duration
	// Idle closes a keep-alive connection no request has used for this long.
	Idle time.Duration
	// MaxConns caps the open connections; past it new ones wait in the
	// kernel's queue until one closes. It stays well under the process's
	// file-descriptor limit, which the broker needs too.
	MaxConns int
}

// defaultHTTPLimits are the limits of serve's HTTP API.
var defaultHTTPLimits = httpLimits{
	ReadHeader: 10 * time.Second,
	Read:       30 * time.Second,
	Write:      2 * time.Minute,
	Idle:       60 * time.Second,
	MaxConns:   256,
}

// newHTTPServer returns the server of the HTTP API and the listener to
// serve it on: ln with at most lim.MaxConns connections open.
func newHTTPServer(h http.Handler, ln net.Listener, lim httpLimits) (*http.Server, net.Listener) {
	srv := &http.Server{
		Handler:           h,
		ReadHeaderTimeout: lim.ReadHeader,
		ReadTimeout:       lim.Read,
		WriteTimeout:      lim.Write,
		IdleTimeout:       lim.Idle,
	}
	if lim.MaxConns > 0 {
		ln = netutil.LimitListener(ln, lim.MaxConns)
	}
	return srv, ln
}
