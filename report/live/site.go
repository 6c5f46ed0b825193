package live

import (
	"encoding"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"net"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"

	"undercurrent/calibrate"
	"undercurrent/ingest/broker"
)

// Site is a site file: the service settings, the broker and the assets
// with their sensors, conductors and alarm thresholds. See
// testdata/site/harrow-fen.toml for a commented example.
type Site struct {
	Name    string        `toml:"name"`
	Service ServiceConfig `toml:"service"`
	Broker  BrokerConfig  `toml:"broker"`
	Assets  []AssetConfig `toml:"asset"`

	// Path is the file the site was loaded from; relative calibration
	// paths are taken from its directory.
	Path string `toml:"-"`
}

// ServiceConfig is the [service] table.
type ServiceConfig struct {
	// HTTP is the API listen address; "" means 127.0.0.1:8470, "-" none.
	HTTP string `toml:"http"`
	// Token guards the state-changing endpoints (and every endpoint when
	// HTTP is not loopback); TokenEnv names an environment variable holding
	// it instead. Without a token, state-changing endpoints are refused.
	Token    string `toml:"token"`
	TokenEnv string `toml:"token_env"`
	// LeaseTTL is how long a dead worker keeps its assets before another
	// takes over; 0 means 5 s.
	LeaseTTL Duration `toml:"lease_ttl"`
	// Grace is how far (in data time) a majority of the sensors heard from
	// within Idle may run past a window's end before it is closed without
	// the others; 0 means two windows.
	Grace Duration `toml:"grace"`
	// Idle closes open windows after this much wall-clock time without any
	// data for the asset (end of a replay, all sensors silent); 0 means 5 s.
	Idle Duration `toml:"idle"`
	// ResumeIdle replaces Idle while a worker has read only data that was
	// already in the broker when it took the asset (start, takeover,
	// restart request): windows rebuilt from that backlog are closed for
	// lack of data only after this long, so that a publisher that stopped
	// with the previous holder can still fill them when it comes back.
	// Data arriving after the take-over brings back Idle. 0 means 2 min.
	ResumeIdle Duration `toml:"resume_idle"`
	// SilentAfter raises a silent alarm for the whole asset (no subject)
	// when no batch of any of its sensors has arrived for this much wall
	// time, once per silence; 0 means six times Idle.
	SilentAfter Duration `toml:"silent_after"`
	// MaxAhead refuses, as malformed, batches with a sample time more than
	// this ahead of the broker's clock when the batch was stored (sample
	// times before 2000-01-01 are always refused); 0 means 1 h.
	MaxAhead Duration `toml:"max_ahead"`
	// MaxMessageBytes is the largest sensor message accepted; larger ones
	// go to uc.dlq.oversized. 0 means 1 MiB.
	MaxMessageBytes int `toml:"max_message_bytes"`
	// Start is where an asset without a checkpoint starts reading, for
	// the assets that do not give their own; unset means "retained".
	Start Start `toml:"start"`
}

// BrokerConfig is the [broker] table.
type BrokerConfig struct {
	// Listen is the embedded NATS server's address; "" means 127.0.0.1:4222.
	Listen string `toml:"listen"`
	// MQTT is the embedded MQTT listener's address; "" means
	// 127.0.0.1:1883, "off" disables it.
	MQTT string `toml:"mqtt"`
	// Replicas of streams and buckets (3 on a three-node cluster); 0 means 1.
	Replicas int `toml:"replicas"`
	// DataRetention bounds how long raw sensor batches are kept; 0 means 24 h.
	DataRetention Duration `toml:"data_retention"`
	// DataMaxBytes bounds the raw sensor batches kept, bytes: past it the
	// oldest give way to new ones. 0 means no bound but data_retention.
	DataMaxBytes int64 `toml:"data_max_bytes"`
	// EstimateRetention bounds how long estimates are kept (stream UC_EST,
	// the history queries read), by the broker's clock when each was
	// stored; 0 means 400 days (broker.DefaultEstimateMaxAge).
	// EstimateMaxBytes bounds them in bytes, reserved in the store like
	// data_max_bytes; 0 means no bound but the age. Past either the
	// oldest estimates give way to new ones.
	EstimateRetention Duration `toml:"estimate_retention"`
	EstimateMaxBytes  int64    `toml:"estimate_max_bytes"`
	// AlarmRetention and AlarmMaxBytes are the same for the alarms
	// (stream UC_ALARM); AlarmRetention 0 means ten years
	// (broker.DefaultAlarmMaxAge).
	AlarmRetention Duration `toml:"alarm_retention"`
	AlarmMaxBytes  int64    `toml:"alarm_max_bytes"`
	// DLQMaxBytes bounds the dead letters kept (refused messages, stream
	// UC_DLQ, seven days at most), bytes: past it the oldest give way.
	// The broker reserves it in its store, and serve stops at start when
	// it cannot. 0 means dlqDefault: a quarter of data_max_bytes (at least
	// four times service.max_message_bytes, the most of a refused payload
	// a dead letter keeps) when that is set, else 256 MiB; cut to about a
	// quarter of the room left on a store that cannot reserve four times
	// that, down to 4 MiB (a store smaller still leaves the dead letters
	// unbounded).
	DLQMaxBytes int64 `toml:"dlq_max_bytes"`
	// StoreMaxBytes bounds the embedded broker's whole store, bytes; 0
	// means nats-server's default, three quarters of the disk space free
	// (plus of what the store holds), which serve raises when space is
	// freed. A value given is read at start: after changing it, restart
	// serve. Not used with --broker.
	StoreMaxBytes int64 `toml:"store_max_bytes"`
	// StoreSync is how the embedded broker forces its store to the disk:
	// "always" syncs every write before it is acknowledged (an
	// acknowledged batch survives a power cut), a duration ("10s") syncs
	// that often; "" means nats-server's default, every 2 min. Either
	// way a write is in the operating system's files before it is
	// acknowledged, so killing serve loses nothing acknowledged. Not used
	// with --broker (a cluster's sync is its nats-server configuration's).
	StoreSync string `toml:"store_sync"`
	// User and Password (or Token) are the credentials the service itself
	// uses. Users lists the accounts of the embedded server; when it is
	// non-empty, unauthenticated clients are refused.
	User     string       `toml:"user"`
	Password string       `toml:"password"`
	Token    string       `toml:"token"`
	Users    []BrokerUser `toml:"users"`
	// AllowAnonymous lets the embedded broker listen off loopback with
	// neither users nor a token (see CheckEmbeddedBroker): every client
	// that reaches it then has full rights. Off by default.
	AllowAnonymous bool `toml:"allow_anonymous"`
	// TLSCA, TLSCert and TLSKey are PEM files for reaching an external
	// broker (--broker) over TLS: the certificate authorities to trust for
	// its certificate, and the client certificate and key when it asks
	// for one (both or neither); Credentials is a NATS credentials file
	// for a broker that authenticates users that way. Relative paths are
	// taken from the site file's directory. serve's own connection to
	// its embedded broker does not use them (it is made within the
	// process, see broker.Server.ConnectInProcess).
	TLSCA       string `toml:"tls_ca"`
	TLSCert     string `toml:"tls_cert"`
	TLSKey      string `toml:"tls_key"`
	Credentials string `toml:"credentials"`
	// ListenTLSCert and ListenTLSKey are the embedded broker's own
	// certificate and key, PEM files (both or neither): with them its NATS
	// and MQTT listeners speak TLS only (tls://, MQTT over TLS).
	// ListenTLSClientCA, with them, is a PEM file of the authorities whose
	// client certificates the listeners require (mutual TLS); a listener
	// off loopback with it needs no accounts (see OpenBroker). Relative
	// paths are taken from the site file's directory. Not used with
	// --broker.
	ListenTLSCert     string `toml:"listen_tls_cert"`
	ListenTLSKey      string `toml:"listen_tls_key"`
	ListenTLSClientCA string `toml:"listen_tls_client_ca"`
}

// BrokerUser is one account of the embedded broker.
type BrokerUser struct {
	Name      string   `toml:"name"`
	Password  string   `toml:"password"`
	Publish   []string `toml:"publish"`
	Subscribe []string `toml:"subscribe"`
}

// AssetConfig is one [[asset]].
type AssetConfig struct {
	Name        string `toml:"name"`
	Description string `toml:"description"`
	// Mode is "dc" or "ac".
	Mode string `toml:"mode"`
	// Frequency is the AC frequency, Hz (mode "ac").
	Frequency float64 `toml:"frequency"`
	// Window is the estimate interval; 0 means 1 s.
	Window Duration `toml:"window"`
	// Model is "fixed" (conductor geometry given) or "commission" (fit the
	// geometry from the first Commission of data, store it, then hold it).
	Model      string   `toml:"model"`
	Commission Duration `toml:"commission"`
	// Start is where the asset starts reading while it has no checkpoint
	// (see Start); unset means the [service] value. After validation it
	// is always set.
	Start Start `toml:"start"`
	// Noise is the sensor noise per sample, nT rms; 0 estimates it from
	// the fit residuals. When given, a fit whose chi-square lies far below
	// its degrees of freedom marks the window implausible (see
	// chi2Implausible).
	Noise float64 `toml:"noise"`
	// EarthField is the range, nT, that the Earth's field seen by the
	// sensors must lie in: the uniform background fitted with the currents
	// (DC), or the median of the sensors' mean total fields (AC).
	// Outside it the window is marked implausible (fields in the wrong
	// unit: microtesla or picotesla sent as nanotesla). Unset means
	// [15000, 80000] for DC (the geomagnetic field is about 22,000 to
	// 67,000 nT at the surface, IGRF) and no check for AC, whose sensors
	// may leave the static field out; [0, 0] turns the check off (sensors
	// sending the field with a baseline taken off, gradiometers).
	EarthField []float64         `toml:"earth_field"`
	Sensors    []SensorConfig    `toml:"sensor"`
	Conductors []ConductorConfig `toml:"conductor"`
	Alarms     AlarmConfig       `toml:"alarms"`

	// fieldLo, fieldHi are EarthField after validation (fieldHi 0: off).
	fieldLo, fieldHi float64
}

// SensorConfig is one [[asset.sensor]].
type SensorConfig struct {
	Name string `toml:"name"`
	// Position is east, north, up in metres in the site's local frame.
	Position [3]float64 `toml:"position"`
	// Orientation is yaw, pitch, roll in degrees taking the sensor frame to
	// east-north-up (zero: the sensor's x, y, z already point east, north, up).
	Orientation [3]float64 `toml:"orientation"`
	// Calibration is a calibration file written by "undercurrent calibrate".
	Calibration string `toml:"calibration"`
	// Range is the sensor's range per axis, nT (0: not stated): a window
	// in which it reads within saturationMargin of +-Range on an axis is
	// clipped there, and the sensor is left out of it (saturatedAxis).
	Range float64 `toml:"range_nt"`
}

// ConductorConfig is one [[asset.conductor]].
type ConductorConfig struct {
	Name string `toml:"name"`
	// Kind is "line" (infinite, through Point along Direction) or
	// "segment" (From to To); positive current flows along the direction.
	Kind      string     `toml:"kind"`
	Point     [3]float64 `toml:"point"`
	Direction [3]float64 `toml:"direction"`
	From      [3]float64 `toml:"from"`
	To        [3]float64 `toml:"to"`
	// MaxCurrent and Step, when given, replace [asset.alarms] max_current
	// and step for this conductor alone, A (0 turns its alarm off, as it
	// does in [asset.alarms]); absent (nil), the asset's apply. A return
	// cable carrying hundreds of amperes beside a pipe carrying tens gets
	// a limit of its own. Not part of a commissioned geometry (the
	// geometry holds the fitted lines; the limits are read from the site
	// file by name).
	MaxCurrent *float64 `toml:"max_current" json:"-"`
	Step       *float64 `toml:"step" json:"-"`
	// MaxShare is the largest share of the current this conductor may
	// carry (a fraction; 0 or absent: not judged): its |I| over the sum
	// of every conductor's |I| in the asset, or over ShareOf's |I| when
	// ShareOf names another conductor (a pipe's share of a return cable's
	// current). It is judged only in windows whose denominator is above
	// ShareFloor, A (absent: 0), and at least shareMinSigmas times its
	// own sigma (shareAlarms). Read from the site file by name, as
	// MaxCurrent is. MinShare is the smallest share it may carry,
	// judged the same way (a return cable whose share falls as a leak to
	// earth beside it grows): from 0 to 1 (1 only with ShareOf), below
	// MaxShare when both are given; 0 or absent: not judged.
	MaxShare   *float64 `toml:"max_share" json:"-"`
	MinShare   *float64 `toml:"min_share" json:"-"`
	ShareOf    string   `toml:"share_of" json:"-"`
	ShareFloor *float64 `toml:"share_floor" json:"-"`

	// pointSet and dirSet say whether the site file gave point and
	// direction (model "commission", where both are optional: see
	// InverseCommissioner).
	pointSet, dirSet bool
	// fromSet and toSet say whether the site file gave from and to
	// (refused with model "commission", which fits infinite lines).
	fromSet, toSet bool
	// heldPair, on a commissioned conductor, numbers (from 1) the
	// go-and-return pair it was fitted in at the spacing of the site
	// file's points: the two lines' geometry is one centre line and the
	// turn of the axis through them, not two free lines (see
	// conductorGroups). 0: fitted as a line of its own.
	heldPair int
}

// currentDir is the direction along which the conductor's current is
// counted positive: Direction for a line, To - From for a segment.
func (c *ConductorConfig) currentDir() [3]float64 {
	if c.Kind == "segment" {
		return [3]float64{c.To[0] - c.From[0], c.To[1] - c.From[1], c.To[2] - c.From[2]}
	}
	return c.Direction
}

// conductorLimit is a conductor's alarm threshold for the key
// "max_current" or "step": its own entry's when it gives one (own true),
// else the asset's [asset.alarms] value. A conductor the site file does
// not list (a commissioned asset without entries) takes the asset's.
func (a *AssetConfig) conductorLimit(name, key string) (v float64, own bool) {
	for i := range a.Conductors {
		c := &a.Conductors[i]
		if c.Name != name {
			continue
		}
		switch {
		case key == "max_current" && c.MaxCurrent != nil:
			return *c.MaxCurrent, true
		case key == "step" && c.Step != nil:
			return *c.Step, true
		}
		break
	}
	if key == "max_current" {
		return a.Alarms.MaxCurrent, false
	}
	return a.Alarms.Step, false
}

// validateShare checks conductor i's max_share, min_share, share_of and
// share_floor (the names share_of gives are checked once all are known).
func (a *AssetConfig) validateShare(i int) error {
	c := &a.Conductors[i]
	bad := func(key, format string, args ...any) error {
		return &keyError{header: "[[asset.conductor]]", index: i, key: key,
			err: fmt.Errorf("conductor %q: "+format, append([]any{c.Name}, args...)...)}
	}
	for _, b := range []struct {
		key, want, eg string
		v             *float64
	}{{"max_share", "a fraction, 0 or more", "0.1: a tenth of the current", c.MaxShare},
		{"min_share", "a fraction from 0 to 1", "0.6: six tenths of the current", c.MinShare}} {
		if b.v == nil {
			continue
		}
		v := *b.v
		if v < 0 || math.IsNaN(v) || math.IsInf(v, 0) || b.key == "min_share" && v > 1 {
			return bad(b.key, "%s %v: want %s (%s; 0 turns the alarm off)", b.key, v, b.want, b.eg)
		}
		if v >= 1 && c.ShareOf == "" {
			return bad(b.key, "%s %v: a share of the asset's conductors' current together is at most 1; want a fraction under 1 (or share_of naming the conductor to compare with)", b.key, v)
		}
		if c.ShareOf == "" && len(a.Conductors) < 2 {
			return bad(b.key, "%s: the asset lists one conductor, whose share of the current is always 1; list the others or give share_of", b.key)
		}
	}
	if c.MaxShare != nil && c.MinShare != nil && *c.MaxShare > 0 && *c.MinShare >= *c.MaxShare {
		return bad("min_share", "min_share %v is not below max_share %v: no share could lie within both; want min_share under max_share", *c.MinShare, *c.MaxShare)
	}
	none := c.MaxShare == nil && c.MinShare == nil
	if c.ShareOf != "" {
		if none {
			return bad("share_of", "share_of %q without max_share or min_share: give the share that raises the alarm", c.ShareOf)
		}
		if c.ShareOf == c.Name {
			return bad("share_of", "share_of names the conductor itself; name another conductor, or leave share_of out for the share of all the asset's conductors")
		}
	}
	if c.ShareFloor != nil {
		if v := *c.ShareFloor; v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			return bad("share_floor", "share_floor %v: want a current in A, 0 or more", v)
		}
		if none {
			return bad("share_floor", "share_floor without max_share or min_share: give the share that raises the alarm")
		}
	}
	return nil
}

// AlarmConfig is the [asset.alarms] table; a zero threshold disables its alarm.
type AlarmConfig struct {
	// MaxCurrent: |I| of any conductor above this (A, RMS for AC), for
	// the conductors that do not give their own (ConductorConfig).
	MaxCurrent float64 `toml:"max_current"`
	// Balance names conductors whose currents should sum to zero (a go and
	// its return); MaxImbalance is the largest |sum| tolerated, A.
	Balance      []string `toml:"balance"`
	MaxImbalance float64  `toml:"max_imbalance"`
	// Step: |change| of a conductor's current between consecutive
	// windows, A, for the conductors that do not give their own.
	Step float64 `toml:"step"`
	// MaxChi2 is the reduced chi-square above which the fit is degraded;
	// 0 means 25.
	MaxChi2 float64 `toml:"max_chi2"`
}

// Duration is a time.Duration written as "1s", "500ms", "2m" in TOML.
type Duration struct{ time.Duration }

// UnmarshalText parses a Go duration string.
func (d *Duration) UnmarshalText(b []byte) error {
	v, err := time.ParseDuration(string(b))
	if err != nil {
		return fmt.Errorf("%q is not a duration such as \"1s\" or \"250ms\"", b)
	}
	d.Duration = v
	return nil
}

// MarshalText writes the duration as Go does.
func (d Duration) MarshalText() ([]byte, error) { return []byte(d.String()), nil }

// CheckEmbeddedBroker checks the [broker] settings that only the embedded
// broker uses (its [[broker.users]]); serve with --broker does not call
// it, so that accounts it ignores need not be valid.
func (s *Site) CheckEmbeddedBroker() error {
	if s.Broker.Token != "" && len(s.Broker.Users) > 0 {
		return fmt.Errorf("live: %s: broker: give users or a token, not both", s.Path)
	}
	for i, u := range s.Broker.Users {
		if u.Name == "" || u.Password == "" {
			return fmt.Errorf("live: %s: broker.users[%d]: name and password are required", s.Path, i+1)
		}
	}
	if addr := s.OpenBroker(); addr != "" && !s.Broker.AllowAnonymous {
		if s.Broker.ListenTLSCert != "" {
			addr += "; TLS without listen_tls_client_ca hides the traffic but lets any client connect"
		}
		return fmt.Errorf("live: %s: broker: the embedded broker would listen off loopback (%s) with no accounts: anyone who can reach it could read and forge sensor data, estimates and alarms and delete them all through the JetStream API. "+
			"Add [[broker.users]] (the service's own account, named by [broker] user and password, and a gateway account that may only publish uc.data.>, MQTT uc/data/... included; see testdata/site/harrow-fen.toml) or a [broker] token, "+
			"or require client certificates (listen_tls_cert, listen_tls_key and listen_tls_client_ca), or keep listen and mqtt on 127.0.0.1, or set [broker] allow_anonymous = true to accept it (a closed network)", s.Path, addr)
	}
	return nil
}

// OpenBroker returns the embedded broker's listen addresses that are off
// loopback ("listen" and "mqtt" as given, comma-separated) when it has
// neither users nor a token nor requires client certificates
// (listen_tls_client_ca), or "" when it has one of them or listens on
// loopback only. TLS without client certificates is not enough: it hides
// the traffic but lets anyone connect. A host that is not an IP address other than
// "localhost" (a host name, or "0.0.0.0" and "::", every interface)
// counts as off loopback; an empty host is the default, 127.0.0.1.
func (s *Site) OpenBroker() string {
	if len(s.Broker.Users) > 0 || s.Broker.Token != "" || s.Broker.ListenTLSClientCA != "" && s.Broker.ListenTLSCert != "" {
		return ""
	}
	var open []string
	for _, a := range []struct{ key, addr, def string }{{"listen", s.Broker.Listen, "127.0.0.1:4222"}, {"mqtt", s.Broker.MQTT, "127.0.0.1:1883"}} {
		addr := a.addr
		if addr == "" {
			addr = a.def
		}
		if addr == "off" {
			continue
		}
		host, _, err := net.SplitHostPort(addr)
		if err != nil {
			continue // refused with its key by the caller
		}
		if ip := net.ParseIP(host); host == "" || host == "localhost" || ip != nil && ip.IsLoopback() {
			continue
		}
		open = append(open, a.key+" = "+strconv.Quote(addr))
	}
	return strings.Join(open, ", ")
}

// LoadSite reads and validates a site file.
func LoadSite(path string) (*Site, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("live: %w", err)
	}
	return ParseSite(path, data)
}

// ParseSite parses and validates site-file text; name is used in messages
// and for relative paths.
func ParseSite(name string, data []byte) (*Site, error) {
	var s Site
	md, err := toml.Decode(string(data), &s)
	if err != nil {
		return nil, decodeError(name, data, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		keys := make([]string, len(und))
		for i, k := range und {
			keys[i] = k.String()
		}
		return nil, fmt.Errorf("live: %s: unknown key %s", name, strings.Join(keys, ", "))
	}
	// Which conductors give point and direction (optional for model
	// "commission"); a [3]float64 cannot tell an absent key from zeros.
	var given struct {
		Assets []struct {
			Conductors []struct {
				Point     *[3]float64 `toml:"point"`
				Direction *[3]float64 `toml:"direction"`
				From      *[3]float64 `toml:"from"`
				To        *[3]float64 `toml:"to"`
			} `toml:"conductor"`
		} `toml:"asset"`
	}
	if _, err := toml.Decode(string(data), &given); err == nil && len(given.Assets) == len(s.Assets) {
		for i, ga := range given.Assets {
			for j, gc := range ga.Conductors {
				if j < len(s.Assets[i].Conductors) {
					c := &s.Assets[i].Conductors[j]
					c.pointSet, c.dirSet = gc.Point != nil, gc.Direction != nil
					c.fromSet, c.toSet = gc.From != nil, gc.To != nil
				}
			}
		}
	}
	s.Path = name
	if err := s.validate(); err != nil {
		// A [service] or [broker] value refused here is named at its
		// line and column, as the decoder's refusals are (decodeError).
		var ke *keyError
		if errors.As(err, &ke) {
			if line, col := ke.where(data); line > 0 {
				return nil, fmt.Errorf("live: %s:%d:%d: %w", name, line, col, err)
			}
		}
		return nil, fmt.Errorf("live: %s: %w", name, err)
	}
	if err := s.checkCalibrations(data); err != nil {
		return nil, err
	}
	return &s, nil
}

// checkCalibrations reads every sensor's calibration file, so that one
// that is missing or bad is found with the site file, before serve starts
// its broker: before, it was found only when the asset's worker started,
// after the embedded broker was listening, without the site file's name
// or line. The error is "SITE:LINE:COL: calibration FILE: cannot read:
// REASON" (or the calibration reader's own message for a file that is
// read but is not a calibration).
func (s *Site) checkCalibrations(data []byte) error {
	for ai := range s.Assets {
		a := &s.Assets[ai]
		for si := range a.Sensors {
			sen := &a.Sensors[si]
			if sen.Calibration == "" {
				continue
			}
			_, err := calibrate.Load(sen.Calibration)
			if err == nil {
				continue
			}
			where := s.Path
			if line, col := assetKey(data, ai, "sensor", si, "calibration"); line > 0 {
				where = fmt.Sprintf("%s:%d:%d", s.Path, line, col)
			}
			var pe *fs.PathError
			if errors.As(err, &pe) && pe.Path == sen.Calibration {
				return fmt.Errorf("live: %s: asset %s sensor %s: calibration %s: cannot read: %v", where, a.Name, sen.Name, sen.Calibration, pe.Err)
			}
			return fmt.Errorf("live: %s: asset %s sensor %s: calibration: %w", where, a.Name, sen.Name, err)
		}
	}
	return nil
}

func (s *Site) validate() error {
	if s.Service.HTTP == "" {
		s.Service.HTTP = "127.0.0.1:8470"
	}
	if s.Service.LeaseTTL.Duration == 0 {
		s.Service.LeaseTTL.Duration = 5 * time.Second
	}
	if s.Service.Idle.Duration == 0 {
		s.Service.Idle.Duration = 5 * time.Second
	}
	if s.Service.ResumeIdle.Duration == 0 {
		s.Service.ResumeIdle.Duration = 2 * time.Minute
	}
	if s.Service.MaxAhead.Duration == 0 {
		s.Service.MaxAhead.Duration = time.Hour
	}
	if s.Service.SilentAfter.Duration == 0 {
		s.Service.SilentAfter.Duration = 6 * s.Service.Idle.Duration
	}
	for _, d := range []struct {
		key string
		v   time.Duration
	}{{"idle", s.Service.Idle.Duration}, {"resume_idle", s.Service.ResumeIdle.Duration}, {"max_ahead", s.Service.MaxAhead.Duration}, {"silent_after", s.Service.SilentAfter.Duration}} {
		if d.v < 0 {
			return keyErrorf("service."+d.key, "service.%s %v: want a positive duration", d.key, d.v)
		}
	}
	if s.Service.MaxMessageBytes < 0 || s.Service.MaxMessageBytes > maxMessageBytes {
		// Before, a negative limit was kept and every sensor batch went to
		// uc.dlq.oversized ("1450 bytes, limit -5"); a huge one defeated
		// the memory bound the key is for.
		return keyErrorf("service.max_message_bytes", "service.max_message_bytes %d: want a positive size in bytes up to %d (64 MiB; 0 or absent means 1 MiB)", s.Service.MaxMessageBytes, maxMessageBytes)
	}
	if s.Service.MaxMessageBytes == 0 {
		s.Service.MaxMessageBytes = 1 << 20
	}
	if s.Service.TokenEnv != "" && s.Service.Token == "" {
		s.Service.Token = os.Getenv(s.Service.TokenEnv)
	}
	if s.Service.LeaseTTL.Duration < 500*time.Millisecond {
		return keyErrorf("service.lease_ttl", "service.lease_ttl %v: want at least 500ms", s.Service.LeaseTTL.Duration)
	}
	if _, _, err := net.SplitHostPort(s.Service.HTTP); err != nil && s.Service.HTTP != "-" {
		return keyErrorf("service.http", "service.http %q: want host:port", s.Service.HTTP)
	}
	if s.Broker.Listen == "" {
		s.Broker.Listen = "127.0.0.1:4222"
	}
	if s.Broker.MQTT == "" {
		s.Broker.MQTT = "127.0.0.1:1883"
	}
	if s.Broker.Replicas == 0 {
		s.Broker.Replicas = 1
	}
	if s.Broker.DataMaxBytes < 0 {
		return keyErrorf("broker.data_max_bytes", "broker.data_max_bytes %d: want 0 (no bound) or more", s.Broker.DataMaxBytes)
	}
	for _, r := range []struct {
		key string
		v   time.Duration
	}{{"estimate_retention", s.Broker.EstimateRetention.Duration}, {"alarm_retention", s.Broker.AlarmRetention.Duration}} {
		// Under the broker's duplicate window (1 h) a takeover's repeat
		// of an estimate or alarm would no longer be recognised.
		if r.v != 0 && r.v < time.Hour {
			return keyErrorf("broker."+r.key, "broker.%s %v: want at least 1h (the window in which the broker recognises a repeated estimate or alarm), or 0 for the default", r.key, r.v)
		}
	}
	for _, b := range []struct {
		key string
		v   int64
	}{{"estimate_max_bytes", s.Broker.EstimateMaxBytes}, {"alarm_max_bytes", s.Broker.AlarmMaxBytes}} {
		if b.v != 0 && b.v < 1<<20 {
			return keyErrorf("broker."+b.key, "broker.%s %d: want 0 (no bound but the age) or at least 1048576 (1 MiB)", b.key, b.v)
		}
	}
	if s.Broker.StoreMaxBytes < 0 {
		return keyErrorf("broker.store_max_bytes", "broker.store_max_bytes %d: want 0 (the server's default) or more", s.Broker.StoreMaxBytes)
	}
	if _, _, err := s.Broker.SyncSetting(); err != nil {
		return err
	}
	minDLQ := s.dlqMin()
	switch {
	case s.Broker.DLQMaxBytes < 0:
		return keyErrorf("broker.dlq_max_bytes", "broker.dlq_max_bytes %d: want 0 (the default) or more", s.Broker.DLQMaxBytes)
	case s.Broker.DLQMaxBytes > 0 && s.Broker.DLQMaxBytes < minDLQ:
		return keyErrorf("broker.dlq_max_bytes", "broker.dlq_max_bytes %d: want at least %d, four times service.max_message_bytes (the most of a refused message a dead letter keeps)", s.Broker.DLQMaxBytes, minDLQ)
	}
	if s.Broker.Replicas < 1 || s.Broker.Replicas > 5 {
		return keyErrorf("broker.replicas", "broker.replicas %d: want 1 to 5", s.Broker.Replicas)
	}
	if (s.Broker.TLSCert == "") != (s.Broker.TLSKey == "") {
		key := "broker.tls_cert"
		if s.Broker.TLSCert == "" {
			key = "broker.tls_key"
		}
		return keyErrorf(key, "broker: give tls_cert and tls_key together (a client certificate and its key), or neither")
	}
	if (s.Broker.ListenTLSCert == "") != (s.Broker.ListenTLSKey == "") {
		given, missing := "broker.listen_tls_cert", "broker.listen_tls_key"
		if s.Broker.ListenTLSCert == "" {
			given, missing = missing, given
		}
		return keyErrorf(given, "%s without %s: give the embedded broker's certificate and its key together, or neither", given, missing)
	}
	if s.Broker.ListenTLSClientCA != "" && s.Broker.ListenTLSCert == "" {
		return keyErrorf("broker.listen_tls_client_ca", "broker.listen_tls_client_ca needs listen_tls_cert and listen_tls_key: client certificates are checked in a TLS handshake")
	}
	for _, f := range []*string{&s.Broker.TLSCA, &s.Broker.TLSCert, &s.Broker.TLSKey, &s.Broker.Credentials, &s.Broker.ListenTLSCert, &s.Broker.ListenTLSKey, &s.Broker.ListenTLSClientCA} {
		if *f != "" && !filepath.IsAbs(*f) {
			*f = filepath.Join(filepath.Dir(s.Path), *f)
		}
	}
	if s.Service.Start.kind == startUnset {
		s.Service.Start = Start{kind: StartRetained}
	}
	if len(s.Assets) == 0 {
		return fmt.Errorf("no [[asset]] tables")
	}
	seen := map[string]bool{}
	for i := range s.Assets {
		a := &s.Assets[i]
		if err := broker.ValidToken(a.Name); err != nil {
			return &keyError{header: "[[asset]]", asset: i, key: "name", err: fmt.Errorf("asset %d: name: %w", i+1, err)}
		}
		if seen[a.Name] {
			return &keyError{header: "[[asset]]", asset: i, key: "name", err: fmt.Errorf("asset %q listed twice", a.Name)}
		}
		seen[a.Name] = true
		if a.Start.kind == startUnset {
			a.Start = s.Service.Start
		}
		if err := a.validate(filepath.Dir(s.Path)); err != nil {
			var ke *keyError
			if errors.As(err, &ke) {
				// a.validate numbers the asset's own tables; the file's
				// line is found within the i-th [[asset]].
				ke.asset = i
			}
			return fmt.Errorf("asset %q: %w", a.Name, err)
		}
	}
	return nil
}

func (a *AssetConfig) validate(dir string) error {
	switch a.Mode {
	case "", "dc":
		a.Mode = "dc"
	case "ac":
		if !(a.Frequency > 0) || a.Frequency > 1e5 {
			return assetErrorf("[[asset]]", 0, "frequency", []string{"mode"}, "frequency %v: mode \"ac\" needs a frequency in Hz", a.Frequency)
		}
	default:
		return assetErrorf("[[asset]]", 0, "mode", nil, "mode %q: want \"dc\" or \"ac\"", a.Mode)
	}
	if a.Window.Duration == 0 {
		a.Window.Duration = time.Second
	}
	if a.Window.Duration < time.Millisecond || a.Window.Duration > maxWindow {
		return &keyError{header: "[[asset]]", key: "window",
			err: fmt.Errorf("window %v: want 1ms to %v", a.Window.Duration, maxWindow)}
	}
	if a.Mode == "ac" && a.Window.Seconds()*a.Frequency < 2 {
		return assetErrorf("[[asset]]", 0, "window", []string{"frequency"}, "window %v holds fewer than two cycles at %v Hz", a.Window.Duration, a.Frequency)
	}
	switch a.Model {
	case "", "fixed":
		a.Model = "fixed"
		if len(a.Conductors) == 0 {
			return assetErrorf("[[asset]]", 0, "model", nil, "model \"fixed\" needs at least one [[asset.conductor]]")
		}
	case "commission":
		if a.Commission.Duration == 0 {
			a.Commission.Duration = time.Minute
		}
		if a.Commission.Duration < a.Window.Duration {
			return assetErrorf("[[asset]]", 0, "commission", []string{"window"}, "commission %v is shorter than one window", a.Commission.Duration)
		}
	default:
		return assetErrorf("[[asset]]", 0, "model", nil, "model %q: want \"fixed\" or \"commission\"", a.Model)
	}
	if a.Noise < 0 || math.IsNaN(a.Noise) {
		return assetErrorf("[[asset]]", 0, "noise", nil, "noise %v: want a non-negative value in nT", a.Noise)
	}
	switch f := a.EarthField; {
	case f == nil && a.Mode == "dc":
		a.fieldLo, a.fieldHi = defaultEarthField[0], defaultEarthField[1]
	case f == nil:
	case len(f) != 2 || !(f[0] >= 0) || !(f[1] >= f[0]) || math.IsInf(f[1], 0) || f[1] == f[0] && f[0] != 0:
		return assetErrorf("[[asset]]", 0, "earth_field", nil, "earth_field %v: want [low, high] in nT with 0 <= low < high, or [0, 0] for no check", f)
	default:
		a.fieldLo, a.fieldHi = f[0], f[1]
	}
	if len(a.Sensors) == 0 {
		return assetErrorf("[[asset]]", 0, "name", nil, "no [[asset.sensor]] tables")
	}
	names := map[string]bool{}
	for i := range a.Sensors {
		s := &a.Sensors[i]
		if err := broker.ValidToken(s.Name); err != nil {
			return &keyError{header: "[[asset.sensor]]", index: i, key: "name", err: fmt.Errorf("sensor %d: %w", i+1, err)}
		}
		if names[s.Name] {
			return assetErrorf("[[asset.sensor]]", i, "name", nil, "sensor %q listed twice", s.Name)
		}
		names[s.Name] = true
		if err := s.checkPlace(i); err != nil {
			return err
		}
		if !(s.Range >= 0) || math.IsInf(s.Range, 0) {
			return assetErrorf("[[asset.sensor]]", i, "range_nt", nil, "sensor %q: range_nt %v: want the sensor's range in nT, above 0 (or 0: not stated)", s.Name, s.Range)
		}
		if s.Calibration != "" && !filepath.IsAbs(s.Calibration) {
			s.Calibration = filepath.Join(dir, s.Calibration)
		}
	}
	cnames := map[string]bool{}
	for i := range a.Conductors {
		c := &a.Conductors[i]
		if c.Name == "" {
			c.Name = fmt.Sprintf("c%d", i+1)
		}
		if cnames[c.Name] {
			return assetErrorf("[[asset.conductor]]", i, "name", nil, "conductor %q listed twice", c.Name)
		}
		cnames[c.Name] = true
		if err := c.checkPlace(i); err != nil {
			return err
		}
		for _, l := range []struct {
			key string
			v   *float64
		}{{"max_current", c.MaxCurrent}, {"step", c.Step}} {
			if l.v != nil && (*l.v < 0 || math.IsNaN(*l.v)) {
				return &keyError{header: "[[asset.conductor]]", index: i, key: l.key,
					err: fmt.Errorf("conductor %q: %s %v: want a threshold in A, 0 or more (0 turns the alarm off for this conductor)", c.Name, l.key, *l.v)}
			}
		}
		if err := a.validateShare(i); err != nil {
			return err
		}
		if a.Model == "commission" {
			// The geometry is fitted; the entry names the conductor and
			// may say roughly where it runs (point: to match the fitted
			// lines to the names and to give a go-and-return pair its
			// spacing) and which way its current is counted (direction).
			if c.dirSet && c.Direction == ([3]float64{}) {
				return assetErrorf("[[asset.conductor]]", i, "direction", nil, "conductor %q: direction is zero", c.Name)
			}
			// Commissioning fits infinite lines: a segment's kind or
			// ends would be ignored, and finite bars (a bend, risers)
			// fitted as lines that miss them.
			for _, k := range []struct {
				key string
				set bool
			}{{"kind", c.Kind != "" && c.Kind != "line"}, {"from", c.fromSet}, {"to", c.toSet}} {
				if k.set {
					what := k.key
					if k.key == "kind" {
						what = fmt.Sprintf("kind %q", c.Kind)
					}
					return &keyError{header: "[[asset.conductor]]", index: i, key: k.key,
						err: fmt.Errorf("conductor %q: %s: model \"commission\" fits infinite lines (give point and direction, or neither); "+
							"hold finite bars (a bend, risers) where they run with model = \"fixed\" and kind = \"segment\" (from and to at their ends)", c.Name, what)}
				}
			}
			if c.pointSet != a.Conductors[0].pointSet {
				with, without := a.Conductors[0].Name, c.Name
				if c.pointSet {
					with, without = without, with
				}
				return assetErrorf("[[asset.conductor]]", i, "point", nil, "conductor %q gives a point and %q does not: with model \"commission\" give every conductor's point (where it runs, roughly) or none", with, without)
			}
			continue
		}
		switch c.Kind {
		case "", "line":
			c.Kind = "line"
			if c.Direction == ([3]float64{}) {
				return assetErrorf("[[asset.conductor]]", i, "direction", nil, "conductor %q: direction is zero", c.Name)
			}
		case "segment":
			if c.From == c.To {
				return assetErrorf("[[asset.conductor]]", i, "to", []string{"from"}, "conductor %q: from and to are the same point", c.Name)
			}
		default:
			return assetErrorf("[[asset.conductor]]", i, "kind", nil, "conductor %q: kind %q: want \"line\" or \"segment\"", c.Name, c.Kind)
		}
	}
	if a.Model == "fixed" {
		if err := a.checkClearance(); err != nil {
			return err
		}
	}
	for i := range a.Conductors {
		// share_of is checked once every conductor's name is known.
		c := &a.Conductors[i]
		if c.ShareOf != "" && !cnames[c.ShareOf] {
			return &keyError{header: "[[asset.conductor]]", index: i, key: "share_of",
				err: fmt.Errorf("conductor %q: share_of names conductor %q, which is not listed in this asset", c.Name, c.ShareOf)}
		}
	}
	for _, n := range a.Alarms.Balance {
		if !cnames[n] && a.Model == "fixed" {
			return assetErrorf("[asset.alarms]", 0, "balance", nil, "alarms.balance names conductor %q, which is not listed", n)
		}
	}
	if a.Alarms.MaxChi2 == 0 {
		a.Alarms.MaxChi2 = 25
	}
	for _, t := range []struct {
		key string
		v   float64
	}{{"max_current", a.Alarms.MaxCurrent}, {"max_imbalance", a.Alarms.MaxImbalance}, {"step", a.Alarms.Step}, {"max_chi2", a.Alarms.MaxChi2}} {
		if t.v < 0 || math.IsNaN(t.v) {
			return assetErrorf("[asset.alarms]", 0, t.key, nil, "alarms: thresholds must be non-negative (got %s %v)", t.key, t.v)
		}
	}
	return nil
}

// Bounds on a site file's values, so that a slip (nan, 1e15, "1000000h")
// is refused with the file rather than found as a service that runs and
// never estimates: a NaN sensor orientation or conductor point made every
// window fail ("phasor east is (NaN+NaNi)") with nothing naming the file.
const (
	// maxSiteCoord bounds a position's coordinates in the site's local
	// frame, m.
	maxSiteCoord = 1e6
	// maxAngle bounds an orientation angle, degrees.
	maxAngle = 360
	// minClearance is the least distance from a sensor to a conductor's
	// axis, m: the field of a line is unbounded on it.
	minClearance = 0.01
	// maxWindow bounds an asset's window.
	maxWindow = 24 * time.Hour
	// maxMessageBytes bounds service.max_message_bytes (a decoded
	// message may take 16 times as much memory: maxDecoded).
	maxMessageBytes = 64 << 20
)

// checkPlace refuses a sensor position or orientation that is not finite
// or is out of bounds; i is the sensor's place in its asset.
func (s *SensorConfig) checkPlace(i int) error {
	for _, k := range []struct {
		key   string
		v     [3]float64
		bound float64
		want  string
	}{
		{"position", s.Position, maxSiteCoord, "east, north, up in metres, each within +-1e6"},
		{"orientation", s.Orientation, maxAngle, "yaw, pitch, roll in degrees, each within +-360"},
	} {
		for _, x := range k.v {
			if !(math.Abs(x) <= k.bound) {
				return &keyError{header: "[[asset.sensor]]", index: i, key: k.key,
					err: fmt.Errorf("sensor %q: %s %v: want %s", s.Name, k.key, k.v, k.want)}
			}
		}
	}
	return nil
}

// checkPlace refuses a conductor's point, direction, from or to that is
// not finite or is out of bounds; i is its place in its asset.
func (c *ConductorConfig) checkPlace(i int) error {
	for _, k := range []struct {
		key string
		v   [3]float64
	}{{"point", c.Point}, {"direction", c.Direction}, {"from", c.From}, {"to", c.To}} {
		for _, x := range k.v {
			if !(math.Abs(x) <= maxSiteCoord) {
				return &keyError{header: "[[asset.conductor]]", index: i, key: k.key,
					err: fmt.Errorf("conductor %q: %s %v: want east, north, up in metres, each finite and within +-1e6", c.Name, k.key, k.v)}
			}
		}
	}
	return nil
}

// checkClearance refuses a sensor on a conductor (model "fixed"): its
// field there is unbounded, and a sensor placed at a conductor's point is
// a slip in the file.
func (a *AssetConfig) checkClearance() error {
	for i := range a.Sensors {
		s := &a.Sensors[i]
		for _, c := range a.Conductors {
			var d float64
			switch c.Kind {
			case "line":
				d = distToLine(s.Position, c.Point, c.Direction, false)
			case "segment":
				d = distToLine(s.Position, c.From, sub3(c.To, c.From), true)
			default:
				continue
			}
			if d < minClearance {
				return &keyError{header: "[[asset.sensor]]", index: i, key: "position",
					err: fmt.Errorf("sensor %q: position %v is %.3g m from conductor %q: want at least %g m (a sensor on a conductor sees no field it can be fitted to)", s.Name, s.Position, d, c.Name, minClearance)}
			}
		}
	}
	return nil
}

func sub3(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }

// distToLine is the distance from p to the line through o along d, or,
// when seg, to the segment from o to o+d.
func distToLine(p, o, d [3]float64, seg bool) float64 {
	v := sub3(p, o)
	dd := d[0]*d[0] + d[1]*d[1] + d[2]*d[2]
	if dd == 0 {
		return math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
	}
	t := (v[0]*d[0] + v[1]*d[1] + v[2]*d[2]) / dd
	if seg {
		t = max(0, min(1, t))
	}
	r := [3]float64{v[0] - t*d[0], v[1] - t*d[1], v[2] - t*d[2]}
	return math.Sqrt(r[0]*r[0] + r[1]*r[1] + r[2]*r[2])
}

// dlqDefault is the dead-letter bound aimed at when dlq_max_bytes is 0
// (see BrokerConfig.DLQMaxBytes): a quarter of data_max_bytes, at least
// four times max_message_bytes, when data_max_bytes is set; else 0, the
// broker's default.
func (s *Site) dlqDefault() int64 {
	if s.Broker.DataMaxBytes == 0 {
		return 0
	}
	return max(s.Broker.DataMaxBytes/4, 4*int64(s.Service.MaxMessageBytes))
}

// dlqMin is the least dead-letter bound: four times max_message_bytes,
// the most of a refused payload a dead letter keeps. dlq_max_bytes takes
// no less, and the default bound is cut to no less on a small store.
func (s *Site) dlqMin() int64 { return 4 * int64(s.Service.MaxMessageBytes) }

// maxDecoded is the most memory one sensor message may take to decode:
// sixteen times max_message_bytes. A compressed Arrow stream declaring more
// (a few kilobytes can declare gigabytes) is dead-lettered as oversized
// before the memory is allocated.
func (s *Site) maxDecoded() int64 { return 16 * int64(s.Service.MaxMessageBytes) }

// defaultEarthField is a DC asset's earth_field when the site file gives
// none, nT: the geomagnetic field at the Earth's surface is about 22,000
// to 67,000 nT (IGRF, from memory), widened for local anomalies; a field
// in microtesla or picotesla sent as nanotesla is 1000 times off.
var defaultEarthField = [2]float64{15000, 80000}

// StartKind says which kind of start point a Start is.
type StartKind int

// The kinds of Start.
const (
	startUnset    StartKind = iota // not given in the file
	StartRetained                  // everything still retained in the stream
	StartNew                       // only data stored after the first start
	StartAt                        // data stored at or after a given time
	StartBack                      // data stored within a duration before the first start
)

// Start is where an asset's worker begins reading UC_DATA when the asset
// has no checkpoint (its first start, or an asset newly added to the site
// file). Once a checkpoint exists it always wins. In the site file it is
// written
//
//	start = "retained"              # all data the stream still holds (default)
//	start = "new"                   # only data stored after the first start
//	start = "24h"                   # data stored up to 24 h before the first start
//	start = "2026-12-01T06:00:00Z"  # data stored from this RFC 3339 time on
//
// Times are the broker's storage times of the sensor batches (when they
// reached the broker), not the sensor clocks.
type Start struct {
	kind StartKind
	at   time.Time     // StartAt
	back time.Duration // StartBack
	text string        // as written, for durations and times
}

// ParseStart parses a start value as written in the site file. Durations
// must be positive; times must not lie in the future.
func ParseStart(v string) (Start, error) {
	switch v {
	case "retained":
		return Start{kind: StartRetained}, nil
	case "new":
		return Start{kind: StartNew}, nil
	}
	if d, err := time.ParseDuration(v); err == nil {
		if d <= 0 {
			return Start{}, fmt.Errorf("start %q: a duration back from the first start must be positive", v)
		}
		return Start{kind: StartBack, back: d, text: v}, nil
	}
	if t, err := time.Parse(time.RFC3339Nano, v); err == nil {
		if t.After(time.Now()) {
			return Start{}, fmt.Errorf("start %q is in the future; use \"new\" to read only data from now on", v)
		}
		return Start{kind: StartAt, at: t, text: v}, nil
	}
	return Start{}, fmt.Errorf("start %q: want \"retained\", \"new\", a duration such as \"24h\" or an RFC 3339 time such as \"2026-12-01T06:00:00Z\"", v)
}

// Kind returns the kind of start point (StartRetained for an unset Start).
func (s Start) Kind() StartKind {
	if s.kind == startUnset {
		return StartRetained
	}
	return s.kind
}

// String writes the start as the site file does.
func (s Start) String() string {
	if s.text != "" {
		return s.text
	}
	switch s.kind {
	case StartNew:
		return "new"
	case StartAt:
		return s.at.Format(time.RFC3339Nano)
	case StartBack:
		return s.back.String()
	}
	return "retained"
}

// UnmarshalText parses a site-file value with ParseStart.
func (s *Start) UnmarshalText(b []byte) error {
	v, err := ParseStart(string(b))
	if err != nil {
		return err
	}
	*s = v
	return nil
}

// MarshalText writes the start as String does.
func (s Start) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// source maps the start to the broker's subscription choices (see
// broker.SourceSettings): All for "retained", From for a time (a
// duration counts back from first, the asset's first start), neither for
// "new", which follows only messages stored from now on.
func (s Start) source(first time.Time) broker.SourceSettings {
	switch s.kind {
	case StartNew:
		return broker.SourceSettings{}
	case StartAt:
		return broker.SourceSettings{From: s.at}
	case StartBack:
		return broker.SourceSettings{From: first.Add(-s.back)}
	}
	return broker.SourceSettings{All: true}
}

// startOwner names what a bad start value belongs to ("service: " or
// `asset "name": `) for a parse error at lastKey, so that the message
// names the asset as well as the line. Other keys give "".
func startOwner(lastKey string, data []byte) string {
	switch lastKey {
	case "service.start":
		return "service: "
	case "asset.start":
	default:
		return ""
	}
	// The decoder stops at the first bad value in file order; find the
	// asset holding it in a second, lenient decode of the same text.
	var raw struct {
		Assets []struct {
			Name  string `toml:"name"`
			Start any    `toml:"start"`
		} `toml:"asset"`
	}
	if _, err := toml.Decode(string(data), &raw); err != nil {
		return ""
	}
	for i, a := range raw.Assets {
		if a.Start == nil {
			continue
		}
		v := fmt.Sprint(a.Start)
		if tm, ok := a.Start.(encoding.TextMarshaler); ok { // an unquoted TOML date-time
			b, _ := tm.MarshalText()
			v = string(b)
		}
		if _, err := ParseStart(v); err != nil {
			if a.Name == "" {
				return fmt.Sprintf("asset %d: ", i+1)
			}
			return fmt.Sprintf("asset %q: ", a.Name)
		}
	}
	return ""
}

// Asset returns the asset called name, or nil.
func (s *Site) Asset(name string) *AssetConfig {
	for i := range s.Assets {
		if s.Assets[i].Name == name {
			return &s.Assets[i]
		}
	}
	return nil
}

// SyncSetting reads store_sync: every write synced (always), or the
// interval between syncs (0: nats-server's default).
func (b *BrokerConfig) SyncSetting() (always bool, every time.Duration, err error) {
	switch v := strings.TrimSpace(b.StoreSync); {
	case v == "":
		return false, 0, nil
	case strings.EqualFold(v, "always"):
		return true, 0, nil
	default:
		d, err := time.ParseDuration(v)
		if err != nil || d <= 0 {
			return false, 0, keyErrorf("broker.store_sync", "broker.store_sync %q: want \"always\" (sync every write before it is acknowledged) or a positive duration such as \"10s\" (sync that often)", b.StoreSync)
		}
		return false, d, nil
	}
}

// keyError is a [service] or [broker] value, or a conductor's alarm
// setting, that validate refuses after decoding; key is its dotted name ("broker.store_sync"), by which
// ParseSite finds its line and column in the file. Before, such values
// were refused naming the file only.
type keyError struct {
	key string
	err error
	// header and index, when header is set, are the table the key is in
	// ("[[asset]]", "[[asset.conductor]]", "[asset.alarms]", "[broker]")
	// and its place (0-based) among the tables of that header, counted
	// within its asset for an asset's tables; key is then the key within
	// it, and alt the keys to name in its stead, in order, when it is not
	// in the file (frequency absent: the mode asking for it). An asset's
	// table with none of them names the table's header line.
	header string
	index  int
	alt    []string
	// asset is the asset's place (0-based) among the [[asset]] tables,
	// for a header of an asset's table; set by Site.validate.
	asset int
}

func (e *keyError) Error() string { return e.err.Error() }
func (e *keyError) Unwrap() error { return e.err }

// keyErrorf returns a keyError for key with the message format, args.
func keyErrorf(key, format string, args ...any) error {
	return &keyError{key: key, err: fmt.Errorf(format, args...)}
}

// assetErrorf returns a keyError for key (or, absent, the first of alt
// given) in the index-th table of header within the asset being
// validated, with the message format, args.
func assetErrorf(header string, index int, key string, alt []string, format string, args ...any) error {
	return &keyError{header: header, index: index, key: key, alt: alt, err: fmt.Errorf(format, args...)}
}

// where returns the line and column the keyError names in the site file
// text, 0, 0 when it cannot be found.
func (e *keyError) where(data []byte) (line, col int) {
	header, index, key := e.header, e.index, e.key
	if header == "" {
		var table string
		table, key, _ = strings.Cut(e.key, ".")
		header, index = "["+table+"]", 0
	}
	name := strings.Trim(header, "[]")
	if name == "asset" || strings.HasPrefix(name, "asset.") {
		return assetKey(data, e.asset, strings.TrimPrefix(strings.TrimPrefix(name, "asset"), "."), index, append([]string{key}, e.alt...)...)
	}
	for _, k := range append([]string{key}, e.alt...) {
		if line, col := tableKey(data, header, index, k); line > 0 {
			return line, col
		}
	}
	return 0, 0
}
