package live

import (
	"net"
	"net/http"
	"sync"
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
	// PerAddr caps the open connections from one remote IP address;
	// one past it is closed as soon as it is accepted. Without it one
	// client holding MaxConns idle connections made every other client,
	// /healthz and /readyz included, wait up to Idle. Loopback clients
	// (the host's own probes, a reverse proxy on the host) are not
	// capped by it unless CapLoopback.
	PerAddr     int
	CapLoopback bool
}

// defaultHTTPLimits are the limits of serve's HTTP API.
var defaultHTTPLimits = httpLimits{
	ReadHeader: 10 * time.Second,
	Read:       30 * time.Second,
	Write:      2 * time.Minute,
	Idle:       60 * time.Second,
	MaxConns:   256,
	PerAddr:    32,
}

// newHTTPServer returns the server of the HTTP API and the listener to
// serve it on: ln with at most lim.MaxConns connections open, and at most
// lim.PerAddr from one address.
func newHTTPServer(h http.Handler, ln net.Listener, lim httpLimits) (*http.Server, net.Listener) {
	srv := &http.Server{
		Handler:           h,
		ReadHeaderTimeout: lim.ReadHeader,
		ReadTimeout:       lim.Read,
		WriteTimeout:      lim.Write,
		IdleTimeout:       lim.Idle,
	}
	if lim.PerAddr > 0 {
		// Inside the total cap: a connection closed for its address
		// does not take one of the MaxConns places.
		ln = &perAddrListener{Listener: ln, max: lim.PerAddr, loopback: lim.CapLoopback, open: map[string]int{}}
	}
	if lim.MaxConns > 0 {
		ln = netutil.LimitListener(ln, lim.MaxConns)
	}
	return srv, ln
}

// perAddrListener closes, as soon as it is accepted, a connection from a
// remote IP address that already has max open; loopback addresses are
// not counted unless loopback.
type perAddrListener struct {
	net.Listener
	max      int
	loopback bool

	mu   sync.Mutex
	open map[string]int // open connections per remote IP
}

func (l *perAddrListener) Accept() (net.Conn, error) {
	for {
		c, err := l.Listener.Accept()
		if err != nil {
			return nil, err
		}
		ta, ok := c.RemoteAddr().(*net.TCPAddr)
		if !ok || (ta.IP.IsLoopback() && !l.loopback) {
			return c, nil
		}
		ip := ta.IP.String()
		l.mu.Lock()
		if l.open[ip] >= l.max {
			l.mu.Unlock()
			c.Close()
			continue
		}
		l.open[ip]++
		l.mu.Unlock()
		return &perAddrConn{Conn: c, l: l, ip: ip}, nil
	}
}

// perAddrConn gives its address's place back when it is closed.
type perAddrConn struct {
	net.Conn
	l    *perAddrListener
	ip   string
	once sync.Once
}

func (c *perAddrConn) Close() error {
	c.once.Do(func() {
		c.l.mu.Lock()
		if c.l.open[c.ip]--; c.l.open[c.ip] <= 0 {
			delete(c.l.open, c.ip)
		}
		c.l.mu.Unlock()
	})
	return c.Conn.Close()
}
