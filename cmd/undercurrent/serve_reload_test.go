package main

import (
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// serve catches SIGHUP: it logs that it does not reload and serves on,
// and a SIGTERM afterwards still drains and exits 0. Before, SIGHUP ended
// the process at once with no log line (rv24d t1). The start line names
// the version, the site file's path and its digest (before: the site's
// name and the number of assets only).
func TestServeSIGHUPNoReload(t *testing.T) {
	needSignals(t) // SIGHUP, then SIGTERM
	if testing.Short() {
		t.Skip("starts a broker and a serve process")
	}
	dir, srv, site := startSimBroker(t)
	w := startWorker(t, dir, "w1", "--config", site, "--broker", srv.ClientURL())
	logText := func() string { b, _ := os.ReadFile(w.log); return string(b) }
	exited := func() bool {
		select {
		case <-w.done:
			return true
		default:
			return false
		}
	}
	pollUntil(t, 30*time.Second, "the serving line", func() bool { return strings.Contains(logText(), "msg=serving") || exited() })
	var serving string
	for _, line := range strings.Split(logText(), "\n") {
		if strings.Contains(line, "msg=serving") {
			serving = line
		}
	}
	abs, _ := filepath.Abs(site)
	for _, want := range []string{"version=", "site_file=" + abs, "site_digest=" + fileDigest(site)} {
		if !strings.Contains(serving, want) {
			t.Errorf("start line %q lacks %q", serving, want)
		}
	}
	// The signals go once the streams are set up (the dead-letter line
	// comes after them, "max_age=" in either of its forms): a SIGTERM
	// while serve still sets them up ends it with nothing to drain, and
	// exits as interrupted, which is not what this test looks at.
	pollUntil(t, 30*time.Second, "the streams set up", func() bool { return strings.Contains(logText(), "max_age=") || exited() })
	if err := w.cmd.Process.Signal(syscall.SIGHUP); err != nil {
		t.Fatal(err)
	}
	pollUntil(t, 30*time.Second, "the SIGHUP line, or the process's end", func() bool {
		return strings.Contains(logText(), "no reload: restart serve to apply site-file changes") || exited()
	})
	if exited() {
		t.Fatalf("serve ended at SIGHUP (%v); log:\n%s", w.err, logText())
	}
	if err := w.cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	<-w.done
	if w.err != nil {
		t.Errorf("serve after SIGHUP then SIGTERM: %v, want a drain and exit 0", w.err)
	}
}

// An edit to the site file under a running serve is logged once at
// WARN with both digests (serve does not reload), however many times it
// is looked at; a file caught empty (half written) is not reported; a
// further edit is logged again, and a file put back is said at INFO.
// Before, nothing noticed an edit.
func TestServeWarnsOnceWhenSiteFileChanges(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "site.toml")
	write := func(text string) {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write(simSite)
	start := fileDigest(path)
	var logs syncBuffer
	w := newSiteWatch(path, start, slog.New(slog.NewTextHandler(&logs, nil)))
	look := func(n int) {
		for i := 0; i < n; i++ {
			w.look()
		}
	}
	count := func() int { return strings.Count(logs.String(), "the site file changed since serve started") }
	look(2)
	if count() != 0 {
		t.Fatalf("warned of an unchanged file:\n%s", logs.String())
	}
	write("") // caught half written: one look, then the whole file
	look(1)
	edited := strings.Replace(simSite, `idle = "500ms"`, `idle = "700ms"`, 1)
	write(edited)
	look(5)
	if count() != 1 || !strings.Contains(logs.String(), "site_digest_in_force="+start) || !strings.Contains(logs.String(), "site_digest_now="+fileDigest(path)) {
		t.Fatalf("%d WARNs after an edit looked at five times, want 1 with both digests:\n%s", count(), logs.String())
	}
	write(edited + "\n# again\n")
	look(2)
	if count() != 2 {
		t.Fatalf("%d WARNs after a second edit, want 2:\n%s", count(), logs.String())
	}
	write(simSite)
	look(3)
	if count() != 2 || !strings.Contains(logs.String(), "back to the one serve started with") {
		t.Fatalf("after the file was put back:\n%s", logs.String())
	}
}
