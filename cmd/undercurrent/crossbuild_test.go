package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// crossPlatforms are the systems besides the one the tests run on that
// undercurrent must build for: Windows laptops in the field, Macs, and
// 64-bit ARM Linux (a Raspberry Pi beside a logger, an ARM server). On
// Windows every package is vetted with its tests (go vet type-checks them):
// that is where system interfaces differ most, down to the tests' named
// pipes and signals. The other two are Unix systems like the one the tests
// run on: there "go build" of every package checks the code that differs
// (inverse's assembly kernels are amd64 only), at two thirds of vet's cost.
var crossPlatforms = []struct{ goos, goarch, verb string }{
	{"windows", "amd64", "vet"},
	{"darwin", "arm64", "build"},
	{"linux", "arm64", "build"},
}

// TestCrossBuild runs "go vet ./..." or "go build ./..." (crossPlatforms)
// for each of the other systems, with the go command of the toolchain
// running the tests and cgo off, as a cross build has it. A call to a
// system interface that one of them lacks (syscall.Statfs,
// syscall.Getrusage and syscall.Mkfifo on Windows) fails it, with the
// compiler's message. Before, the Windows build failed in ingest/broker
// and ingest/ingesttest, and nothing noticed. It runs nothing on those
// systems: that they compile is all it shows. It compiles the module three
// times: minutes on a loaded machine, seconds once the build cache holds
// the result.
func TestCrossBuild(t *testing.T) {
	if testing.Short() {
		t.Skip("compiles the module for three other systems")
	}
	gocmd := filepath.Join(runtime.GOROOT(), "bin", "go")
	if runtime.GOOS == "windows" {
		gocmd += ".exe"
	}
	if _, err := os.Stat(gocmd); err != nil {
		t.Skipf("no go command beside this toolchain: %v", err)
	}
	root := ingesttest.RepoRoot(t)
	for _, p := range crossPlatforms {
		t.Run(p.goos+"-"+p.goarch, func(t *testing.T) {
			if p.goos == runtime.GOOS && p.goarch == runtime.GOARCH {
				t.Skip("the platform the tests run on")
			}
			cmd := exec.Command(gocmd, p.verb, "./...")
			cmd.Dir = root
			cmd.Env = append(os.Environ(), "GOOS="+p.goos, "GOARCH="+p.goarch, "CGO_ENABLED=0", "GOFLAGS=")
			if out, err := cmd.CombinedOutput(); err != nil {
				t.Errorf("GOOS=%s GOARCH=%s go %s ./...: %v\n%s", p.goos, p.goarch, p.verb, err, strings.TrimSpace(string(out)))
			}
		})
	}
}
