package main

import (
	"runtime"
	"testing"
)

// needSignals skips a test that sends a process it started a signal other
// than SIGKILL: Windows has none to send (os.Process.Signal delivers only
// os.Kill there, and Ctrl-C or Ctrl-Break reach only the processes of the
// console they are typed in).
func needSignals(t *testing.T) {
	t.Helper()
	if runtime.GOOS == "windows" {
		t.Skip("sends SIGINT, SIGTERM or SIGHUP to a child process, which Windows cannot")
	}
}
