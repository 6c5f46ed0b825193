package broker

import (
	"fmt"
	"strings"
)

// Subject prefixes and stream names of the subject scheme described in the
// package documentation.
const (
	// DataPrefix starts every sensor-data subject: uc.data.<asset>.<sensor>.
	DataPrefix = "uc.data"
	// EstimatePrefix starts every estimate subject: uc.est.<asset>.
	EstimatePrefix = "uc.est"
	// AlarmPrefix starts every alarm subject: uc.alarm.<asset>.<kind>.
	AlarmPrefix = "uc.alarm"
	// DeadLetterPrefix starts every dead-letter subject: uc.dlq.<reason>.
	DeadLetterPrefix = "uc.dlq"

	// StreamData stores uc.data.> (sensor batches, the input log).
	StreamData = "UC_DATA"
	// StreamEstimates stores uc.est.> (estimate history, deduplicated).
	StreamEstimates = "UC_EST"
	// StreamAlarms stores uc.alarm.> (alarm history, deduplicated).
	StreamAlarms = "UC_ALARM"
	// StreamDeadLetter stores uc.dlq.> (rejected messages with their reason).
	StreamDeadLetter = "UC_DLQ"

	// BucketLatest is the key-value bucket holding the latest estimate per asset.
	BucketLatest = "uc_latest"
	// BucketState holds each asset's processing checkpoint and commissioned geometry.
	BucketState = "uc_state"
	// BucketLease holds the per-asset worker leases; its keys expire after the lease TTL.
	BucketLease = "uc_lease"
	// BucketWorkers holds one heartbeat key per live worker; keys expire after the lease TTL.
	BucketWorkers = "uc_workers"
)

// Dead-letter reasons: the last token of a uc.dlq.<reason> subject.
const (
	ReasonMalformed     = "malformed"      // payload could not be decoded or failed validation
	ReasonOversized     = "oversized"      // payload larger than the configured limit
	ReasonOutOfOrder    = "out-of-order"   // samples at or before ones already seen for that sensor
	ReasonLate          = "late"           // samples for a window that was already published
	ReasonUnknownSensor = "unknown-sensor" // sensor not listed for the asset in the site file
	ReasonUnknownAsset  = "unknown-asset"  // asset not listed in the site file
)

// DataSubject returns uc.data.<asset>.<sensor>. It panics if a name is not a
// valid token (see ValidToken): names come from the site file, which is
// validated when loaded.
func DataSubject(asset, sensor string) string {
	mustToken(asset)
	mustToken(sensor)
	return DataPrefix + "." + asset + "." + sensor
}

// DataFilter returns the subject filter uc.data.<asset>.> for all sensors of asset.
func DataFilter(asset string) string {
	mustToken(asset)
	return DataPrefix + "." + asset + ".>"
}

// EstimateSubject returns uc.est.<asset>.
func EstimateSubject(asset string) string {
	mustToken(asset)
	return EstimatePrefix + "." + asset
}

// AlarmSubject returns uc.alarm.<asset>.<kind>.
func AlarmSubject(asset, kind string) string {
	mustToken(asset)
	mustToken(kind)
	return AlarmPrefix + "." + asset + "." + kind
}

// DeadLetterSubject returns uc.dlq.<reason>.
func DeadLetterSubject(reason string) string {
	mustToken(reason)
	return DeadLetterPrefix + "." + reason
}

// ParseDataSubject splits uc.data.<asset>.<sensor> into its names.
func ParseDataSubject(subject string) (asset, sensor string, err error) {
	parts := strings.Split(subject, ".")
	if len(parts) != 4 || parts[0]+"."+parts[1] != DataPrefix {
		return "", "", fmt.Errorf("broker: subject %q: want %s.<asset>.<sensor>", subject, DataPrefix)
	}
	for _, p := range parts[2:] {
		if err := ValidToken(p); err != nil {
			return "", "", fmt.Errorf("broker: subject %q: %w", subject, err)
		}
	}
	return parts[2], parts[3], nil
}

// ValidToken reports whether name can be one token of a subject and of an
// MQTT topic level: 1 to 64 characters from [A-Za-z0-9_-]. Dots, slashes,
// wildcards and spaces are refused so that uc/data/a/s over MQTT maps
// one-to-one onto uc.data.a.s.
func ValidToken(name string) error {
	if name == "" || len(name) > 64 {
		return fmt.Errorf("broker: name %q: want 1 to 64 characters", name)
	}
	for i, r := range name {
		ok := r == '-' || r == '_' || (r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !ok {
			return fmt.Errorf("broker: name %q: character %d (%q) is not a letter, digit, '-' or '_'", name, i+1, r)
		}
	}
	return nil
}

func mustToken(name string) {
	if err := ValidToken(name); err != nil {
		panic(err)
	}
}
