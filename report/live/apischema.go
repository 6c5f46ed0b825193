package live

import (
	"encoding/json"
	"math"
	"time"
)

// APISchemaVersion is the version of the JSON of an estimate (Estimate)
// and of an alarm (Alarm), as published on the broker and served by the
// HTTP API, given in each as "schema_version". Version 1 is the first to
// carry it: the fields of the shapes before it are all still written,
// beside the ones version 1 added (frequency_hz, start_utc, end_utc,
// since_utc, revision written when 0). A consumer that finds a higher
// version than it knows should expect renamed or removed fields; new
// fields alone do not raise it.
const APISchemaVersion = 1

// utcTime writes t, seconds on the sensor clock, as an RFC 3339 UTC time
// to the millisecond when it looks like Unix seconds (1979 to 2103, as
// inspect's time.start_utc), else "" (a clock that is not Unix time: the
// field is then left out).
func utcTime(t float64) string {
	if !(t > 3e8 && t < 4.2e9) {
		return ""
	}
	sec := math.Floor(t)
	return time.Unix(int64(sec), int64(math.Round((t-sec)*1e9))).UTC().Round(time.Millisecond).Format("2006-01-02T15:04:05.999Z07:00")
}

// estimateFields is Estimate without its methods, for MarshalJSON.
type estimateFields Estimate

// MarshalJSON writes e with the fields of APISchemaVersion 1 beside its
// own: schema_version; frequency_hz, the same value as frequency (whose
// name lacked the unit the history CSV and frequency_sigma_hz give it;
// frequency is deprecated); start_utc and end_utc, the window's start and
// end as RFC 3339 UTC; and revision written when 0 too, as the history
// CSV writes it.
func (e Estimate) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		SchemaVersion int `json:"schema_version"`
		*estimateFields
		FrequencyHz float64 `json:"frequency_hz,omitempty"`
		StartUTC    string  `json:"start_utc,omitempty"`
		EndUTC      string  `json:"end_utc,omitempty"`
		Revision    int     `json:"revision"`
	}{APISchemaVersion, (*estimateFields)(&e), e.Frequency, utcTime(e.Start), utcTime(e.End), e.Revision})
}

// alarmFields is Alarm without its methods, for MarshalJSON.
type alarmFields Alarm

// MarshalJSON writes a with schema_version, start_utc and end_utc (the
// window's), since_utc (when Since is set) and revision written when 0
// too, as Estimate.MarshalJSON.
func (a Alarm) MarshalJSON() ([]byte, error) {
	var since string
	if a.Since != 0 {
		since = utcTime(a.Since)
	}
	return json.Marshal(struct {
		SchemaVersion int `json:"schema_version"`
		*alarmFields
		StartUTC string `json:"start_utc,omitempty"`
		EndUTC   string `json:"end_utc,omitempty"`
		SinceUTC string `json:"since_utc,omitempty"`
		Revision int    `json:"revision"`
	}{APISchemaVersion, (*alarmFields)(&a), utcTime(a.Start), utcTime(a.End), since, a.Revision})
}

// ongoingFields is OngoingAlarm without its methods, for MarshalJSON.
type ongoingFields OngoingAlarm

// MarshalJSON writes o with since_utc, its Since as RFC 3339 UTC.
func (o OngoingAlarm) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		*ongoingFields
		SinceUTC string `json:"since_utc,omitempty"`
	}{(*ongoingFields)(&o), utcTime(o.Since)})
}
