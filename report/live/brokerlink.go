package live

import (
	"net/http"
	"sync"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/prometheus/client_golang/prometheus"
)

// A broker outage used to leave the operator guessing (review rv24d, finding 8): the log
// repeated "heartbeat failed err=context deadline exceeded" every quarter
// lease TTL and never said the connection was lost or back, API queries
// answered 502 after their 5-10 s timeouts, and uc_pending_messages went
// on reporting the last value seen. The service now logs the client's
// disconnect and reconnect once each (with how long it was down), says
// a run of failed heartbeats or sweeps once and counts the rest
// (failStreak), answers API requests 503 "broker unreachable" at once
// while the connection is not up (needBroker), exports
// uc_broker_connected, and leaves the pending gauges out of /metrics
// while they cannot be fresh.

// brokerLink follows the service's connection to the broker.
type brokerLink struct {
	mu   sync.Mutex
	down time.Time // when the connection was lost; zero while up
}

// watchBroker sets the connection's disconnect and reconnect handlers
// (calling any the caller had set first) so that the log says once when
// the connection is lost and once when it is back, and registers
// uc_broker_connected.
func (s *Service) watchBroker() {
	nc := s.nc
	prevDown, prevUp := nc.DisconnectErrHandler(), nc.ReconnectHandler()
	nc.SetDisconnectErrHandler(func(c *nats.Conn, err error) {
		if prevDown != nil {
			prevDown(c, err)
		}
		if c.IsClosed() {
			return // closed by serve itself, at the end
		}
		s.link.mu.Lock()
		first := s.link.down.IsZero()
		if first {
			s.link.down = time.Now()
		}
		s.link.mu.Unlock()
		if first {
			s.log.Warn("broker connection lost: reconnecting; until it is back, leases cannot be renewed, no estimate is stored and API requests answer 503",
				"err", err)
		}
	})
	nc.SetReconnectHandler(func(c *nats.Conn) {
		if prevUp != nil {
			prevUp(c)
		}
		s.link.mu.Lock()
		down := s.link.down
		s.link.down = time.Time{}
		s.link.mu.Unlock()
		attrs := []any{"broker", c.ConnectedUrlRedacted()}
		if !down.IsZero() {
			attrs = append(attrs, "down_for", time.Since(down).Round(time.Millisecond))
		}
		s.log.Info("broker reconnected", attrs...)
	})
	s.met.reg.MustRegister(prometheus.NewGaugeFunc(prometheus.GaugeOpts{Name: "uc_broker_connected",
		Help: "1 while this worker's connection to the broker is up, 0 while it is lost (reconnecting) or closed."},
		func() float64 {
			if s.connected() {
				return 1
			}
			return 0
		}))
	s.met.fresh = s.connected
}

// connected reports whether the connection to the broker is up.
func (s *Service) connected() bool { return s.nc.Status() == nats.CONNECTED }

// needBroker answers 503 "broker unreachable" at once, with Retry-After,
// while the connection to the broker is not up: a query would otherwise
// wait out its timeout (5-10 s) and answer 502.
func (s *Service) needBroker(h http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if st := s.nc.Status(); st != nats.CONNECTED {
			w.Header().Set("Retry-After", "5")
			httpError(w, http.StatusServiceUnavailable, "broker unreachable (connection "+st.String()+"): try again once it is back (see /readyz)")
			return
		}
		h.ServeHTTP(w, r)
	})
}

// failStreak counts a run of failures of a periodic task, so that a
// lasting fault is logged once when it begins and once when it ends, not
// at every tick.
type failStreak struct {
	mu    sync.Mutex
	n     int
	since time.Time
}

// fail counts a failure; first says it begins a run (to be logged).
func (f *failStreak) fail() (first bool) {
	f.mu.Lock()
	defer f.mu.Unlock()
	f.n++
	if f.n == 1 {
		f.since = time.Now()
	}
	return f.n == 1
}

// ok ends a run: n is the failures it counted (0 when none) and d how
// long it lasted.
func (f *failStreak) ok() (n int, d time.Duration) {
	f.mu.Lock()
	defer f.mu.Unlock()
	n, f.n = f.n, 0
	if n > 0 {
		d = time.Since(f.since).Round(time.Millisecond)
	}
	return n, d
}

// freshCollector is a collector whose series are left out of a scrape
// while fresh (when set) says they cannot be up to date.
type freshCollector struct {
	prometheus.Collector
	m *metrics
}

func (c freshCollector) Collect(ch chan<- prometheus.Metric) {
	if f := c.m.fresh; f != nil && !f() {
		return
	}
	c.Collector.Collect(ch)
}
