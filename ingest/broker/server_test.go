package broker

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

func startTestServer(t *testing.T, cfg ServerConfig) *Server {
	t.Helper()
	if cfg.StoreDir == "" {
		cfg.StoreDir = t.TempDir()
	}
	s, err := StartServer(cfg)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(s.Shutdown)
	return s
}

func connectJS(t *testing.T, url string, auth Auth) (*nats.Conn, jetstream.JetStream) {
	t.Helper()
	nc, err := Connect(url, "test", auth)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, err := jetstream.New(nc)
	if err != nil {
		t.Fatal(err)
	}
	return nc, js
}

// brokerJS skips the test under -short, starts a test broker without
// MQTT, connects to it and returns a context of 30 s, cancelled when the
// test ends, with the connection's JetStream.
func brokerJS(t *testing.T) (context.Context, jetstream.JetStream) {
	t.Helper()
	if testing.Short() {
		t.Skip("starts a broker")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	t.Cleanup(cancel)
	return ctx, js
}

// streamInfo looks up the stream name and reads its info, failing the
// test on an error.
func streamInfo(t *testing.T, ctx context.Context, js jetstream.JetStream, name string) (jetstream.Stream, *jetstream.StreamInfo) {
	t.Helper()
	st, err := js.Stream(ctx, name)
	if err != nil {
		t.Fatal(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	return st, info
}

// Reliability (issue 6): stop and restart the embedded broker; nothing
// acknowledged is lost.
func TestRestartKeepsAcknowledged(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker twice")
	}
	dir := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	s1, err := StartServer(ServerConfig{StoreDir: dir, MQTTPort: -1})
	if err != nil {
		t.Fatal(err)
	}
	nc, err := Connect(s1.ClientURL(), "test", Auth{})
	if err != nil {
		t.Fatal(err)
	}
	js, _ := jetstream.New(nc)
	if _, err := Setup(ctx, js, StreamSettings{}); err != nil {
		t.Fatal(err)
	}
	const n = 40
	for i := 0; i < n; i++ {
		b := testBatch(10)
		for j := range b.Time {
			b.Time[j] += float64(i)
		}
		enc := ContentJSON
		if i%2 == 1 {
			enc = ContentArrow
		}
		if _, err := PublishBatch(ctx, js, b, enc); err != nil {
			t.Fatal(err)
		}
	}
	// A retried publish of an acknowledged batch is stored once.
	if ack, err := PublishBatch(ctx, js, testBatch(10), ContentJSON); err != nil || !ack.Duplicate {
		t.Fatalf("republish: ack %+v err %v, want a duplicate", ack, err)
	}
	nc.Close()
	s1.Shutdown()

	s2 := startTestServer(t, ServerConfig{StoreDir: dir, MQTTPort: -1})
	_, js2 := connectJS(t, s2.ClientURL(), Auth{})
	st, err := js2.Stream(ctx, StreamData)
	if err != nil {
		t.Fatal(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if info.State.Msgs != n {
		t.Fatalf("after restart the data stream holds %d messages, want %d", info.State.Msgs, n)
	}
	for seq := uint64(1); seq <= n; seq++ {
		m, err := st.GetMsg(ctx, seq)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Decode(m.Subject, m.Header.Get(HeaderContentType), m.Data)
		if err != nil {
			t.Fatalf("seq %d: %v", seq, err)
		}
		if want := 1764650000 + float64(seq-1); b.Time[0] != want {
			t.Fatalf("seq %d starts at %v, want %v", seq, b.Time[0], want)
		}
	}
}

// lastMsg polls UC_DATA for the last message on subject: the broker
// acknowledges an MQTT QoS 1 publication before the stream has stored
// the NATS message it maps to.
func lastMsg(ctx context.Context, js jetstream.JetStream, subject string) (*jetstream.RawStreamMsg, error) {
	st, err := js.Stream(ctx, StreamData)
	if err != nil {
		return nil, err
	}
	for {
		m, err := st.GetLastMsgForSubject(ctx, subject)
		if err == nil {
			return m, nil
		}
		select {
		case <-ctx.Done():
			return nil, fmt.Errorf("%s: %w (last error %v)", subject, ctx.Err(), err)
		case <-time.After(20 * time.Millisecond):
		}
	}
}

// mqttPublish is a minimal MQTT 3.1.1 client (OASIS MQTT Version 3.1.1,
// sections 3.1 CONNECT, 3.2 CONNACK, 3.3 PUBLISH, 3.4 PUBACK): it connects,
// publishes one QoS 1 message and waits for the PUBACK.
func mqttPublish(addr, user, pass, topic string, payload []byte) error {
	conn, err := net.DialTimeout("tcp", addr, 5*time.Second)
	if err != nil {
		return err
	}
	defer conn.Close()
	conn.SetDeadline(time.Now().Add(10 * time.Second))
	str := func(s string) []byte { return append([]byte{byte(len(s) >> 8), byte(len(s))}, s...) }
	remLen := func(n int) []byte {
		var out []byte
		for {
			d := byte(n % 128)
			n /= 128
			if n > 0 {
				d |= 0x80
			}
			out = append(out, d)
			if n == 0 {
				return out
			}
		}
	}
	flags := byte(0x02) // clean session
	body := append(str("MQTT"), 4, 0, 0, 60)
	body = append(body, str("gateway-test")...)
	if user != "" {
		flags |= 0xC0
		body = append(body, str(user)...)
		body = append(body, str(pass)...)
	}
	body[7] = flags
	pkt := append([]byte{0x10}, remLen(len(body))...)
	if _, err := conn.Write(append(pkt, body...)); err != nil {
		return err
	}
	r := bufio.NewReader(conn)
	ack := make([]byte, 4)
	if _, err := io.ReadFull(r, ack); err != nil {
		return fmt.Errorf("connack: %w", err)
	}
	if ack[0] != 0x20 || ack[3] != 0 {
		return fmt.Errorf("connect refused, return code %d", ack[3])
	}
	body = append(str(topic), 0, 1)
	body = append(body, payload...)
	pkt = append([]byte{0x32}, remLen(len(body))...)
	if _, err := conn.Write(append(pkt, body...)); err != nil {
		return err
	}
	if _, err := io.ReadFull(r, ack); err != nil {
		return fmt.Errorf("puback: %w", err)
	}
	if ack[0] != 0x40 {
		return fmt.Errorf("unexpected packet 0x%x, want PUBACK", ack[0])
	}
	return nil
}

func TestMQTTLandsOnDataSubject(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	s := startTestServer(t, ServerConfig{})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	if _, err := Setup(ctx, js, StreamSettings{}); err != nil {
		t.Fatal(err)
	}
	arrowPayload, err := EncodeArrow(testBatch(5))
	if err != nil {
		t.Fatal(err)
	}
	if err := mqttPublish(s.MQTTAddr(), "", "", "uc/data/kestrel-moor/m2", arrowPayload); err != nil {
		t.Fatal(err)
	}
	m, err := lastMsg(ctx, js, "uc.data.kestrel-moor.m2")
	if err != nil {
		t.Fatal(err)
	}
	b, err := Decode(m.Subject, m.Header.Get(HeaderContentType), m.Data)
	if err != nil {
		t.Fatal(err)
	}
	if b.Len() != 5 || b.Sensor != "m2" {
		t.Fatalf("decoded %d samples for %q", b.Len(), b.Sensor)
	}
}

// Reliability (issue 6): with auth configured, an unauthenticated client can
// neither publish sensor data nor read results, and a gateway user that may
// only publish data cannot read estimates.
func TestAuthentication(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	users := []User{
		{Name: "pipeline", Password: "harrow-fen-service"},
		{Name: "gateway", Password: "fenwick-gw", Publish: []string{"uc.data.>"}},
	}
	s := startTestServer(t, ServerConfig{Users: users})
	if _, err := Connect(s.ClientURL(), "anon", Auth{}); err == nil {
		t.Fatal("unauthenticated NATS client connected")
	}
	if _, err := Connect(s.ClientURL(), "wrong", Auth{User: "gateway", Password: "nope"}); err == nil {
		t.Fatal("wrong password accepted")
	}
	if err := mqttPublish(s.MQTTAddr(), "", "", "uc/data/a/s", []byte(`{}`)); err == nil {
		t.Fatal("unauthenticated MQTT client published")
	}
	// The gateway may publish data but not subscribe to estimates.
	errc := make(chan error, 4)
	gw, err := nats.Connect(s.ClientURL(), nats.UserInfo("gateway", "fenwick-gw"),
		nats.ErrorHandler(func(_ *nats.Conn, _ *nats.Subscription, err error) { errc <- err }))
	if err != nil {
		t.Fatal(err)
	}
	defer gw.Close()
	if err := gw.Publish("uc.data.a.s", []byte("{}")); err != nil {
		t.Fatal(err)
	}
	if _, err := gw.SubscribeSync("uc.est.>"); err != nil {
		t.Fatal(err)
	}
	gw.Flush()
	select {
	case err := <-errc:
		if !errors.Is(err, nats.ErrPermissionViolation) && !strings.Contains(strings.ToLower(err.Error()), "permissions violation") {
			t.Fatalf("unexpected error %v", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("gateway subscription to estimates was not refused")
	}
	// The pipeline user has full access.
	_, js := connectJS(t, s.ClientURL(), Auth{User: "pipeline", Password: "harrow-fen-service"})
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	// The gateway, allowed only to publish data, can do so over MQTT.
	payload, _ := EncodeJSON(testBatch(3))
	if err := mqttPublish(s.MQTTAddr(), "gateway", "fenwick-gw", "uc/data/fenwick-lane/s1", payload); err != nil {
		t.Fatalf("gateway MQTT publish: %v", err)
	}
	if _, err := lastMsg(ctx, js, "uc.data.fenwick-lane.s1"); err != nil {
		t.Fatalf("gateway's MQTT message not stored: %v", err)
	}
}

// On one replica the estimate and alarm streams allow direct get (their
// queries position themselves by single-message lookups); the data stream,
// read by consumers only, does not need it. A stream made before the
// setting is updated to it by the next Setup.
func TestSetupDirectGet(t *testing.T) {
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: StreamEstimates, Subjects: []string{EstimatePrefix + ".>"}, Storage: jetstream.MemoryStorage}); err != nil {
		t.Fatal(err)
	}
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	for name, want := range map[string]bool{StreamEstimates: true, StreamAlarms: true, StreamData: false, StreamDeadLetter: false} {
		st, err := js.Stream(ctx, name)
		if err != nil {
			t.Fatal(err)
		}
		if got := st.CachedInfo().Config.AllowDirect; got != want {
			t.Errorf("stream %s: AllowDirect %v, want %v", name, got, want)
		}
	}
}

// ServerConfig's SyncAlways and SyncInterval reach the JetStream store:
// the server was started with nats-server's default (a sync every two
// minutes) and no way to ask for more.
func TestServerStoreSync(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	for _, c := range []ServerConfig{{SyncAlways: true}, {SyncInterval: 5 * time.Second}} {
		c.MQTTPort = -1
		s := startTestServer(t, c)
		js := s.ns.JetStreamConfig()
		if js == nil || js.SyncAlways != c.SyncAlways || (c.SyncInterval > 0 && js.SyncInterval != c.SyncInterval) {
			t.Errorf("asked for sync always %v every %v; the store runs with %+v", c.SyncAlways, c.SyncInterval, js)
		}
		s.Shutdown()
	}
}
