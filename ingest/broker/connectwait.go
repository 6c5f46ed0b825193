package broker

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/nats-io/nats.go"
)

// ConnectWait is Connect that, while no server at url answers (nothing
// listens there yet: nats.ErrNoServers), tries again for up to wait, so
// that a pipeline started together with its broker does not exit before
// the broker is up (review rv24d, finding 9: serve --broker exited within a second). It
// tells notify (when set) once that it waits. Any other failure (a
// refused login, a TLS or URL problem) is returned at once; after wait,
// or when ctx ends, the error names the URLs tried and says to start the
// broker first.
func ConnectWait(ctx context.Context, url, name string, auth Auth, wait time.Duration, notify func(string)) (*nats.Conn, error) {
	deadline := time.Now().Add(wait)
	pause := 100 * time.Millisecond
	told := false
	for tries := 1; ; tries++ {
		nc, err := Connect(url, name, auth)
		if err == nil {
			if told && notify != nil {
				notify(fmt.Sprintf("broker up after %d tries", tries))
			}
			return nc, nil
		}
		if !errors.Is(err, nats.ErrNoServers) {
			return nil, err
		}
		left := time.Until(deadline)
		if left <= 0 || ctx.Err() != nil {
			return nil, fmt.Errorf("%w; nothing answered at %s in %v (%d tries): start the broker first, or check the URL", err, url, wait, tries)
		}
		if !told && notify != nil {
			notify(fmt.Sprintf("no broker answers at %s yet: waiting up to %v for it", url, wait))
			told = true
		}
		select {
		case <-ctx.Done():
		case <-time.After(min(pause, left)):
		}
		pause = min(2*pause, time.Second)
	}
}
