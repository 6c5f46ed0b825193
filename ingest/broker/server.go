package broker

import (
	"crypto/tls"
	"crypto/x509"
	"encoding/pem"
	"fmt"
	"net"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"
)

// User is one broker account user. Publish and Subscribe list the subjects
// the user may publish to and subscribe to (wildcards allowed); both empty
// means no restriction. A sensor gateway typically gets Publish
// ["uc.data.>"] and nothing else.
type User struct {
	Name      string
	Password  string
	Publish   []string
	Subscribe []string
}

// ServerConfig configures the embedded broker. The zero value of each
// field is documented beside it.
type ServerConfig struct {
	// Host to listen on; "" means 127.0.0.1 (loopback only).
	Host string
	// Port for NATS clients; 0 picks a free port.
	Port int
	// MQTTPort for MQTT clients; 0 picks a free port, -1 disables MQTT.
	MQTTPort int
	// StoreDir is the JetStream file-store directory; required.
	StoreDir string
	// Name is the server name (JetStream and MQTT need one); "" means "undercurrent".
	Name string
	// Users enables user/password authentication when non-empty.
	Users []User
	// Token enables token authentication when non-empty (not with Users).
	Token string
	// MaxPayload is the largest message the broker accepts, bytes; 0 means 8 MiB.
	MaxPayload int32
	// MaxStore bounds the JetStream file store, bytes; 0 means what
	// nats-server gives a store without a bound (three quarters of the disk
	// space free at start plus of what the store holds), set explicitly so
	// that GrowStore can raise it once space is freed.
	MaxStore int64
	// SyncAlways makes the JetStream store sync (fsync) every write
	// before it is acknowledged, so that an acknowledged message survives
	// a power cut or an operating system crash; SyncInterval, when
	// SyncAlways is not set, is how often the store is synced, 0 meaning
	// nats-server's default, 2 min. Without SyncAlways an acknowledged
	// message is in the store's files (the operating system's cache), so
	// it survives the process being killed but not a power cut before
	// the next sync.
	SyncAlways   bool
	SyncInterval time.Duration
	// TLSCert and TLSKey are PEM files of the listeners' certificate and
	// its key (both or neither): with them the NATS and MQTT listeners
	// speak TLS only, and a plaintext client is refused. TLSClientCA, a
	// PEM file of certificate authorities, also requires every client to
	// present a certificate signed by one of them (mutual TLS), checked in
	// the handshake; without it any client may connect over TLS. See
	// ListenerTLS.
	TLSCert, TLSKey, TLSClientCA string
	// Logf, when non-nil, receives the server's notices and warnings, and
	// its errors unless Errorf is set.
	Logf func(format string, args ...any)
	// Errorf, when non-nil, receives the server's errors and fatal errors
	// (a listener that cannot be opened, a store that cannot be used).
	Errorf func(format string, args ...any)
}

// Server is a running embedded NATS server with JetStream.
type Server struct {
	ns   *server.Server
	cfg  ServerConfig
	lock *os.File // the store's lock file (see lockStore)

	mu        sync.Mutex
	opts      *server.Options // as the server runs them (see setMaxStore)
	autoStore bool            // MaxStore was derived from the disk (GrowStore)
}

// StartServer starts an embedded NATS server with JetStream on a file store
// and, unless disabled, its MQTT listener, and waits until it accepts
// connections.
func StartServer(cfg ServerConfig) (*Server, error) {
	if cfg.StoreDir == "" {
		return nil, fmt.Errorf("broker: start server: no store directory")
	}
	if cfg.Token != "" && len(cfg.Users) > 0 {
		return nil, fmt.Errorf("broker: start server: give users or a token, not both")
	}
	if cfg.Host == "" {
		cfg.Host = "127.0.0.1"
	}
	if cfg.Name == "" {
		cfg.Name = "undercurrent"
	}
	if cfg.MaxPayload == 0 {
		cfg.MaxPayload = 8 << 20
	}
	maxStore, autoStore := cfg.MaxStore, cfg.MaxStore == 0
	if autoStore {
		if n, err := autoStoreLimit(cfg.StoreDir, dirBytes(cfg.StoreDir)); err == nil && n > 0 {
			maxStore = n
		} else {
			autoStore = false // nats-server takes its own guess
		}
	}
	tlsConf, err := ListenerTLS(cfg.TLSCert, cfg.TLSKey, cfg.TLSClientCA)
	if err != nil {
		return nil, fmt.Errorf("broker: start server: %w", err)
	}
	opts := &server.Options{
		ServerName:         cfg.Name,
		Host:               cfg.Host,
		Port:               cfg.Port,
		JetStream:          true,
		StoreDir:           cfg.StoreDir,
		MaxPayload:         cfg.MaxPayload,
		NoSigs:             true,
		Authorization:      cfg.Token,
		JetStreamMaxMemory: 256 << 20,
		JetStreamMaxStore:  maxStore,
		SyncAlways:         cfg.SyncAlways,
		SyncInterval:       cfg.SyncInterval,
	}
	if opts.Port == 0 {
		opts.Port = server.RANDOM_PORT
	}
	if tlsConf != nil {
		opts.TLS, opts.TLSConfig, opts.TLSTimeout = true, tlsConf, 2
		opts.TLSVerify = cfg.TLSClientCA != ""
	}
	for _, u := range cfg.Users {
		su := &server.User{Username: u.Name, Password: u.Password}
		if len(u.Publish) > 0 || len(u.Subscribe) > 0 {
			su.Permissions = &server.Permissions{
				Publish:   &server.SubjectPermission{Allow: u.Publish},
				Subscribe: &server.SubjectPermission{Allow: u.Subscribe},
			}
			if len(u.Subscribe) == 0 {
				su.Permissions.Subscribe = &server.SubjectPermission{Deny: []string{">"}}
			}
			if len(u.Publish) == 0 {
				su.Permissions.Publish = &server.SubjectPermission{Deny: []string{">"}}
			}
		}
		opts.Users = append(opts.Users, su)
	}
	if cfg.MQTTPort >= 0 {
		opts.MQTT.Host = cfg.Host
		opts.MQTT.Port = cfg.MQTTPort
		if opts.MQTT.Port == 0 {
			opts.MQTT.Port = server.RANDOM_PORT
		}
		if tlsConf != nil {
			opts.MQTT.TLSConfig, opts.MQTT.TLSTimeout = tlsConf.Clone(), 2
		}
	}
	lock, err := lockStore(cfg.StoreDir)
	if err != nil {
		return nil, fmt.Errorf("broker: start server: %w", err)
	}
	ns, err := server.NewServer(opts)
	if err != nil {
		unlock(lock)
		return nil, fmt.Errorf("broker: start server: %w", err)
	}
	// The server reports a listener it cannot open (a port in use) or a
	// store it cannot use as a fatal error and never becomes ready: the
	// first one is the reason StartServer gives, at once.
	fatal := make(chan string, 1)
	ns.SetLoggerV2(&logAdapter{logf: cfg.Logf, errorf: cfg.Errorf, fatal: fatal}, false, false, false)
	ns.Start()
	fail := func(why string) (*Server, error) {
		ns.Shutdown()
		ns.WaitForShutdown()
		unlock(lock)
		return nil, fmt.Errorf("broker: start server: %s", why)
	}
	for deadline := time.Now().Add(10 * time.Second); !ns.ReadyForConnections(50 * time.Millisecond); {
		select {
		case why := <-fatal:
			return fail(why)
		default:
		}
		if time.Now().After(deadline) {
			ports := fmt.Sprintf("NATS port %d", cfg.Port)
			if cfg.MQTTPort >= 0 {
				ports += fmt.Sprintf(", MQTT port %d", cfg.MQTTPort)
			}
			return fail("not ready after 10 s (" + ports + ")")
		}
	}
	return &Server{ns: ns, cfg: cfg, lock: lock, opts: opts, autoStore: autoStore}, nil
}

// ListenerTLS reads the embedded broker's listener certificate and key
// (PEM files, both or neither) and, when clientCA is given, the PEM file
// of the authorities a client's certificate must be signed by (mutual
// TLS). It returns nil, nil when no certificate is given. An error names
// the file that is missing, unreadable or holds no usable PEM block, and
// a key that does not match its certificate.
func ListenerTLS(certFile, keyFile, clientCA string) (*tls.Config, error) {
	switch {
	case certFile == "" && keyFile == "" && clientCA == "":
		return nil, nil
	case certFile == "" || keyFile == "":
		return nil, fmt.Errorf("listener TLS: give the certificate and its key together (got certificate %q, key %q)", certFile, keyFile)
	}
	certPEM, err := readPEM(certFile, "certificate", "CERTIFICATE")
	if err != nil {
		return nil, err
	}
	keyPEM, err := readPEM(keyFile, "key", "PRIVATE KEY")
	if err != nil {
		return nil, err
	}
	pair, err := tls.X509KeyPair(certPEM, keyPEM)
	if err != nil {
		return nil, fmt.Errorf("listener TLS: certificate %s with key %s: %w", certFile, keyFile, err)
	}
	conf := &tls.Config{MinVersion: tls.VersionTLS12, Certificates: []tls.Certificate{pair}}
	if clientCA != "" {
		caPEM, err := readPEM(clientCA, "client CA", "CERTIFICATE")
		if err != nil {
			return nil, err
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(caPEM) {
			return nil, fmt.Errorf("listener TLS: client CA %s: no certificate could be parsed", clientCA)
		}
		conf.ClientCAs, conf.ClientAuth = pool, tls.RequireAndVerifyClientCert
	}
	return conf, nil
}

// readPEM reads a PEM file and checks that it holds a block whose type
// ends with want ("CERTIFICATE", "PRIVATE KEY"); what names the file's
// role in errors.
func readPEM(file, what, want string) ([]byte, error) {
	data, err := os.ReadFile(file)
	if err != nil {
		return nil, fmt.Errorf("listener TLS: %s: %w", what, err)
	}
	for rest := data; ; {
		var b *pem.Block
		b, rest = pem.Decode(rest)
		if b == nil {
			return nil, fmt.Errorf("listener TLS: %s %s: no PEM %s block in it", what, file, want)
		}
		if strings.HasSuffix(b.Type, want) {
			return data, nil
		}
	}
}

// unlock releases a store lock taken by lockStore.
func unlock(f *os.File) {
	if f != nil {
		f.Close()
	}
}

// ClientURL returns the URL clients connect to: nats://, or tls:// when
// the listener has a certificate.
//
// A client in the same process can connect without the listener (and its
// TLS and client certificates) through InProcess.
func (s *Server) ClientURL() string { return s.ns.ClientURL() }

// ConnectInProcess connects a client in this process to s as Connect
// does, with auth's user and password, token or credentials, but without
// going through the listener: no TLS is spoken (nothing leaves the
// process, and auth's CA and certificate files are not used), so serve
// reaches its own broker whatever name the listener's certificate holds
// and whether or not client certificates are required.
func (s *Server) ConnectInProcess(name string, auth Auth) (*nats.Conn, error) {
	auth.CAFile, auth.CertFile, auth.KeyFile = "", "", ""
	auth.inProcess = s.ns
	return Connect(strings.Replace(s.ClientURL(), "tls://", "nats://", 1), name, auth)
}

// MQTTAddr returns host:port of the MQTT listener, or "" when disabled.
func (s *Server) MQTTAddr() string {
	if s.cfg.MQTTPort < 0 {
		return ""
	}
	v, err := s.ns.Varz(nil)
	if err != nil || v.MQTT.Port <= 0 {
		return ""
	}
	return net.JoinHostPort(s.cfg.Host, strconv.Itoa(v.MQTT.Port))
}

// Shutdown stops the server and waits until it has stopped; JetStream
// data already acknowledged stays in the store directory.
func (s *Server) Shutdown() {
	s.ns.Shutdown()
	s.ns.WaitForShutdown()
	unlock(s.lock)
	s.lock = nil
}

// logAdapter passes the embedded server's log to ServerConfig.Logf and
// Errorf, and its first fatal error to fatal.
type logAdapter struct {
	logf, errorf func(format string, args ...any)
	fatal        chan string
}

func (l *logAdapter) log(format string, v ...any) {
	if l.logf != nil {
		l.logf(format, v...)
	}
}

func (l *logAdapter) error(format string, v ...any) {
	if l.errorf != nil {
		l.errorf(format, v...)
	} else {
		l.log(format, v...)
	}
}

func (l *logAdapter) Noticef(format string, v ...any) { l.log("nats: "+format, v...) }
func (l *logAdapter) Warnf(format string, v ...any)   { l.log("nats warning: "+format, v...) }
func (l *logAdapter) Errorf(format string, v ...any)  { l.error("nats error: "+format, v...) }
func (l *logAdapter) Debugf(format string, v ...any)  {}
func (l *logAdapter) Tracef(format string, v ...any)  {}

func (l *logAdapter) Fatalf(format string, v ...any) {
	l.error("nats fatal: "+format, v...)
	select {
	case l.fatal <- fmt.Sprintf(format, v...):
	default:
	}
}
