package main

import (
	"context"
	"fmt"
	"io"
	"runtime/debug"

	"github.com/spf13/pflag"
)

func init() {
	register(&command{
		name:    "version",
		usage:   "",
		summary: "print the version of undercurrent and of Go it was built with",
		long: `Version prints the version of undercurrent (a module version, or
"(devel)" for a build from a source tree) and the Go release it was built
with; "undercurrent --version" does the same.

Examples:
  undercurrent version
  undercurrent --version`,
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 0 {
				return usageErrorf("version takes no arguments")
			}
			v, goVersion := "(devel)", "unknown"
			if bi, ok := debug.ReadBuildInfo(); ok {
				goVersion = bi.GoVersion
				if bi.Main.Version != "" {
					v = bi.Main.Version
				}
			}
			fmt.Fprintf(stdout, "undercurrent %s (%s)\n", v, goVersion)
			return nil
		},
	})
}
