package main

import (
	"io"
	"strings"
	"testing"
)

// TestHelpFlagsWrapped: every command's flag descriptions are wrapped to
// helpWidth columns (pflag's FlagUsagesWrapped); locate's ran to 512
// characters on one line (found in review).
func TestHelpFlagsWrapped(t *testing.T) {
	for _, c := range sortedCommands() {
		var b strings.Builder
		c.printHelp(&b, c.flagSet(io.Discard))
		in := false
		for _, l := range strings.Split(b.String(), "\n") {
			switch {
			case l == "Flags:":
				in = true
			case in && l == "":
				in = false
			case in && len([]rune(l)) > helpWidth:
				t.Errorf("%s: a flag line of %d characters, over %d: %q", c.name, len([]rune(l)), helpWidth, l)
			}
		}
	}
}
