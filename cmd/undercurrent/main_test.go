package main

import (
	"bytes"
	"context"
	"strings"
	"testing"
)

func TestRunExitCodes(t *testing.T) {
	cases := []struct {
		name string
		args []string
		code int
		out  string // substring expected on stdout or stderr
	}{
		{"no arguments", nil, 2, "Commands:"},
		{"help", []string{"help"}, 0, "version"},
		{"unknown command", []string{"frobnicate"}, 2, `unknown command "frobnicate"`},
		{"bad flag", []string{"version", "--nope"}, 2, "unknown flag"},
		{"extra argument", []string{"version", "x"}, 2, "takes no arguments"},
		{"version", []string{"version"}, 0, "undercurrent"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := run(context.Background(), tc.args, &out, &errOut)
			if code != tc.code {
				t.Errorf("exit code %d, want %d (stderr %q)", code, tc.code, errOut.String())
			}
			if all := out.String() + errOut.String(); !strings.Contains(all, tc.out) {
				t.Errorf("output %q does not contain %q", all, tc.out)
			}
		})
	}
}
