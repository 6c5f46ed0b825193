package live

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
	dto "github.com/prometheus/client_model/go"

	"undercurrent/ingest/broker"
)

// A negative max_message_bytes was kept, and serve then dead-lettered
// every sensor batch as oversized ("1450 bytes, limit -5"); it is refused
// when the site file is read, as the other sizes are. 0 (or the key left
// out) keeps its documented meaning, 1 MiB, and the decode limit is
// sixteen times the message limit.
func TestSiteRefusesNegativeMaxMessageBytes(t *testing.T) {
	site := func(v string) (*Site, error) {
		return ParseSite("site.toml", []byte("[service]\nmax_message_bytes = "+v+"\n"+minimalSite))
	}
	for _, v := range []string{"-5", "-1048576"} {
		if _, err := site(v); err == nil || !strings.Contains(err.Error(), "service.max_message_bytes "+v) {
			t.Errorf("max_message_bytes = %s: error %v, want one naming service.max_message_bytes %s", v, err, v)
		}
	}
	for _, c := range []struct {
		v    string
		want int
	}{{"0", 1 << 20}, {"65536", 65536}} {
		s, err := site(c.v)
		if err != nil {
			t.Errorf("max_message_bytes = %s: %v", c.v, err)
			continue
		}
		if s.Service.MaxMessageBytes != c.want || s.maxDecoded() != 16*int64(c.want) {
			t.Errorf("max_message_bytes = %s: limit %d, decode limit %d; want %d, %d", c.v, s.Service.MaxMessageBytes, s.maxDecoded(), c.want, 16*c.want)
		}
	}
}

// since= with NaN, Inf or a value past what an int64 of seconds holds
// overflowed the conversion and answered the whole alarm history, which a
// poller asking for new alarms takes as new ones; it is refused (400) as
// from= and to= are. A since after every alarm stored answers none.
func TestAlarmsSinceNotFinite(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)
	for _, c := range []struct{ v, says string }{
		{"NaN", `parameter since: "NaN" is neither seconds nor an RFC 3339 time`},
		{"Inf", `parameter since: "Inf" is not a finite time`},
		{"-Infinity", `parameter since: "-Infinity" is not a finite time`},
		{"1e300", `parameter since: "1e300" is not a finite time`},
		{"1e19", `parameter since: "1e19" is beyond the times`},
	} {
		resp, body := apiRequest(t, r, "GET", "/api/v1/alarms?since="+c.v)
		var e map[string]string
		if resp.StatusCode != 400 || json.Unmarshal([]byte(body), &e) != nil || !strings.Contains(e["error"], c.says) {
			t.Errorf("since=%s: %d %s, want 400 saying %q", c.v, resp.StatusCode, body, c.says)
		}
	}
	if resp, body := apiRequest(t, r, "GET", "/api/v1/alarms?since=1e18"); resp.StatusCode != 200 {
		t.Errorf("since=1e18: %d %s, want 200", resp.StatusCode, body)
	}
}

// A restart body over 64 KiB was cut silently at 64 KiB: 70,000 spaces
// before {"start":"new"} read as no body, and the restart ran from the
// configured start instead of the one asked for. It is refused (413 from
// the endpoint) with a message saying the body is too large; a body of
// exactly 64 KiB is still read.
func TestRestartBodyOverLimitRefused(t *testing.T) {
	post := func(body string) (*Start, error) {
		r, _ := http.NewRequest("POST", "http://x/api/v1/assets/fenwick-lane/restart", strings.NewReader(body))
		r.Header.Set("Content-Type", "application/json")
		return restartParams(r, "fenwick-lane")
	}
	long := strings.Repeat(" ", 70000) + `{"start":"new"}`
	if st, err := post(long); !errors.Is(err, errBodyTooLarge) || !strings.Contains(err.Error(), "body over 64 KiB") {
		t.Errorf("70,015-byte body: start given %v, error %v; want the body refused as over 64 KiB", st != nil, err)
	}
	exact := `{"start":"new"}`
	exact = strings.Repeat(" ", restartBodyMax-len(exact)) + exact
	if st, err := post(exact); err != nil || st == nil || st.String() != "new" {
		t.Errorf("64 KiB body: start given %v, error %v; want new", st != nil, err)
	}
	// The endpoint answers 413.
	w := &statusRecorder{header: http.Header{}}
	svc := &Service{site: testSite(t, testSiteText)}
	r, _ := http.NewRequest("POST", "http://x/api/v1/assets/fenwick-lane/restart", strings.NewReader(long))
	r.SetPathValue("asset", "fenwick-lane")
	svc.restart(w, r)
	if w.code != http.StatusRequestEntityTooLarge {
		t.Errorf("restart endpoint: %d %s, want 413", w.code, w.body.String())
	}
}

type statusRecorder struct {
	header http.Header
	code   int
	body   strings.Builder
}

func (w *statusRecorder) Header() http.Header { return w.header }
func (w *statusRecorder) Write(p []byte) (int, error) {
	if w.code == 0 {
		w.code = 200
	}
	return w.body.Write(p)
}
func (w *statusRecorder) WriteHeader(c int) { w.code = c }

// /readyz said "ready" while every heartbeat failed (the broker's store
// had taken a write error and no asset could be held); it answers 503
// while heartbeats fail, and 200 again once one succeeds. The heartbeats
// are made to fail by deleting the workers bucket, and to succeed again
// by making it anew.
func TestReadinessFailsWhileHeartbeatFails(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)
	get := func() (int, string) {
		resp, err := http.Get("http://" + r.svc.HTTPAddr() + "/readyz")
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		return resp.StatusCode, string(b)
	}
	waitFor(t, 30*time.Second, "readyz 200", func() bool { c, _ := get(); return c == 200 })
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if err := h.js.DeleteKeyValue(ctx, broker.BucketWorkers); err != nil {
		t.Fatal(err)
	}
	waitFor(t, 30*time.Second, "readyz 503 while heartbeats fail", func() bool { c, _ := get(); return c == http.StatusServiceUnavailable })
	if _, body := get(); !strings.Contains(body, "heartbeat failing") {
		t.Errorf("readyz body %q does not say the heartbeat fails", body)
	}
	if _, err := h.js.CreateKeyValue(ctx, jetstream.KeyValueConfig{Bucket: broker.BucketWorkers, History: 1, TTL: r.svc.site.Service.LeaseTTL.Duration}); err != nil {
		t.Fatal(err)
	}
	waitFor(t, 30*time.Second, "readyz 200 once heartbeats succeed again", func() bool { c, _ := get(); return c == 200 })
}

// The HTTP API held an idle keep-alive connection for ever and took any
// number of connections: some 20,000 idle ones used up serve's file
// descriptors, shared with the embedded broker. With the limits, an idle
// connection is closed by the server (the client reads EOF, not its own
// deadline, which is only a guard against a hang), and no more than
// MaxConns connections are open at once while twice as many clients each
// hold one until the server closes it; every client is still served.
func TestHTTPServerIdleTimeoutAndConnectionCap(t *testing.T) {
	lim := defaultHTTPLimits
	lim.Idle = 200 * time.Millisecond
	lim.MaxConns = 4
	inner, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	cl := &countingListener{Listener: inner}
	srv, ln := newHTTPServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) { fmt.Fprintln(w, "ok") }), cl, lim)
	go srv.Serve(ln)
	defer srv.Close()
	addr := inner.Addr().String()

	// Each client: one request on a keep-alive connection, then wait for
	// the server to close it.
	client := func() error {
		c, err := net.Dial("tcp", addr)
		if err != nil {
			return err
		}
		defer c.Close()
		c.SetDeadline(time.Now().Add(60 * time.Second)) // guard only
		if _, err := io.WriteString(c, "GET / HTTP/1.1\r\nHost: x\r\n\r\n"); err != nil {
			return err
		}
		br := bufio.NewReader(c)
		resp, err := http.ReadResponse(br, nil)
		if err != nil {
			return fmt.Errorf("response: %w", err)
		}
		io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
		if resp.StatusCode != 200 {
			return fmt.Errorf("status %d", resp.StatusCode)
		}
		if _, err := br.ReadByte(); err != io.EOF {
			return fmt.Errorf("idle connection: read %v, want EOF (closed by the server)", err)
		}
		return nil
	}
	if err := client(); err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	errs := make(chan error, 2*lim.MaxConns)
	for i := 0; i < 2*lim.MaxConns; i++ {
		wg.Add(1)
		go func() { defer wg.Done(); errs <- client() }()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		if err != nil {
			t.Error(err)
		}
	}
	if m := cl.max.Load(); m > int64(lim.MaxConns) {
		t.Errorf("%d connections open at once, cap %d", m, lim.MaxConns)
	}
	if n := cl.accepted.Load(); n != int64(2*lim.MaxConns+1) {
		t.Errorf("%d connections accepted, want %d", n, 2*lim.MaxConns+1)
	}
}

// countingListener counts the connections accepted and the most open at
// once.
type countingListener struct {
	net.Listener
	open, max, accepted atomic.Int64
}

func (l *countingListener) Accept() (net.Conn, error) {
	c, err := l.Listener.Accept()
	if err != nil {
		return nil, err
	}
	l.accepted.Add(1)
	n := l.open.Add(1)
	for {
		m := l.max.Load()
		if n <= m || l.max.CompareAndSwap(m, n) {
			break
		}
	}
	return &countedConn{Conn: c, l: l}, nil
}

type countedConn struct {
	net.Conn
	l    *countingListener
	once sync.Once
}

func (c *countedConn) Close() error {
	c.once.Do(func() { c.l.open.Add(-1) })
	return c.Conn.Close()
}

// A compressed Arrow batch declaring far more than it carries (here
// 1,048,576 rows, 32 MiB decoded, in a few kilobytes on the wire) is
// dead-lettered as oversized, naming the decode limit (sixteen times
// max_message_bytes: 1 MiB for the test site's 64 KiB), and the asset goes
// on with the data after it. Before, it was decoded in full; at the size
// a 1 MiB message can declare, serve ran out of memory and died.
func TestServiceRefusesArrowBomb(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and the service")
	}
	h := newHarness(t)
	r := h.start(testSite(t, testSiteText), "w1")
	defer r.stop(t)
	h.publish(0, 1)
	waitFor(t, 30*time.Second, "2 estimates", func() bool { return len(h.estimates()) >= 2 })

	const rows = 1 << 20
	zero := array.NewData(arrow.PrimitiveTypes.Float64, rows, []*memory.Buffer{nil, memory.NewBufferBytes(make([]byte, 8*rows))}, nil, 0, 0)
	col := array.MakeFromData(zero)
	rec := array.NewRecordBatch(broker.BatchSchema(false), []arrow.Array{col, col, col, col}, rows)
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(rec.Schema()), ipc.WithZstd())
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	w.Close()
	rec.Release()
	if buf.Len() > 65536 {
		t.Fatalf("bomb is %d bytes, over max_message_bytes", buf.Len())
	}
	msg := nats.NewMsg("uc.data.fenwick-lane.s1")
	msg.Data = buf.Bytes()
	msg.Header.Set(broker.HeaderContentType, broker.ContentArrow)
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if _, err := h.js.PublishMsg(ctx, msg); err != nil {
		t.Fatal(err)
	}
	var m dto.Metric
	waitFor(t, 30*time.Second, "the bomb dead-lettered as oversized", func() bool {
		r.svc.met.deadLetters.WithLabelValues(broker.ReasonOversized).Write(&m)
		return m.GetCounter().GetValue() == 1
	})
	dl, err := h.js.Stream(ctx, broker.StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	// The counter moves as the worker refuses the message, just before it
	// stores the dead letter: wait for the stored one too.
	var last *jetstream.RawStreamMsg
	waitFor(t, 30*time.Second, "the bomb's dead letter stored", func() bool {
		last, err = dl.GetLastMsgForSubject(ctx, "uc.dlq.oversized")
		return err == nil
	})
	if why := last.Header.Get(broker.HeaderError); !strings.Contains(why, "decode limit of 1048576 bytes") {
		t.Errorf("dead letter says %q, want the decode limit named", why)
	}
	h.publish(1, 1)
	waitFor(t, 30*time.Second, "4 estimates after the bomb", func() bool { return len(h.estimates()) >= 4 })
}
