package live

import (
	"sync"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
)

// metrics are the service's Prometheus series, on a private registry.
type metrics struct {
	reg         *prometheus.Registry
	messages    *prometheus.CounterVec   // asset, outcome
	deadLetters *prometheus.CounterVec   // reason
	samples     *prometheus.CounterVec   // asset
	overlap     *prometheus.CounterVec   // asset
	implausible *prometheus.CounterVec   // asset, check
	windows     *prometheus.CounterVec   // asset, closed
	estimates   *prometheus.CounterVec   // asset, result
	alarms      *prometheus.CounterVec   // asset, kind
	stage       *prometheus.HistogramVec // stage
	latency     *prometheus.HistogramVec // asset
	pending     *prometheus.GaugeVec     // asset
	stalls      *prometheus.CounterVec   // asset
	dataLag     *lagCollector            // asset
	queryReads  *prometheus.CounterVec   // query
	leases      prometheus.Gauge
	storeFull   prometheus.Gauge
	storeFailed prometheus.Gauge
	takeovers   prometheus.Counter
	leaseLost   prometheus.Counter
	discarded   *prometheus.CounterVec // asset
	// fresh, when set, says whether the per-asset gauges read from the
	// broker (pending) can be up to date: not while the connection is
	// down; they are left out of a scrape then.
	fresh func() bool
}

func newMetrics() *metrics {
	m := &metrics{reg: prometheus.NewRegistry()}
	m.messages = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_messages_total",
		Help: "Sensor messages read, by asset and outcome (accepted, dead-letter, skipped)."}, []string{"asset", "outcome"})
	m.deadLetters = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_dead_letters_total",
		Help: "Messages sent to uc.dlq.<reason>, by reason."}, []string{"reason"})
	m.samples = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_samples_total",
		Help: "Three-axis samples accepted, by asset."}, []string{"asset"})
	m.overlap = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_overlap_samples_total",
		Help: "Samples dropped because they repeated what their sensor had already sent (a batch overlapping the sensor's last sample; its later samples are kept), by asset."}, []string{"asset"})
	m.implausible = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_implausible_windows_total",
		Help: "Windows whose readings look implausible, by asset and check (earth-field: the Earth's field outside earth_field; chi2: chi-square far below its degrees of freedom)."}, []string{"asset", "check"})
	m.windows = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_windows_total",
		Help: "Windows closed, by asset and why (complete, grace, idle)."}, []string{"asset", "closed"})
	m.estimates = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_estimates_total",
		Help: "Estimates published, by asset and result (published, duplicate, failed; empty: a window closed on idle with too few samples from every sensor, not published)."}, []string{"asset", "result"})
	m.alarms = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_alarms_total",
		Help: "Alarms raised, by asset and kind (onsets and worsenings of a lasting condition; its cleared records are not counted)."}, []string{"asset", "kind"})
	m.stage = prometheus.NewHistogramVec(prometheus.HistogramOpts{Name: "uc_stage_seconds",
		Help:    "Time spent per stage (decode, assemble, reduce, solve, publish, checkpoint).",
		Buckets: prometheus.ExponentialBuckets(1e-6, 4, 12)}, []string{"stage"})
	m.latency = prometheus.NewHistogramVec(prometheus.HistogramOpts{Name: "uc_estimate_latency_seconds",
		Help:    "From the arrival of the message that closed a window to the broker's acknowledgement of its estimate.",
		Buckets: prometheus.ExponentialBuckets(1e-4, 2, 16)}, []string{"asset"})
	m.pending = prometheus.NewGaugeVec(prometheus.GaugeOpts{Name: "uc_pending_messages",
		Help: "Sensor messages stored but not yet read, by asset (consumer lag)."}, []string{"asset"})
	m.stalls = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_consumer_stalls_total",
		Help: "Times an idle close was put off because the data stream held messages for the asset that the worker's consumer had not delivered (or could not be read), by asset."}, []string{"asset"})
	m.dataLag = &lagCollector{now: time.Now, end: map[string]float64{}, desc: prometheus.NewDesc("uc_data_lag_seconds",
		"Wall-clock time minus the end of the last published window, by asset (live data with Unix times), at the time of the scrape.", []string{"asset"}, nil)}
	m.queryReads = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_query_messages_read_total",
		Help: "Stored messages read to answer API queries (positioning probes and messages scanned), by query (history, alarms)."}, []string{"query"})
	m.leases = prometheus.NewGauge(prometheus.GaugeOpts{Name: "uc_assets_held", Help: "Assets this worker holds."})
	m.storeFull = prometheus.NewGauge(prometheus.GaugeOpts{Name: "uc_store_full",
		Help: "1 while the broker refuses this worker's writes (heartbeat, leases, estimates) for want of storage, else 0."})
	m.storeFailed = prometheus.NewGauge(prometheus.GaugeOpts{Name: "uc_store_failed",
		Help: "1 while a stream of the embedded broker's store has failed a write and refuses writes until serve is restarted, else 0."})
	m.takeovers = prometheus.NewCounter(prometheus.CounterOpts{Name: "uc_asset_acquisitions_total",
		Help: "Times this worker acquired an asset's lease."})
	m.leaseLost = prometheus.NewCounter(prometheus.CounterOpts{Name: "uc_leases_lost_total",
		Help: "Times this worker could not renew an asset's lease and stopped processing the asset at once."})
	m.discarded = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "uc_data_discarded_messages_total",
		Help: "Stream sequences of the data stream that the broker removed (data_retention, data_max_bytes) before this asset's worker read them, by asset: data never processed. Counted as a range of sequences, which may include other assets' messages."}, []string{"asset"})
	m.reg.MustRegister(m.messages, m.deadLetters, m.samples, m.overlap, m.implausible, m.windows, m.estimates, m.alarms,
		m.stage, m.latency, freshCollector{m.pending, m}, m.stalls, m.dataLag, m.queryReads, m.leases, m.storeFull, m.storeFailed, m.takeovers, m.leaseLost, m.discarded,
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return m
}

// lagCollector reports uc_data_lag_seconds at scrape time, so that the
// lag keeps growing while no window is published (all sensors silent).
type lagCollector struct {
	desc *prometheus.Desc
	now  func() time.Time
	mu   sync.Mutex
	end  map[string]float64 // asset -> end of its last published window, s
}

// published records the end of an asset's last published window.
func (c *lagCollector) published(asset string, end float64) {
	c.mu.Lock()
	c.end[asset] = end
	c.mu.Unlock()
}

// forget drops an asset this worker no longer holds.
func (c *lagCollector) forget(asset string) {
	c.mu.Lock()
	delete(c.end, asset)
	c.mu.Unlock()
}

func (c *lagCollector) Describe(ch chan<- *prometheus.Desc) { ch <- c.desc }

func (c *lagCollector) Collect(ch chan<- prometheus.Metric) {
	now := float64(c.now().UnixNano()) / 1e9
	c.mu.Lock()
	defer c.mu.Unlock()
	for a, e := range c.end {
		ch <- prometheus.MustNewConstMetric(c.desc, prometheus.GaugeValue, now-e, a)
	}
}

// buildInfo registers uc_build_info{version,revision}, always 1: which
// build is running, for a dashboard or an alert on mixed versions.
func (m *metrics) buildInfo(version, revision string) {
	g := prometheus.NewGaugeVec(prometheus.GaugeOpts{Name: "uc_build_info",
		Help: "Always 1; its labels name the running build: version (the module version, \"(devel)\" for a source tree) and revision (the VCS revision it was built from, empty when not recorded)."},
		[]string{"version", "revision"})
	g.WithLabelValues(version, revision).Set(1)
	m.reg.MustRegister(g)
}
