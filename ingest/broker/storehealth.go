package broker

import (
	"errors"
	"strings"

	"github.com/nats-io/nats-server/v2/server"
)

// StoreWriteError reports the streams of the embedded broker's store
// that have failed a write (a file that could not be created or written:
// no file descriptor left, an I/O error), nil when there are none. Such a
// stream refuses every later write, and its publishers get no answer,
// until the server is restarted: nats-server keeps the error for the life
// of the stream (it is not cleared when the cause goes), so for the
// embedded broker that means restarting serve. The check is the server's
// own health check (Healthz with details); it reads the store directory's
// listing, not the streams' data.
func (s *Server) StoreWriteError() error {
	h := s.ns.Healthz(&server.HealthzOptions{Details: true})
	if h == nil {
		return nil
	}
	var failed []string
	for _, e := range h.Errors {
		if e.Type == server.HealthzErrorStream && strings.Contains(e.Error, "write error") {
			failed = append(failed, e.Error)
		}
	}
	if len(failed) == 0 {
		return nil
	}
	return errors.New(strings.Join(failed, "; "))
}
