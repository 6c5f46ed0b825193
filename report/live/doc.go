// Package live is the continuous pipeline on a data server: it reads the
// sensor batches of fixed magnetometers from the broker (see package
// ingest/broker for subjects and payloads), assembles them into windows
// per asset across its sensors, calibrates, demodulates (AC), solves for
// the conductor currents with the geometry held, and publishes estimates
// and alarms, keeping history and latest values in the broker. Several
// workers share the assets through leases; an HTTP API serves health,
// metrics, estimates and alarms.
//
// # Windows
//
// With window length L, a sample at time t belongs to window
// k = floor(t/L); the window spans [kL, (k+1)L). It closes when every
// sensor's next expected sample (its last time plus its sample interval)
// falls in a later window, when the furthest sensor is Grace past its end
// (the lagging sensors are reported silent), or after Idle of wall-clock
// time without data. Batches that start at or before a sensor's last
// sample are dead-lettered as out-of-order; batches entirely inside
// published windows as late.
//
// # Reduction and solve
//
// Each sensor's samples are corrected by its calibration
// (b = M (raw - o)), rotated to east-north-up by its orientation
//
//	b_ENU = Rz(yaw) Ry(pitch) Rx(roll) b_sensor
//
// and reduced to one reading: for DC the window mean; for AC the complex
// RMS phasor per axis from a three-parameter sine fit at the asset's
// frequency (IEEE Std 1057, IEEE Std 1241), referenced to absolute time so
// phases agree across sensors. With a per-sample noise sigma the reading
// noise is sigma/sqrt(n) (mean of n samples; each quadrature of a sine fit
// over n samples). The readings go to the fixed-geometry linear solve
// (the field is linear in the currents and a uniform background,
// B = Phi(geometry) c; Golub & Pereyra 1973), which returns currents with
// one-sigma uncertainties from the covariance s^2 (J^T J)^-1.
//
// # Exactly one estimate per window
//
// An asset is processed by the worker holding its lease (a key in the
// uc_lease bucket that expires LeaseTTL after the holder stops renewing
// it). After each group of windows the holder writes a checkpoint: the
// end of the last published window and the first UC_DATA sequence still
// feeding an open window. A successor reads from that sequence, drops
// samples before that end, and rebuilds the same windows. Estimates are
// published with the message id "<asset>/<window index>", so the
// broker's deduplication stores a window published twice (holder died
// between publishing and checkpointing) only once.
//
// # Where a new asset starts reading
//
// An asset without a checkpoint (its first start, or an asset newly added
// to the site file) starts where its "start" setting says, or the
// [service] "start" when the asset gives none:
//
//	"retained"      everything UC_DATA still holds (the default; a
//	                backfill of up to data_retention before live windows)
//	"new"           only batches stored after the first start
//	"24h", "90m"    batches stored up to that long before the first start
//	RFC 3339 time   batches stored at or after that time (not in the future)
//
// These are the choices broker.Subscribe offers (All, new only, From) and
// map to the JetStream deliver policies DeliverAllPolicy,
// DeliverNewPolicy and DeliverByStartTimePolicy. For any start but
// "retained" the worker resolves the choice once, at the first start, to
// a stream sequence (the stream's last sequence plus one for "new"; the
// asset's first message stored at or after the time otherwise, looked up
// by the server) and writes it at once as the asset's first checkpoint,
// so that a restart or takeover before the first window resumes from the
// same place. Once a checkpoint exists it always wins and the setting is
// ignored; delete the checkpoint (key "checkpoint.<asset>" in uc_state)
// to apply a changed start. Times are the broker's storage times, i.e.
// when the batches reached the broker, not the sensor clocks; the first
// window may hold only the part of its samples stored after the start.
//
// # Alarms
//
// over-current (|I| above max_current), imbalance (|sum of the balance
// conductors' current phasors| above max_imbalance: go and return should
// cancel; a difference is current leaking to earth), step (change between
// consecutive windows above step), silent (no samples), stuck (one value
// repeated on an axis for a whole window), degraded (reduced chi-square
// above max_chi2, or the solve failed). Each is published on
// uc.alarm.<asset>.<kind> with message id "<asset>/<window>/<kind>/<subject>".
//
// # Queries
//
// History and Alarms do not scan the stored streams: a binary search over
// stream sequences, each probe a server-side "next message on this subject
// at or after this sequence" lookup, finds the first message of the
// range, an ordered consumer reads from there, and reading stops at the
// end of the range or the limit. A query reads about log2(stream length)
// plus the number of results messages (uc_query_messages_read_total).
//
// # Unknown assets
//
// Every worker sweeps the subjects stored in UC_DATA once per lease TTL;
// data for an asset the site file does not list is read through a durable
// consumer per such asset, shared by the workers, and dead-lettered to
// uc.dlq.unknown-asset (see unknown.go).
//
// References: IEEE Std 1057-2017 and IEEE Std 1241-2010 (sine fitting);
// G. H. Golub and V. Pereyra, SIAM J. Numer. Anal. 10(2):413-432 (1973)
// (separable least squares); the NATS JetStream documentation (message
// deduplication, key-value buckets, ordered consumers).
package live
