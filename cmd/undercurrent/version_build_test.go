package main

import (
	"encoding/json"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"testing"
)

// TestBuildOfTellsBuildsApart: the build settings of two builds of one
// source, as "go version -m" lists them for a default build and one with
// -tags noasm (both for linux/amd64 at GOAMD64=v1; the settings' names
// are those of the Go toolchain's build information). The two had printed
// the same "undercurrent (devel) (go1.26.8)" and written the same tool
// version into results.json although the noasm build's three-line fits
// can land in another minimum (found in review). Now the tags and the
// architecture's level are named, and the two texts differ.
func TestBuildOfTellsBuildsApart(t *testing.T) {
	settings := func(extra ...debug.BuildSetting) []debug.BuildSetting {
		return append([]debug.BuildSetting{{Key: "-buildmode", Value: "exe"}, {Key: "-compiler", Value: "gc"},
			{Key: "CGO_ENABLED", Value: "1"}, {Key: "GOARCH", Value: "amd64"}, {Key: "GOOS", Value: "linux"}, {Key: "GOAMD64", Value: "v1"}}, extra...)
	}
	plain := buildOf(&debug.BuildInfo{GoVersion: "go1.26.8", Settings: settings()}, "", "", "")
	noasm := buildOf(&debug.BuildInfo{GoVersion: "go1.26.8", Settings: settings(debug.BuildSetting{Key: "-tags", Value: "noasm"})}, "", "", "")
	if want := "go1.26.8, linux/amd64, GOAMD64=v1"; plain != want {
		t.Errorf("default build: %q, want %q", plain, want)
	}
	if want := "go1.26.8, linux/amd64, GOAMD64=v1, tags noasm"; noasm != want {
		t.Errorf("noasm build: %q, want %q", noasm, want)
	}
	arm := buildOf(&debug.BuildInfo{GoVersion: "go1.26.8", Settings: []debug.BuildSetting{{Key: "GOARCH", Value: "arm64"}, {Key: "GOOS", Value: "linux"}, {Key: "GOARM64", Value: "v8.0"}}}, "", "", "")
	if want := "go1.26.8, linux/arm64, GOARM64=v8.0"; arm != want {
		t.Errorf("arm64 build: %q, want %q", arm, want)
	}
	// Without build information: the running program's own release and
	// target.
	if got, want := buildOf(nil, "go1.x", "plan9", "386"), "go1.x, plan9/386"; got != want {
		t.Errorf("no build information: %q, want %q", got, want)
	}
}

// TestVersionAndResultsNameBuild: "undercurrent version" names the system
// and architecture the program runs as (runtime.GOOS and runtime.GOARCH,
// the Go runtime's own), and results.json records the same build under
// tool.build, so that two runs' results can be told apart by how the
// program was built (before, both gave the module version alone, "(devel)"
// for every build; found in review).
func TestVersionAndResultsNameBuild(t *testing.T) {
	out := mustCLI(t, "version")
	target := runtime.GOOS + "/" + runtime.GOARCH
	if !strings.Contains(out, target) {
		t.Fatalf("version: %q does not name %s", out, target)
	}
	_, path := scenario(t, "single-line.toml")
	log := filepath.Join(t.TempDir(), "log.csv")
	mustCLI(t, "simulate", path, "-o", log)
	var doc struct {
		Tool struct {
			Name, Version, Build string
		} `json:"tool"`
	}
	if err := json.Unmarshal([]byte(mustCLI(t, "locate", "--json", log)), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Tool.Build == "" || !strings.Contains(out, "("+doc.Tool.Build+")") {
		t.Errorf("results.json tool.build %q is not the build version prints: %q", doc.Tool.Build, out)
	}
}

// revisionOf gives the VCS revision a build records, marked when the
// tree had changes, and nothing when none is recorded (-buildvcs=false).
// Before, the revision was never printed nor logged.
func TestRevisionOf(t *testing.T) {
	for _, c := range []struct {
		settings []debug.BuildSetting
		want     string
	}{
		{nil, ""},
		{[]debug.BuildSetting{{Key: "vcs.revision", Value: "246b9c7e"}, {Key: "vcs.modified", Value: "false"}}, "246b9c7e"},
		{[]debug.BuildSetting{{Key: "vcs.revision", Value: "246b9c7e"}, {Key: "vcs.modified", Value: "true"}}, "246b9c7e+modified"},
	} {
		if got := revisionOf(&debug.BuildInfo{Settings: c.settings}); got != c.want {
			t.Errorf("revisionOf(%v) = %q, want %q", c.settings, got, c.want)
		}
	}
	if got := revisionOf(nil); got != "" {
		t.Errorf("revisionOf(nil) = %q", got)
	}
}
