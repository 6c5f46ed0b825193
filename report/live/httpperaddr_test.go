package live

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"testing"
	"time"
)

// The HTTP API's connection cap was global: one client holding all
// MaxConns connections idle made every other client, /healthz included,
// wait up to the idle timeout (a minute). With the per-address cap, a
// client at 127.0.0.2 opens its PerAddr connections and keeps them idle,
// then as many again as the whole cap: each of those is closed at once
// (the client reads EOF or a reset, not its own deadline, which is only a
// guard against a hang), and a client at 127.0.0.1 still gets /healthz.
// Before, the first MaxConns connections filled the cap and the /healthz
// request waited for the 10 min idle timeout, past its 30 s guard.
func TestHTTPServerPerAddressCap(t *testing.T) {
	lim := defaultHTTPLimits
	lim.Idle = 10 * time.Minute // the held connections stay open for the whole test
	lim.MaxConns = 8
	lim.PerAddr = 4
	lim.CapLoopback = true // both clients are on loopback here
	inner, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	mux := http.NewServeMux()
	mux.HandleFunc("GET /healthz", func(w http.ResponseWriter, r *http.Request) { fmt.Fprintln(w, "ok") })
	srv, ln := newHTTPServer(mux, inner, lim)
	go srv.Serve(ln)
	defer srv.Close()
	addr := inner.Addr().String()

	hog := &net.Dialer{LocalAddr: &net.TCPAddr{IP: net.IPv4(127, 0, 0, 2)}}
	// request sends one keep-alive request on c and reads the answer.
	request := func(c net.Conn) (*bufio.Reader, error) {
		c.SetDeadline(time.Now().Add(30 * time.Second)) // guard only
		if _, err := io.WriteString(c, "GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n"); err != nil {
			return nil, err
		}
		br := bufio.NewReader(c)
		resp, err := http.ReadResponse(br, nil)
		if err != nil {
			return br, err
		}
		io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
		if resp.StatusCode != 200 {
			return br, fmt.Errorf("status %d", resp.StatusCode)
		}
		return br, nil
	}
	for i := 0; i < lim.PerAddr; i++ {
		c, err := hog.Dial("tcp", addr)
		if err != nil {
			t.Skipf("cannot dial from 127.0.0.2: %v", err)
		}
		defer c.Close()
		if _, err := request(c); err != nil {
			t.Fatalf("held connection %d: %v", i+1, err)
		}
	}
	for i := 0; i < lim.MaxConns; i++ {
		c, err := hog.Dial("tcp", addr)
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
		_, err = request(c)
		var ne net.Error
		switch {
		case err == nil:
			t.Errorf("connection %d over the address's cap of %d was served", lim.PerAddr+i+1, lim.PerAddr)
		case errors.As(err, &ne) && ne.Timeout(), errors.Is(err, os.ErrDeadlineExceeded):
			t.Errorf("connection %d over the address's cap: %v, want it closed at once", lim.PerAddr+i+1, err)
		}
	}
	client := &http.Client{Timeout: 30 * time.Second} // guard only
	resp, err := client.Get("http://" + addr + "/healthz")
	if err != nil {
		t.Fatalf("another client's /healthz while 127.0.0.2 holds its cap: %v", err)
	}
	io.Copy(io.Discard, resp.Body)
	resp.Body.Close()
	if resp.StatusCode != 200 {
		t.Errorf("/healthz: status %d", resp.StatusCode)
	}
}
