package live

import (
	"context"
	"crypto/subtle"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"math"
	"net"
	"net/http"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
	"github.com/prometheus/client_golang/prometheus/promhttp"
)

// Handler returns the HTTP API:
//
//	GET  /healthz                          200 while the process runs
//	GET  /readyz                           200 when connected to the broker with streams set up and its store taking writes
//	GET  /metrics                          Prometheus metrics (private registry)
//	GET  /api/v1/assets                    assets, their settings and which worker holds each
//	GET  /api/v1/assets/{asset}            the asset as listed, with its last restart request
//	GET  /api/v1/assets/{asset}/latest     latest estimate
//	GET  /api/v1/assets/{asset}/history    estimates with from <= start < to, oldest first (?from=&to=&limit=&revisions=&format=json|csv)
//	GET  /api/v1/alarms                    alarms by window start, oldest first (?asset=&kind=&from=&to=&since=&limit=&revisions=&format=json)
//	POST /api/v1/assets/{asset}/recommission  forget a commissioned geometry (token)
//	POST /api/v1/assets/{asset}/restart    re-read from ?start= or {"start": ...} (token; 202, see Restarting an asset in the package doc)
//
// While the connection to the broker is not up (lost, reconnecting),
// every /api/v1 request answers 503 {"error": "broker unreachable ..."}
// at once, with Retry-After: 5; a request the broker fails while
// connected answers 502.
//
// from and to are window starts on the sensor clock (Unix seconds for live
// data), given as seconds or RFC 3339, the range half-open: from <= start
// < to (from later than to is refused, and so is a parameter the endpoint
// does not take);
// format is json (the default) or csv for history, json only for alarms;
// kind is one of AlarmKinds; since (alarms) is when the broker
// stored the alarm, in the same forms, for clients that poll for new ones.
// A parameter given with an empty value (from=, to=, since=, limit=) is
// refused rather than read as absent.
// A listing returns at most limit results (default DefaultQueryLimit, at
// most MaxQueryLimit): the first ones of the range, oldest first. A
// listing the limit cut short says so in its headers: X-Uc-More: true and
// X-Uc-Next-From, the start of the first window left out, to ask again
// from (alarms of that window already returned come again). Queries are
// positioned in the stored streams by the broker and read only about as
// many messages as they return (see History). A window read again after
// a restart is listed once, at its highest read revision ("revision" in
// the JSON, 0 before the first restart, written when 0 too), and the alarms
// listed for it are those that revision raised, none when it raised
// none (until the re-read reaches the window, its older alarms stay);
// revisions=all lists every revision, sorted by start and then revision
// (revisions=latest is the default). The CSV history has one row per window and conductor;
// the revision column and then the geometry's share of the sigmas
// (current_sigma_geometry_a, phase_sigma_geometry_deg) come after the columns it always had,
// so readers that take columns by position or by name keep working.
// Read endpoints are open when the API listens on
// loopback; otherwise, and for every state-changing endpoint, the request
// needs "Authorization: Bearer TOKEN" with the site's service token.
// Every error, including an unknown path (404) and a method the path
// does not take (405, with an Allow header), is JSON {"error": MESSAGE,
// "kind": KIND} (see httpError).
func (s *Service) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("GET /healthz", func(w http.ResponseWriter, r *http.Request) { fmt.Fprintln(w, "ok") })
	mux.HandleFunc("GET /readyz", s.readyz)
	mux.Handle("GET /metrics", s.read(promhttp.HandlerFor(s.met.reg, promhttp.HandlerOpts{Registry: s.met.reg})))
	mux.Handle("GET /api/v1/assets", s.read(s.needBroker(http.HandlerFunc(s.assets))))
	mux.Handle("GET /api/v1/assets/{asset}", s.read(s.needBroker(http.HandlerFunc(s.asset))))
	mux.Handle("GET /api/v1/assets/{asset}/latest", s.read(s.needBroker(http.HandlerFunc(s.latest))))
	mux.Handle("GET /api/v1/assets/{asset}/history", s.read(s.needBroker(http.HandlerFunc(s.history))))
	mux.Handle("GET /api/v1/alarms", s.read(s.needBroker(http.HandlerFunc(s.alarmList))))
	mux.Handle("POST /api/v1/assets/{asset}/recommission", s.write(s.needBroker(http.HandlerFunc(s.recommission))))
	mux.Handle("POST /api/v1/assets/{asset}/restart", s.write(s.needBroker(http.HandlerFunc(s.restart))))
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h, pattern := mux.Handler(r)
		if pattern == "" { // no route: the mux's own 404 or 405 (which sets Allow)
			h.ServeHTTP(&routeErrorWriter{ResponseWriter: w, r: r}, r)
			return
		}
		mux.ServeHTTP(w, r)
	})
}

// routeErrorWriter turns the plain-text 404 and 405 of http.ServeMux
// into JSON errors, keeping the status and the headers set before it
// (Allow on 405).
type routeErrorWriter struct {
	http.ResponseWriter
	r       *http.Request
	written bool
}

func (e *routeErrorWriter) WriteHeader(code int) {
	if e.written {
		return
	}
	e.written = true
	e.Header().Del("X-Content-Type-Options")
	msg := http.StatusText(code)
	switch code {
	case http.StatusNotFound:
		msg = fmt.Sprintf("no endpoint %s (see GET /api/v1/assets and /api/v1/alarms)", e.r.URL.Path)
	case http.StatusMethodNotAllowed:
		msg = fmt.Sprintf("method %s is not allowed on %s; allowed: %s", e.r.Method, e.r.URL.Path, e.Header().Get("Allow"))
	}
	httpError(e.ResponseWriter, code, msg)
}

func (e *routeErrorWriter) Write(p []byte) (int, error) {
	if !e.written {
		e.WriteHeader(http.StatusOK)
	}
	return len(p), nil // the mux's plain-text body is replaced by the JSON one
}

func (s *Service) readyz(w http.ResponseWriter, r *http.Request) {
	select {
	case <-s.ready:
	default:
		http.Error(w, "starting", http.StatusServiceUnavailable)
		return
	}
	if s.nc.Status() != nats.CONNECTED {
		http.Error(w, "broker "+s.nc.Status().String(), http.StatusServiceUnavailable)
		return
	}
	if failed := s.storeFailed.Load(); failed != nil {
		http.Error(w, "broker store failed a write, restart serve: "+*failed, http.StatusServiceUnavailable)
		return
	}
	if full := s.storeFull.Load(); full != nil {
		http.Error(w, "broker store full: "+*full, http.StatusServiceUnavailable)
		return
	}
	if e := s.beatErr.Load(); e != nil {
		http.Error(w, "heartbeat failing, leases cannot be renewed: "+*e, http.StatusServiceUnavailable)
		return
	}
	fmt.Fprintln(w, "ready")
}

func (s *Service) loopback() bool {
	host, _, err := net.SplitHostPort(s.HTTPAddr())
	if err != nil {
		return false
	}
	ip := net.ParseIP(host)
	return host == "localhost" || (ip != nil && ip.IsLoopback())
}

func (s *Service) authorised(r *http.Request) bool {
	tok := s.site.Service.Token
	if tok == "" {
		return false
	}
	got, ok := strings.CutPrefix(r.Header.Get("Authorization"), "Bearer ")
	return ok && subtle.ConstantTimeCompare([]byte(got), []byte(tok)) == 1
}

func (s *Service) read(h http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if !s.loopback() && !s.authorised(r) {
			msg := "a bearer token is required off loopback"
			if s.site.Service.Token == "" {
				msg += "; this server has no service token configured (set [service] token, or token_env"
				if e := s.site.Service.TokenEnv; e != "" {
					msg += " and $" + e
				}
				msg += ", in the site file), so no request can be authorised"
			}
			httpError(w, http.StatusUnauthorized, msg)
			return
		}
		h.ServeHTTP(w, r)
	})
}

func (s *Service) write(h http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if s.site.Service.Token == "" {
			httpError(w, http.StatusForbidden, "no service token is configured, so state-changing requests are disabled")
			return
		}
		if !s.authorised(r) {
			httpError(w, http.StatusUnauthorized, "missing or wrong bearer token")
			return
		}
		h.ServeHTTP(w, r)
	})
}

// brokerError answers 502 for a request the broker failed, and logs it
// at WARN with the request, so that an operator can see why a dashboard
// or an alarm poller got a 502.
func (s *Service) brokerError(w http.ResponseWriter, r *http.Request, err error) {
	s.log.Warn("API request failed in the broker", "method", r.Method, "path", r.URL.Path, "query", r.URL.RawQuery, "status", http.StatusBadGateway, "err", err)
	httpError(w, http.StatusBadGateway, err.Error())
}

// httpError writes the API's error object: {"error": MESSAGE, "kind":
// KIND}. "error" stays the message string it has always been, and every
// member is a string, so that current clients keep working, those that
// decode the body into a map of strings too (a number beside it would
// break them: the HTTP status is in the response's status line); kind
// sorts the failure as the command line's --json error object does (its
// "kind"; see errorKindOf).
func httpError(w http.ResponseWriter, code int, msg string) {
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(code)
	json.NewEncoder(w).Encode(apiError{Error: msg, Kind: errorKindOf(code)})
}

// apiError is the body of an API error (httpError).
type apiError struct {
	Error string `json:"error"`
	Kind  string `json:"kind"`
}

// errorKindOf sorts an error status: "usage" for a request the API does
// not take as it is (400, 404, 405, 409, 413: a parameter, an unknown
// asset or path, a method, a conflicting request, a body too large),
// "auth" for a missing or wrong token (401, 403), "unavailable" for a
// service that cannot answer now (503: the broker unreachable, Retry-After
// set) and "upstream" for a request the broker failed (502); "internal"
// otherwise.
func errorKindOf(code int) string {
	switch code {
	case http.StatusBadRequest, http.StatusNotFound, http.StatusMethodNotAllowed, http.StatusConflict, http.StatusRequestEntityTooLarge:
		return "usage"
	case http.StatusUnauthorized, http.StatusForbidden:
		return "auth"
	case http.StatusServiceUnavailable:
		return "unavailable"
	case http.StatusBadGateway:
		return "upstream"
	}
	return "internal"
}

// Headers of a listing cut at its limit (see markMore), and the version
// of the history CSV (see writeEstimatesCSV).
const (
	HeaderSchemaVersion = "X-Uc-Schema-Version"
	HeaderMore          = "X-Uc-More"
	HeaderNextFrom      = "X-Uc-Next-From"
)

// markMore marks a listing that its limit cut short: more results follow
// in the range, the first of them in the window starting at next (Unix
// seconds), which is the from to ask again with. Alarms of that window
// already returned come again.
func markMore(w http.ResponseWriter, next float64) {
	w.Header().Set(HeaderMore, "true")
	w.Header().Set(HeaderNextFrom, strconv.FormatFloat(next, 'f', -1, 64))
}

func writeJSON(w http.ResponseWriter, v any) {
	w.Header().Set("Content-Type", "application/json")
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.Encode(v)
}

// AssetInfo is one entry of GET /api/v1/assets.
type AssetInfo struct {
	Name        string `json:"name"`
	Description string `json:"description,omitempty"`
	Mode        string `json:"mode"`
	// Frequency is deprecated for FrequencyHz, the same value (to go
	// with APISchemaVersion 2).
	Frequency   float64 `json:"frequency,omitempty"`
	FrequencyHz float64 `json:"frequency_hz,omitempty"`
	// Window is the window's length as the site file writes it ("1s");
	// WindowS the same in seconds, a number. Window is deprecated (to go
	// with APISchemaVersion 2): in an estimate and an alarm "window" is
	// the window's index.
	Window     string   `json:"window"`
	WindowS    float64  `json:"window_s"`
	Model      string   `json:"model"`
	Sensors    []string `json:"sensors"`
	Conductors []string `json:"conductors"`
	Worker     string   `json:"worker,omitempty"` // lease holder
	// Start is the configured start point ("retained", "new", a duration
	// back or an RFC 3339 time), StartPolicy the same. Start is
	// deprecated (to go with APISchemaVersion 2): in an estimate and an
	// alarm "start" is the window's start, Unix seconds.
	Start       string `json:"start"`
	StartPolicy string `json:"start_policy"`
	// Restart is the last restart request (Applied nil while pending).
	Restart *RestartStatus `json:"restart,omitempty"`
	// Stopped, when this worker holds the asset, says why its processing
	// is stopped until the site file is mended and serve restarted (a
	// commissioning the readings cannot do without more in the site file).
	Stopped string `json:"stopped,omitempty"`
	// Commissioning, when this worker holds a "commission" asset not yet
	// commissioned because the readings do not resolve its conductors'
	// fields (their currents off, or too small), says so: "waiting for
	// current: ...". Its windows are held until the current flows. When
	// the fit fails otherwise it says "failing: <reason> (try N of at
	// most M, ...)" (or "waiting for a geometry the sensors can fix: ..."
	// with the tries), from the first failed fit until the asset
	// commissions or stops.
	Commissioning string `json:"commissioning,omitempty"`
	// Geometry is the geometry a "commission" asset holds, once
	// commissioned: each conductor's point, direction, depth and azimuth
	// with their sigmas from the commissioning fit.
	Geometry *CommissionedGeometry `json:"geometry,omitempty"`
	// Caution is NetCurrentCaution on an AC asset: its currents are the
	// net currents the sensors see, induced currents in bonded metal
	// around or beside the conductors included.
	Caution string `json:"caution,omitempty"`
	// Thresholds are the alarm thresholds this worker's site file gives
	// the asset; Calibrations the calibration file of each sensor that
	// has one; SettingsDigest the digest of the asset's settings (its
	// thresholds, sensors, calibration files' contents, conductors) that
	// this worker's heartbeat carries. SettingsDiffer lists the other
	// live workers whose digest for the asset differs: their alarms for
	// it are judged by other settings (see the WARN in their logs).
	Thresholds     *AssetThresholds  `json:"thresholds"`
	Calibrations   map[string]string `json:"calibrations,omitempty"`
	SettingsDigest string            `json:"settings_digest"`
	SettingsDiffer []SettingsDiffer  `json:"settings_differ,omitempty"`
}

func (s *Service) assetInfo(ctx context.Context, a *AssetConfig) (AssetInfo, error) {
	ai := AssetInfo{Name: a.Name, Description: a.Description, Mode: a.Mode, Frequency: a.Frequency,
		FrequencyHz: a.Frequency, Window: a.Window.String(), WindowS: a.Window.Seconds(), Model: a.Model,
		Sensors: []string{}, Conductors: []string{}, Start: a.Start.String(), StartPolicy: a.Start.String()}
	if a.Mode == "ac" {
		ai.Caution = NetCurrentCaution
	}
	for _, sn := range a.Sensors {
		ai.Sensors = append(ai.Sensors, sn.Name)
		if sn.Calibration != "" {
			if ai.Calibrations == nil {
				ai.Calibrations = map[string]string{}
			}
			ai.Calibrations[sn.Name] = sn.Calibration
		}
	}
	ai.Thresholds = assetThresholds(a)
	ai.SettingsDigest = s.digests[a.Name]
	s.settingsMu.Lock()
	ai.SettingsDiffer = s.settingsDiffer[a.Name]
	s.settingsMu.Unlock()
	for _, c := range a.Conductors {
		ai.Conductors = append(ai.Conductors, c.Name)
	}
	if e, err := s.stores.Lease.Get(ctx, a.Name); err == nil {
		ai.Worker = string(e.Value())
	}
	req, _, err := s.restartStatus(ctx, a.Name)
	if err != nil {
		return ai, fmt.Errorf("live: asset %s: %w", a.Name, err)
	}
	ai.Restart = req
	if v, ok := s.stopped.Load(a.Name); ok {
		ai.Stopped = v.(string)
	}
	if v, ok := s.waiting.Load(a.Name); ok {
		ai.Commissioning = v.(string)
	}
	if a.Model == "commission" {
		e, err := s.stores.State.Get(ctx, geometryKey(a.Name))
		switch {
		case err == nil:
			var g storedGeometry
			if err := json.Unmarshal(e.Value(), &g); err != nil {
				return ai, fmt.Errorf("live: asset %s: stored geometry: %w", a.Name, err)
			}
			ai.Geometry = publishedGeometry(&g, a.Sensors)
		case !errors.Is(err, jetstream.ErrKeyNotFound):
			return ai, fmt.Errorf("live: asset %s: geometry: %w", a.Name, err)
		}
	}
	return ai, nil
}

func (s *Service) assets(w http.ResponseWriter, r *http.Request) {
	out := []AssetInfo{}
	for i := range s.site.Assets {
		ai, err := s.assetInfo(r.Context(), &s.site.Assets[i])
		if err != nil {
			s.brokerError(w, r, err)
			return
		}
		out = append(out, ai)
	}
	writeJSON(w, out)
}

func (s *Service) assetOr404(w http.ResponseWriter, r *http.Request) *AssetConfig {
	a := s.site.Asset(r.PathValue("asset"))
	if a == nil {
		httpError(w, http.StatusNotFound, fmt.Sprintf("no asset %q in the site file", r.PathValue("asset")))
	}
	return a
}

func (s *Service) latest(w http.ResponseWriter, r *http.Request) {
	a := s.assetOr404(w, r)
	if a == nil {
		return
	}
	e, err := s.stores.Latest.Get(r.Context(), a.Name)
	if errors.Is(err, jetstream.ErrKeyNotFound) {
		httpError(w, http.StatusNotFound, "no estimate yet for "+a.Name)
		return
	}
	if err != nil {
		s.brokerError(w, r, err)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.Write(e.Value())
}

// query holds the parsed time range and limit of a listing.
type query struct {
	from, to float64
	since    time.Time
	limit    int
	opts     []QueryOption
}

// maxSinceSeconds bounds since: Unix seconds past it do not fit an int64.
const maxSinceSeconds = 9e18

// parseQuery reads the listing parameters of r; a parameter not in
// allowed (a misspelt asset= would otherwise list every asset's alarms)
// is refused.
func parseQuery(r *http.Request, allowed ...string) (query, error) {
	q := query{from: -1e300, to: 1e300, limit: DefaultQueryLimit}
	var unknown []string
	for k := range r.URL.Query() {
		if !slices.Contains(allowed, k) {
			unknown = append(unknown, strconv.Quote(k))
		}
	}
	if len(unknown) > 0 {
		slices.Sort(unknown)
		return q, fmt.Errorf("unknown parameter %s: %s takes %s", strings.Join(unknown, ", "), r.URL.Path, strings.Join(allowed, ", "))
	}
	// Every parameter of the queries, given empty, is refused rather than
	// read as not given (asset= would otherwise list every asset's alarms).
	for _, k := range []string{"from", "to", "since", "limit", "asset", "kind", "format", "revisions"} {
		if vs, ok := r.URL.Query()[k]; ok && (len(vs) == 0 || vs[0] == "") {
			return q, fmt.Errorf("parameter %s is empty: give a value or leave it out", k)
		}
	}
	for _, k := range []string{"from", "to"} {
		v := r.URL.Query().Get(k)
		if v == "" {
			continue
		}
		t, err := parseTime(v)
		if err != nil || math.IsNaN(t) {
			return q, fmt.Errorf("parameter %s: %q is neither seconds nor an RFC 3339 time", k, v)
		}
		if !(math.Abs(t) < 1e300) {
			return q, fmt.Errorf("parameter %s: %q is not a finite time", k, v)
		}
		if k == "from" {
			q.from = t
		} else {
			q.to = t
		}
	}
	if q.from > q.to {
		return q, fmt.Errorf("parameter from (%s) is later than to (%s): the range is empty", r.URL.Query().Get("from"), r.URL.Query().Get("to"))
	}
	if v := r.URL.Query().Get("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n <= 0 || n > MaxQueryLimit {
			return q, fmt.Errorf("parameter limit: %q is not a whole number from 1 to %d", v, MaxQueryLimit)
		}
		q.limit = n
	}
	if v := r.URL.Query().Get("since"); v != "" {
		t, err := parseTime(v)
		if err != nil || math.IsNaN(t) {
			return q, fmt.Errorf("parameter since: %q is neither seconds nor an RFC 3339 time", v)
		}
		// Before, NaN, Inf and 1e300 overflowed the conversion to int64
		// and answered every alarm, which a poller takes as new ones.
		if !(math.Abs(t) < 1e300) {
			return q, fmt.Errorf("parameter since: %q is not a finite time", v)
		}
		if !(math.Abs(t) < maxSinceSeconds) {
			return q, fmt.Errorf("parameter since: %q is beyond the times the service can compare (±%g s)", v, maxSinceSeconds)
		}
		sec, frac := math.Modf(t)
		q.since = time.Unix(int64(sec), int64(frac*1e9))
	}
	switch v := r.URL.Query().Get("revisions"); v {
	case "", "latest":
	case "all":
		q.opts = append(q.opts, AllRevisions())
	default:
		return q, fmt.Errorf("parameter revisions: %q is neither \"latest\" nor \"all\"", v)
	}
	return q, nil
}

func parseTime(v string) (float64, error) {
	if f, err := strconv.ParseFloat(v, 64); err == nil {
		return f, nil
	}
	t, err := time.Parse(time.RFC3339Nano, v)
	if err != nil {
		return 0, err
	}
	return float64(t.UnixNano()) / 1e9, nil
}

func (s *Service) history(w http.ResponseWriter, r *http.Request) {
	a := s.assetOr404(w, r)
	if a == nil {
		return
	}
	q, err := parseQuery(r, "from", "to", "limit", "format", "revisions")
	if err != nil {
		httpError(w, http.StatusBadRequest, err.Error())
		return
	}
	format := r.URL.Query().Get("format")
	if format != "" && format != "json" && format != "csv" {
		httpError(w, http.StatusBadRequest, fmt.Sprintf("parameter format: %q is neither \"json\" (the default) nor \"csv\"", format))
		return
	}
	ests, err := s.History(r.Context(), a.Name, q.from, q.to, q.limit+1, q.opts...)
	if err != nil {
		s.brokerError(w, r, err)
		return
	}
	if len(ests) > q.limit {
		markMore(w, ests[q.limit].Start)
		ests = ests[:q.limit]
	}
	if format == "csv" {
		writeEstimatesCSV(w, ests)
		return
	}
	writeJSON(w, ests)
}

// writeEstimatesCSV writes one row per window and conductor; later columns
// (revision, then the commissioned geometry's share of the sigmas, then a
// degraded window's sigma scale and the data lost before a window, then
// a change within the window, the sensors left out or short, the spikes,
// the implausible reasons and the AC frequency, then an AC conductor's
// total RMS current and harmonics, then the row's conductor's
// covariances with the others, then the window's start and end as RFC
// 3339 UTC) come after the earlier ones so that those keep their places.
// The CSV's version, APISchemaVersion as the JSON's, is in the
// X-Uc-Schema-Version header (a CSV has no place for it that a reader
// by position would not trip on).
func writeEstimatesCSV(w http.ResponseWriter, ests []Estimate) {
	w.Header().Set("Content-Type", "text/csv")
	w.Header().Set(HeaderSchemaVersion, strconv.Itoa(APISchemaVersion))
	cw := csv.NewWriter(w)
	cw.Write([]string{"asset", "window", "start", "end", "conductor", "current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg", "rms_nt", "chi2", "dof", "quality", "sensors", "revision",
		"current_sigma_geometry_a", "phase_sigma_geometry_deg", "sigma_scale", "data_lost",
		"change_at", "change_sigmas", "current_before_a", "current_before_sigma_a", "current_after_a", "current_after_sigma_a", "phase_before_deg", "phase_after_deg",
		"missing", "spikes", "implausible", "frequency_hz", "frequency_sigma_hz",
		"current_total_a", "current_total_sigma_a", "harmonics", "current_covariance_a2", "start_utc", "end_utc"})
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	// Times (seconds on the sensors' clock, Unix seconds for most) in
	// full: ten significant digits would cut a change inside a window to
	// the whole second of its start.
	ft := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	fp := func(v *float64) string {
		if v == nil {
			return ""
		}
		return f(*v)
	}
	for _, e := range ests {
		scale := ""
		if e.SigmaScale > 0 {
			scale = f(e.SigmaScale)
		}
		// The window's own columns, the same on each of its rows:
		// "sensor: reason" and "sensor: count" pairs by sensor name,
		// joined by "; ", and the implausible reasons joined by " | "
		// (they hold semicolons).
		var miss, spk []string
		for _, k := range slices.Sorted(maps.Keys(e.Missing)) {
			miss = append(miss, k+": "+e.Missing[k])
		}
		for _, k := range slices.Sorted(maps.Keys(e.Spikes)) {
			spk = append(spk, k+": "+strconv.Itoa(e.Spikes[k]))
		}
		fr, frs := "", ""
		if e.Frequency > 0 {
			fr = f(e.Frequency)
		}
		if e.FrequencySigma > 0 {
			frs = f(e.FrequencySigma)
		}
		tail := []string{strings.Join(miss, "; "), strings.Join(spk, "; "), strings.Join(e.Implausible, " | "), fr, frs}
		// change returns a conductor's change columns (empty on a steady
		// window): the window's split time and size, in sigmas, on each
		// of its rows, and the conductor's currents before and after.
		change := func(name string) []string {
			out := make([]string, 8)
			if e.Change == nil {
				return out
			}
			out[0], out[1] = ft(e.Change.At), f(e.Change.Sigmas)
			for _, l := range e.Change.Conductors {
				if l.Name == name {
					out[2], out[3], out[4], out[5] = f(l.Before), f(l.BeforeSigma), f(l.After), f(l.AfterSigma)
					out[6], out[7] = fp(l.PhaseBefore), fp(l.PhaseAfter)
				}
			}
			return out
		}
		for ci, c := range e.Conductors {
			ph, phs := "", ""
			if c.Phase != nil {
				ph, phs = f(*c.Phase), f(*c.PhaseSigma)
			}
			// The commissioned geometry's share of the sigmas, common to all
			// windows (empty when the geometry is taken as exact).
			gs, gps := "", ""
			if c.CurrentSigmaGeometry > 0 {
				gs = f(c.CurrentSigmaGeometry)
			}
			if c.PhaseSigmaGeometry != nil {
				gps = f(*c.PhaseSigmaGeometry)
			}
			row := []string{e.Asset, strconv.FormatInt(e.Window, 10), ft(e.Start), ft(e.End), c.Name, f(c.Current), f(c.CurrentSigma),
				ph, phs, f(e.RMS), f(e.Chi2), strconv.Itoa(e.DOF), e.Quality, strconv.Itoa(e.Sensors), strconv.Itoa(e.Revision), gs, gps, scale, e.DataLost}
			row = append(append(row, change(c.Name)...), tail...)
			// AC: the total RMS with the harmonics, and each harmonic as
			// "order: current ± sigma" joined by "; ".
			tot, tots := fp(c.CurrentTotal), fp(c.CurrentTotalSigma)
			var hs []string
			for _, h := range c.Harmonics {
				hs = append(hs, fmt.Sprintf("%d: %s ± %s", h.Order, f(h.Current), f(h.CurrentSigma)))
			}
			// The row's conductor's row of the currents' covariance:
			// "conductor: covariance" with each conductor in order, its
			// own (its variance) among them.
			var cv []string
			if ci < len(e.CurrentCovariance) && len(e.CurrentCovariance[ci]) == len(e.Conductors) {
				for k, o := range e.Conductors {
					cv = append(cv, o.Name+": "+f(e.CurrentCovariance[ci][k]))
				}
			}
			row = append(row, tot, tots, strings.Join(hs, "; "), strings.Join(cv, "; "), utcTime(e.Start), utcTime(e.End))
			cw.Write(row)
		}
		if len(e.Conductors) == 0 {
			row := []string{e.Asset, strconv.FormatInt(e.Window, 10), ft(e.Start), ft(e.End), "", "", "", "", "", f(e.RMS), f(e.Chi2), strconv.Itoa(e.DOF), e.Quality, strconv.Itoa(e.Sensors), strconv.Itoa(e.Revision), "", "", scale, e.DataLost}
			row = append(append(append(row, change("")...), tail...), "", "", "", "", utcTime(e.Start), utcTime(e.End))
			cw.Write(row)
		}
	}
	cw.Flush()
}

func (s *Service) alarmList(w http.ResponseWriter, r *http.Request) {
	q, err := parseQuery(r, "asset", "kind", "from", "to", "since", "limit", "revisions", "format")
	if err != nil {
		httpError(w, http.StatusBadRequest, err.Error())
		return
	}
	asset, kind := r.URL.Query().Get("asset"), r.URL.Query().Get("kind")
	if asset != "" && s.site.Asset(asset) == nil {
		httpError(w, http.StatusNotFound, fmt.Sprintf("no asset %q in the site file", asset))
		return
	}
	if kind != "" && !slices.Contains(AlarmKinds, kind) {
		httpError(w, http.StatusBadRequest, fmt.Sprintf("parameter kind: %q is not an alarm kind (%s)", kind, strings.Join(AlarmKinds, ", ")))
		return
	}
	if format := r.URL.Query().Get("format"); format != "" && format != "json" {
		httpError(w, http.StatusBadRequest, fmt.Sprintf("parameter format: %q is not supported for alarms; the only format is \"json\" (the default)", format))
		return
	}
	list, err := s.Alarms(r.Context(), asset, kind, q.from, q.to, q.since, q.limit+1, q.opts...)
	if err != nil {
		s.brokerError(w, r, err)
		return
	}
	if len(list) > q.limit {
		markMore(w, list[q.limit].Start)
		list = list[:q.limit]
	}
	writeJSON(w, list)
}

func (s *Service) recommission(w http.ResponseWriter, r *http.Request) {
	a := s.assetOr404(w, r)
	if a == nil {
		return
	}
	if a.Model != "commission" {
		httpError(w, http.StatusConflict, fmt.Sprintf("asset %s has model %q; only \"commission\" assets can be recommissioned", a.Name, a.Model))
		return
	}
	ctx, cancel := context.WithTimeout(r.Context(), 10*time.Second)
	defer cancel()
	if err := s.stores.State.Delete(ctx, geometryKey(a.Name)); err != nil {
		s.brokerError(w, r, err)
		return
	}
	s.log.Info("geometry forgotten; the asset is commissioned again from new data", "asset", a.Name)
	writeJSON(w, map[string]string{"asset": a.Name, "status": "geometry forgotten; the asset is commissioned again from the next windows"})
}
