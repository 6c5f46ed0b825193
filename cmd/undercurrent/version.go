package main

import (
	"context"
	"fmt"
	"io"
	"runtime"
	"runtime/debug"
	"strings"

	"github.com/spf13/pflag"
)

func init() {
	register(&command{
		name:    "version",
		usage:   "",
		summary: "print the version of undercurrent and how it was built",
		long: `Version prints the version of undercurrent (a module version, or
"(devel)" for a build from a source tree) and how it was built: the Go
release, the system and architecture (with its instruction-set level, such
as GOAMD64=v1) and any build tags (such as noasm), then the VCS revision
it was built from when the build records it ("+modified" for a tree with
changes; go build -buildvcs=false records none). The same build is
recorded in results.json (tool.build): builds for other architectures or
with other tags can differ in the last digits of a result, or at times
land a fit of several lines in another minimum. "undercurrent --version"
does the same.

Examples:
  undercurrent version
  undercurrent --version`,
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			if len(args) != 0 {
				return usageErrorf("version takes no arguments")
			}
			line := fmt.Sprintf("undercurrent %s (%s)", toolVersion(), buildText())
			if rev := vcsRevision(); rev != "" {
				line += " revision " + rev
			}
			fmt.Fprintln(stdout, line)
			return nil
		},
	})
}

// buildText is how the running program was built (buildOf).
func buildText() string {
	bi, _ := debug.ReadBuildInfo()
	return buildOf(bi, runtime.Version(), runtime.GOOS, runtime.GOARCH)
}

// buildOf words the build of bi where it can change the numbers: the Go
// release, the system and architecture with its instruction-set level
// (GOAMD64=v3 lets the compiler fuse multiplies and adds) and the build
// tags (noasm swaps gonum's assembly kernels for Go loops that sum in
// another order). Two builds of one source whose results differed (a
// three-line fit landing in another minimum under noasm) both printed
// "undercurrent (devel) (go1.26.8)" and wrote the same tool version into
// results.json, so nothing told the runs apart (found in review). goVer,
// goos and goarch stand in for what bi lacks (the running program's own,
// runtime.Version and the like).
func buildOf(bi *debug.BuildInfo, goVer, goos, goarch string) string {
	set := map[string]string{}
	if bi != nil {
		if bi.GoVersion != "" {
			goVer = bi.GoVersion
		}
		for _, s := range bi.Settings {
			set[s.Key] = s.Value
		}
	}
	if v := set["GOOS"]; v != "" {
		goos = v
	}
	if v := set["GOARCH"]; v != "" {
		goarch = v
	}
	parts := []string{goVer, goos + "/" + goarch}
	// The architecture's level: GOAMD64, GOARM64, GOARM, GO386 and the
	// like, named after the architecture.
	if lv := "GO" + strings.ToUpper(goarch); set[lv] != "" {
		parts = append(parts, lv+"="+set[lv])
	}
	if tags := set["-tags"]; tags != "" {
		parts = append(parts, "tags "+tags)
	}
	return strings.Join(parts, ", ")
}

// vcsRevision is the VCS revision the program was built from, with
// "+modified" when the tree had changes, or "" when the build did not
// record it (go build -buildvcs=false, or a build outside a repository).
func vcsRevision() string {
	bi, _ := debug.ReadBuildInfo()
	return revisionOf(bi)
}

func revisionOf(bi *debug.BuildInfo) string {
	if bi == nil {
		return ""
	}
	var rev, modified string
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			modified = s.Value
		}
	}
	if rev != "" && modified == "true" {
		rev += "+modified"
	}
	return rev
}
