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
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
