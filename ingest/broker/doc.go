// Package broker is the live input side of undercurrent: an embedded NATS
// server with JetStream (file store) and MQTT, the subject scheme, the
// payload encodings of sensor batches, and the streams and buckets the
// continuous pipeline keeps in the broker.
//
// # Subjects
//
//	uc.data.<asset>.<sensor>   sensor batches in (stream UC_DATA)
//	uc.est.<asset>             one estimate per asset and window (stream UC_EST)
//	uc.alarm.<asset>.<kind>    alarms (stream UC_ALARM)
//	uc.dlq.<reason>            refused messages with their payload (stream UC_DLQ)
//
// Asset and sensor names are single tokens of letters, digits, '-' and
// '_' (ValidToken). MQTT gateways publish to the topic uc/data/<asset>/<sensor>;
// the broker maps MQTT topic levels onto subject tokens, so the message
// lands on uc.data.<asset>.<sensor> like any other. Use QoS 1 so the
// gateway knows the broker stored it.
//
// Dead-letter reasons: malformed, oversized, out-of-order, late,
// unknown-sensor, unknown-asset (data for an asset the site file does not
// list, found by a periodic sweep of the stored subjects and read through a
// durable consumer per unknown asset shared by the workers). The broker itself refuses
// messages above its maximum payload (8 MiB for the embedded server) at
// publication. Each dead letter carries the headers
// Uc-Reason, Uc-Error (the full message, naming row and column), Uc-Subject
// and Uc-Seq (the sequence in UC_DATA); a payload longer than the
// pipeline's largest message is cut to that length, its full size in
// Uc-Truncated. UC_DLQ keeps dead letters seven days and up to a byte
// bound, the oldest discarded (StreamSettings.DeadLetterMaxBytes), so
// refused data cannot fill the store. UC_EST and UC_ALARM keep estimates and
// alarms for a max age (StreamSettings.EstimateMaxAge, AlarmMaxAge:
// 400 days and ten years by default) and optionally up to a byte bound,
// the oldest discarded, so that the histories do not fill the store.
//
// Message ids: PublishBatch gives a batch the id
// asset/sensor/first/last/count/hash (BatchID), so the broker drops, for
// two minutes, only a batch identical to one it holds.
//
// Key-value buckets: uc_latest (latest estimate per asset, key = asset),
// uc_state (per-asset checkpoint and commissioned geometry), uc_lease (which
// worker holds an asset; keys expire after the lease TTL) and uc_workers
// (worker heartbeats).
//
// # JSON sample batch
//
// A JSON object; "time" lists the sample times in seconds (Unix seconds for
// live data), or "t0" and "rate" (Hz) give them as t0 + i/rate. bx, by, bz
// are nanotesla in the sensor's frame; temp (degrees Celsius) is optional.
// Unknown fields are refused. asset and sensor are optional and, when given,
// must match the subject.
//
//	{"t0": 1764650000.0, "rate": 1000, "bx": [12.5, 12.7], "by": [-3.1, -3.0], "bz": [48210.4, 48210.9]}
//	{"time": [1764650000.000, 1764650000.001], "bx": [...], "by": [...], "bz": [...], "temp": [...]}
//
// # Arrow IPC stream message
//
// One Arrow IPC stream (schema message, one or more record batches,
// end-of-stream marker) with float64 columns time, bx, by, bz and optionally
// temp, no nulls; other columns are ignored. Content-Type
// application/vnd.apache.arrow.stream; over MQTT (no headers) the 0xFFFFFFFF
// continuation marker that starts every IPC stream identifies it, and a
// payload starting with '{' is JSON.
//
// Every batch must be non-empty, have columns of equal length, finite
// values, strictly increasing times and readings whose field magnitude
// |B| is at most MaxFieldNT (0.1 T).
//
// # Running against a cluster
//
// The embedded server is a single node. For a three-node cluster, run three
// nats-server processes with JetStream and MQTT enabled and routes to each
// other (cluster block listing the three route URLs, server_name set on
// each, jetstream store_dir on each), point every "undercurrent serve" at
// them with --broker nats://a:4222,nats://b:4222,nats://c:4222 and set
// replicas = 3 in the site file's [broker] table so every stream and bucket
// is replicated (Setup with StreamSettings.Replicas = 3). On one replica
// the estimate and alarm streams allow direct get, which the history and
// alarm queries' single-message lookups then use; on more it stays off, so
// that a lagging follower never answers a lookup of a binary search.
//
// References: the NATS JetStream and MQTT documentation of the nats-server
// project; Apache Arrow columnar format, IPC streaming format section.
package broker
