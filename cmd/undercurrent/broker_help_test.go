package main

import (
	"strings"
	"testing"
)

// TestBrokerCommandsHelp: replay's help had said an interrupted replay "writes
// no output", though the batches it sent stay in the broker and are processed,
// and serve's and replay's help gave an exit status that spoke of an output
// directory they do not write. This checks the project's own documented
// behaviour: replay's help says the sent batches stay, and neither mentions -o.
func TestBrokerCommandsHelp(t *testing.T) {
	for _, cmd := range []string{"serve", "replay"} {
		code, out, errOut := cli(t, cmd, "--help")
		text := strings.Join(strings.Fields(out+errOut), " ")
		if code != 0 {
			t.Fatalf("%s --help: exit %d", cmd, code)
		}
		if strings.Contains(text, "writes no output") || strings.Contains(text, "-o DIR") {
			t.Errorf("%s --help speaks of an output it does not write:\n%s", cmd, text)
		}
		if cmd == "replay" && !strings.Contains(text, "stay in the broker") {
			t.Errorf("replay --help does not say the batches sent stay in the broker:\n%s", text)
		}
	}
}
