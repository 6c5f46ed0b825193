package broker

import (
	"fmt"
	"net"
	"strconv"
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
	// Logf, when non-nil, receives the server's notices and errors.
	Logf func(format string, args ...any)
}

// Server is a running embedded NATS server with JetStream.
type Server struct {
	ns  *server.Server
	cfg ServerConfig
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
	opts := &server.Options{
		ServerName:         cfg.Name,
		Host:               cfg.Host,
		Port:               cfg.Port,
		JetStream:          true,
		StoreDir:           cfg.StoreDir,
		MaxPayload:         cfg.MaxPayload,
		NoSigs:             true,
		NoLog:              cfg.Logf == nil,
		Authorization:      cfg.Token,
		JetStreamMaxMemory: 256 << 20,
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
	ns, err := server.NewServer(opts)
	if err != nil {
		return nil, fmt.Errorf("broker: start server: %w", err)
	}
	if cfg.Logf != nil {
		ns.SetLoggerV2(logAdapter(cfg.Logf), false, false, false)
	}
	ns.Start()
	if !ns.ReadyForConnections(10 * time.Second) {
		ns.Shutdown()
		return nil, fmt.Errorf("broker: start server: not ready after 10 s (port %d busy?)", cfg.Port)
	}
	return &Server{ns: ns, cfg: cfg}, nil
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
}

type logAdapter func(format string, args ...any)

func (l logAdapter) Noticef(format string, v ...any) { l("nats: "+format, v...) }
func (l logAdapter) Warnf(format string, v ...any)   { l("nats warning: "+format, v...) }
func (l logAdapter) Fatalf(format string, v ...any)  { l("nats fatal: "+format, v...) }
func (l logAdapter) Errorf(format string, v ...any)  { l("nats error: "+format, v...) }
func (l logAdapter) Debugf(format string, v ...any)  {}
func (l logAdapter) Tracef(format string, v ...any)  {}
