package broker

import (
	"fmt"
	"net"
	"os"
	"strconv"
	"sync"
	"time"

	"github.com/nats-io/nats-server/v2/server"
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

// unlock releases a store lock taken by lockStore.
func unlock(f *os.File) {
	if f != nil {
		f.Close()
	}
}

// ClientURL returns the nats:// URL clients connect to.
func (s *Server) ClientURL() string { return s.ns.ClientURL() }

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
