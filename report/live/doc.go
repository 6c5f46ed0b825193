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
// falls in a later window, when a strict majority of the sensors heard
// from within Idle are Grace past its end (the lagging sensors are
// reported silent), or after Idle of wall-clock time without data. A
// batch more than Grace plus a window ahead of every other sensor heard
// from lately is held until another sensor catches up with it (all
// sensors resuming after a gap) and refused as malformed when its sensor
// sends in line with the others again (a clock jump), so one sensor's
// clock cannot close the others' windows. Data that was already in the broker when the worker
// took the asset (after a start, a takeover or a restart request) does not
// show that its publisher is still sending: until newer data arrives the
// wait is ResumeIdle instead (2 min by default), so that windows rebuilt
// from a checkpoint are not closed half full while the publisher is on its
// way back. A window closed with a sensor more than one sample short of
// what its rate gives, or without a sensor, is estimated from what
// arrived with quality "partial" and the counts in "missing".
//
// Sample times are Unix seconds. A batch with a time before 2000-01-01,
// or more than MaxAhead (1 h by default) ahead of the broker's clock when
// it was stored (a gateway sending milliseconds), is dead-lettered as
// malformed before it can touch the sensor's state. A batch that
// straddles a sensor's last sample (data sent again with other batch
// edges) loses the samples at or before it, counted in
// uc_overlap_samples_total, and the rest are filed; a batch with no sample
// after it is dead-lettered as out-of-order, and one entirely inside
// published windows as late. A batch of a sensor at a live pace (at most
// 1.1 s of data per second of the broker's clock) that jumps more than
// Grace plus a window past where that pace puts it, past the broker's
// clock and past every other sensor (a gateway clock stepped forward) is
// held, so that it cannot make the true data after it out-of-order: when
// the sensor's next batch goes back before it, it is refused as
// malformed, with a clock-jump alarm; when the sensor goes on in line
// with it for Grace plus a window of data, it is processed as dated (with
// the other sensors' held runs in line with it), with the alarm; when the
// clock or another sensor's data reaches it, it is filed (as late, to the
// dead letters, if its windows were closed meanwhile). A log replayed
// faster than real time is not at a live pace, and one replayed slower
// stays in line with its pace across a gap; a batch marked as replayed
// (broker.HeaderReplay) is never held so. Two or more unmarked batches
// of a sensor refused as out-of-order over Grace plus a window of the
// broker's clock, holding that much of its data, with none of its
// batches filed between, raise an out-of-order alarm, once, cleared by
// its next batch filed. A message is
// dead-lettered once: the checkpoint counts it as examined as soon as its
// dead letter is stored (and is written then if no window is open), and
// a later holder that reads it again to rebuild an open window counts it
// as skipped in uc_messages_total instead of refusing it again.
//
// # Reduction and solve
//
// Each sensor's samples are corrected by its calibration
// (b = M (raw - o)), rotated to east-north-up by its orientation
//
//	b_ENU = Rz(yaw) Ry(pitch) Rx(roll) b_sensor
//
// and reduced to one reading: for DC the window mean; for AC the complex
// RMS phasor per axis from a three-parameter sine fit at the window's
// frequency (IEEE Std 1057, IEEE Std 1241), referenced to absolute time so
// phases agree across sensors; the window's frequency is the asset's
// unless a four-parameter fit finds it more than 5 sigma away. An AC
// sensor sampling below 2.5 times the frequency is left out. With a
// per-sample noise sigma the reading noise is sigma/sqrt(n), n the
// sensor's own sample count (mean of n samples; each quadrature of a sine
// fit over n samples), and unequal sigmas weight the solve. The readings go to the fixed-geometry linear solve
// (the field is linear in the currents and a uniform background,
// B = Phi(geometry) c; Golub & Pereyra 1973), which returns currents with
// one-sigma uncertainties from the covariance s^2 (J^T J)^-1.
//
// A commissioned geometry is itself fitted, to the mean readings of the
// first windows, and its error is common to every window solved with it.
// Its covariance (geometryCovariance: the inverse Fisher information of
// the commissioning fit, currents fitted again at each step, scaled by the
// fit's reduced chi-square when above 1) is stored with it, and each
// window's currents are solved again with the geometry moved one sigma
// either way along each principal axis of that covariance; the changes
// give the geometry's share of the current and phase sigmas by the delta
// method, added in quadrature to the window's noise and also reported
// apart (current_sigma_geometry_a, phase_sigma_geometry_deg). Being
// common to all windows, that share does not average away over windows,
// and a comparison between windows should leave it out. The alarms
// compare currents with thresholds in amperes, not with sigmas, so it
// changes none of them. A "fixed" geometry is taken as exact.
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
// A holder that cannot renew the lease cancels the asset's processing
// with the cause errLeaseLost and does not wait for it: the consume loop
// looks at the cause before each message and tick, and every write
// (estimate, alarm, latest, checkpoint, dead letter, geometry) is fenced
// by it, so nothing more is processed or stored; the lease round goes on
// (heartbeat, other renewals, acquisitions). A drain (stop, hand-over) is
// bounded by drainLimit: after a broker restart the client's ordered
// consumer can go on delivering without ever finishing a drain.
//
// A checkpoint whose resume sequence is below UC_DATA's first sequence
// means the broker removed data (data_max_bytes, data_retention) before
// it was read; the asset's first batch read after it tells whether any of
// it was the asset's (see assetWorker.noteRemoved), and if so a data-lost
// alarm is raised and the next estimate marked.
//
// A window is closed on idle only when UC_DATA holds no message for the
// asset after the last one the worker was given: losing the cluster node
// that serves the worker's ordered consumer stalls delivery while the
// stream goes on storing, and that data belongs in the open windows.
// Nor is it closed while the stream cannot be read (no leader: the
// publishers cannot store either), for up to resume_idle; when the stream
// answers again holding nothing newer, the idle time starts again.
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
// ignored; to apply a changed start, or any other, restart the asset
// (below). Times are the broker's storage times, i.e. when the batches
// reached the broker, not the sensor clocks; the first window may hold
// only the part of its samples stored after the start.
//
// # Restarting an asset
//
// To re-read an asset from another point (after a calibration change, to
// backfill, or to skip a flood of bad data), ask any serve process:
//
//	curl -X POST -H "Authorization: Bearer $TOKEN" \
//	  'http://127.0.0.1:8080/api/v1/assets/fenwick-lane/restart?start=2026-12-01T06:00:00Z'
//	curl -X POST -H "Authorization: Bearer $TOKEN" -H 'Content-Type: application/json' \
//	  -d '{"start": "new"}' http://127.0.0.1:8080/api/v1/assets/fenwick-lane/restart
//	curl http://127.0.0.1:8080/api/v1/assets/fenwick-lane   # "restart": {..., "applied": ...}
//
// start takes the site file's values; without one the asset's configured
// start is used. A bad start is refused with 400 and the site file's
// message, an unknown asset with 404, a request without the service
// token with 401 (403 when no token is configured). The answer is 202
// with the request: its id, the start, and the UC_DATA sequence it
// resolved to. The start is resolved when the request is taken, not when
// it is applied: "new" skips what is stored up to the request, "24h"
// counts back from the request, "retained" is the stream's first
// sequence.
//
// The request is stored under "restart.<asset>" in uc_state (a newer
// request replaces a pending one). The worker holding the asset's lease,
// in this process or another, looks for it every quarter second or so
// (and when it takes the asset): it stops its consumer at once, without
// publishing the windows still open or writing a checkpoint, drops its
// open windows, its windows waiting for commissioning (a commissioned
// geometry is kept) and the step alarm's previous currents, writes a new
// checkpoint resuming at the resolved sequence with the next read
// revision and the request id, marks the request applied (time, worker,
// revision) and reads on from there. A holder that stops between the
// checkpoint and the mark leaves the request pending; its successor finds
// the id in the checkpoint and only marks it, so nothing is read twice
// by the same request. Windows are closed from the new position only: no
// estimate is lost or repeated beyond the range the start asks for.
//
// Estimates of windows read again: the read revision counts the restarts
// applied to the asset (kept in the checkpoint). Estimates and alarms of
// revision n > 0 are published with the message ids
// "<asset>/<window>/r<n>" and "<asset>/<window>/r<n>/<kind>/<subject>"
// and the header Uc-Revision: n, and carry "revision": n in their JSON
// (absent for revision 0, so payloads of never-restarted assets are as
// they always were), so a re-read window is always stored again (never
// swallowed by the broker's duplicate window, one hour by default),
// while within one revision a window published twice by a takeover is
// still stored once. The stream then holds one entry per window and
// revision; the last one stored for a window (highest revision)
// supersedes the others, and latest shows it. Its alarms likewise
// supersede the older revisions' alarms of that window, also when it
// raises none (see Queries). Deleting a checkpoint by
// hand resets the revision to 0, whose ids the broker deduplicates
// within its window, and breaks the revision order that queries rely on
// (below): restart an asset instead.
//
// # Alarms
//
// over-current (|I| above max_current: the conductor entry's own where it
// gives one, else [asset.alarms]'), imbalance (|sum of the balance
// conductors' current phasors| above max_imbalance, each taken along the
// first balance conductor's direction: go and return should
// cancel, a difference being current leaking to earth; of three phases
// or more the sum is the residual current, from an unbalanced load whose
// neutral is not among them or from leakage), step (change between
// consecutive windows, or within a window that holds a change, DC or
// AC, above step, the conductor's own or the asset's; 0 turns it off),
// silent (no samples from a sensor in a
// window; with no subject, no data from any sensor for silent_after of
// wall time, once per silence: dated from the broker's time of the last
// stored batch, and kept in the checkpoint for a successor), stuck (one value
// repeated on an axis for a whole window while the sensor's other axes
// show a noise that makes so long a run unlikely, or one reading on every
// axis through two windows running), saturated (a sensor read within a
// margin of its stated range_nt on an axis), degraded (reduced chi-square
// above max_chi2, beyond what a commissioned geometry's error adds, or
// the solve failed), implausible (readings that do not
// look like nanotesla: the Earth's field outside earth_field, subject
// "earth-field", or with noise given a chi-square far below its degrees
// of freedom, subject "chi2"; the estimate's quality is then
// "implausible"), inconsistent (a sensor the others contradict, left
// out), share (a conductor's |I| over the asset's conductors' summed |I|,
// or over share_of's, above its max_share by three sigmas; judged only
// where the denominator is above share_floor: share.go), low-share (the
// same share below its min_share by three sigmas). Each is
// published on
// uc.alarm.<asset>.<kind> with message id "<asset>/<window>/<kind>/<subject>".
// All but step, data-lost and commissioning are conditions: raised once
// at their onset, again when worse by WorsenFactor (over-current,
// imbalance, share, low-share falling, degraded, inconsistent), and marked cleared when they end
// (alarmlatch.go).
//
// # Queries
//
// History and Alarms do not scan the stored streams: a binary search over
// stream sequences, each probe a server-side "next message on this subject
// at or after this sequence" lookup, finds the first message of the
// range, a consumer reads on from there, and reading stops at the end of
// the range or the limit. A query reads about log2(stream length) plus
// the number of results messages (uc_query_messages_read_total), plus
// one lookup of the asset's newest estimate. It makes at most one broker
// consumer per subject it reads: created at its first read of more than
// one message, moved to each later read's start by a consumer reset,
// and deleted before the query returns, also when it fails or its
// client goes away (querycons.go). A step nobody answered (no responders:
// on a cluster, a fetch can reach a node before the new consumer's
// interest does) is tried again up to four times within about 0.4 s;
// an API request that still fails answers 502 and is logged at WARN.
// While the connection to the broker is down, API requests answer 503
// "broker unreachable" at once instead (brokerlink.go).
//
// That search needs the messages in start order. The worker keeps them
// so: the one alarm dated before the asset's data is known, its silent
// alarm raised before any window, is moved to the first window when
// that starts earlier (checkSilence). The reading checks every message
// against the range and ends only at a second message in a row past it,
// so that an alarm stored out of order by an earlier version neither
// shows outside the range nor hides the range behind it (readRun). A
// restart breaks the order otherwise:
// re-read windows are stored again after newer ones. What holds is that
// an asset's read revision never decreases along the stream and that
// within one revision its windows are in order, so the stream is one
// ordered run per revision. The newest estimate's revision tells whether
// there is more than one run (revision 0: never restarted, one run, the
// query as above). Otherwise each run is found by binary searches on the
// revision (its first message, and the first sequence whose next message
// has a higher revision), the range is positioned and read within each
// run, and the runs are merged: of each window (of each window, kind and
// subject for alarms) the message of the highest revision, stored last,
// is kept, and the result is sorted by start and cut at the limit. Each
// run contributes at most limit messages plus the rest of its last
// window, which is enough: a window cut from a newer run would sort
// after limit windows of that run. The cost is, per revision run that
// holds messages, about 2 log2(stream length) probes plus the messages
// of that run in the range up to the limit; no query scans the stream.
// With revisions=all (AllRevisions) every stored revision is returned,
// sorted by start and then revision.
//
// Alarms of re-read windows: the alarm listing shows of each window the
// alarms of the highest read revision that processed it, which may be
// none. A revision has processed a window once it has stored the
// window's estimate, so an alarm that the re-read window no longer
// raises stops being listed, a different alarm raised instead replaces
// it, and a window that the re-read has not reached yet keeps its older
// alarms (for the moment between a re-read window's estimate and its
// alarms being stored, the window lists none). This holds with a kind
// filter too: an over-current alarm of revision 0 is not listed once
// revision 1 has processed the window, whatever revision 1 raised. To
// know a window's highest revision when its alarms are of a lower
// revision than the asset's newest estimate, the estimate runs are found
// as above and each run of a higher revision is asked, newest first,
// whether it holds the window: a galloping search from where the run's
// previous answer was found (windows are decided in start order), one
// lookup when the run's next estimate is the window's. Because alarms
// are dropped, a run read up to limit may give fewer than limit answers;
// the runs are then read on, from where they stopped, until limit
// alarms are kept or the range ends. Such a query costs, beyond the
// above, about 2 log2(stream length) probes per estimate run of a
// revision above 0, a few probes per window whose alarms are of an
// older revision, and the dropped alarms it reads; it never scans a
// stream.
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
