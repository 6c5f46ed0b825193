// Command undercurrent turns magnetometer logs into estimates of the electric
// currents in buried or enclosed conductors.
//
// Run "undercurrent help" for the list of subcommands.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signalContext()
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// signalContext returns a context that ends at the first SIGINT (Ctrl-C)
// or SIGTERM, with a signalCause naming the signal (run turns it into the
// exit status). After the first signal the default handling is restored,
// so a second Ctrl-C ends the process at once.
func signalContext() (context.Context, func()) {
	ctx, cancel := context.WithCancelCause(context.Background())
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	go func() {
		select {
		case sig := <-sigs:
			signal.Stop(sigs)
			cancel(&signalCause{sig: sig})
		case <-ctx.Done():
		}
	}()
	return ctx, func() {
		signal.Stop(sigs)
		cancel(nil)
	}
}
