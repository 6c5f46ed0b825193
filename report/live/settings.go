package live

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"sort"
)

// Each worker's heartbeat carries a digest of each asset's settings (its
// alarm thresholds, sensors with their calibration files' contents,
// conductors, mode and window), so that workers on one broker whose site
// files differ for an asset are told of it: the alarms an asset raises
// would otherwise depend on which worker holds its lease, with nothing
// said (a site file updated on one host and not yet on another).

// settingsDigestLen is the number of hex digits kept of the SHA-256.
const settingsDigestLen = 12

type sensorSettings struct {
	Name        string     `json:"name"`
	Position    [3]float64 `json:"position"`
	Orientation [3]float64 `json:"orientation"`
	Range       float64    `json:"range_nt"`
	Calibration string     `json:"calibration,omitempty"`
	// CalibrationSHA is the SHA-256 of the calibration file's contents
	// (a new calibration written over the old file changes the digest),
	// or "unreadable: ..." when it cannot be read now.
	CalibrationSHA string `json:"calibration_sha256,omitempty"`
}

type conductorSettings struct {
	Name       string     `json:"name"`
	Kind       string     `json:"kind"`
	Point      [3]float64 `json:"point"`
	Direction  [3]float64 `json:"direction"`
	From       [3]float64 `json:"from"`
	To         [3]float64 `json:"to"`
	MaxCurrent *float64   `json:"max_current,omitempty"`
	Step       *float64   `json:"step,omitempty"`
	MaxShare   *float64   `json:"max_share,omitempty"`
	MinShare   *float64   `json:"min_share,omitempty"`
	ShareOf    string     `json:"share_of,omitempty"`
	ShareFloor *float64   `json:"share_floor,omitempty"`
}

// assetSettings is what an asset's digest is taken over.
type assetSettings struct {
	Mode       string              `json:"mode"`
	Frequency  float64             `json:"frequency"`
	Window     string              `json:"window"`
	Model      string              `json:"model"`
	Commission string              `json:"commission"`
	Noise      float64             `json:"noise"`
	EarthField [2]float64          `json:"earth_field"`
	Sensors    []sensorSettings    `json:"sensors"`
	Conductors []conductorSettings `json:"conductors"`
	Alarms     AlarmConfig         `json:"alarms"`
}

// settingsDigest returns the digest of a's settings: the first
// settingsDigestLen hex digits of the SHA-256 of their JSON. Calibration
// files are read now.
func settingsDigest(a *AssetConfig) string {
	st := assetSettings{Mode: a.Mode, Frequency: a.Frequency, Window: a.Window.String(), Model: a.Model,
		Commission: a.Commission.String(), Noise: a.Noise, EarthField: [2]float64{a.fieldLo, a.fieldHi}, Alarms: a.Alarms}
	for _, sn := range a.Sensors {
		ss := sensorSettings{Name: sn.Name, Position: sn.Position, Orientation: sn.Orientation, Range: sn.Range, Calibration: sn.Calibration}
		if sn.Calibration != "" {
			if data, err := os.ReadFile(sn.Calibration); err != nil {
				ss.CalibrationSHA = "unreadable: " + err.Error()
			} else {
				sum := sha256.Sum256(data)
				ss.CalibrationSHA = hex.EncodeToString(sum[:])
			}
		}
		st.Sensors = append(st.Sensors, ss)
	}
	for _, c := range a.Conductors {
		st.Conductors = append(st.Conductors, conductorSettings{Name: c.Name, Kind: c.Kind, Point: c.Point, Direction: c.Direction,
			From: c.From, To: c.To, MaxCurrent: c.MaxCurrent, Step: c.Step, MaxShare: c.MaxShare, MinShare: c.MinShare,
			ShareOf: c.ShareOf, ShareFloor: c.ShareFloor})
	}
	data, _ := json.Marshal(st)
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])[:settingsDigestLen]
}

// AssetThresholds is the alarm thresholds in force for an asset on this
// worker, as GET /api/v1/assets/{asset} shows them.
type AssetThresholds struct {
	MaxCurrent   float64  `json:"max_current"`
	MaxImbalance float64  `json:"max_imbalance"`
	Balance      []string `json:"balance,omitempty"`
	Step         float64  `json:"step"`
	MaxChi2      float64  `json:"max_chi2"`
	// Conductors holds the limits a conductor gives of its own, in place
	// of the asset's or besides them (max_current, step, max_share,
	// min_share, share_floor; share_of names the conductor compared with).
	Conductors map[string]map[string]any `json:"conductors,omitempty"`
}

func assetThresholds(a *AssetConfig) *AssetThresholds {
	t := &AssetThresholds{MaxCurrent: a.Alarms.MaxCurrent, MaxImbalance: a.Alarms.MaxImbalance, Balance: a.Alarms.Balance,
		Step: a.Alarms.Step, MaxChi2: a.Alarms.MaxChi2}
	for _, c := range a.Conductors {
		own := map[string]any{}
		for _, v := range []struct {
			key string
			v   *float64
		}{{"max_current", c.MaxCurrent}, {"step", c.Step}, {"max_share", c.MaxShare}, {"min_share", c.MinShare}, {"share_floor", c.ShareFloor}} {
			if v.v != nil {
				own[v.key] = *v.v
			}
		}
		if c.ShareOf != "" {
			own["share_of"] = c.ShareOf
		}
		if len(own) > 0 {
			if t.Conductors == nil {
				t.Conductors = map[string]map[string]any{}
			}
			t.Conductors[c.Name] = own
		}
	}
	return t
}

// SettingsDiffer is another live worker whose site file gives an asset
// settings other than this worker's.
type SettingsDiffer struct {
	Worker string `json:"worker"`
	Digest string `json:"settings_digest"`
}

// compareSettings compares the assets' settings digests in the other
// live workers' heartbeats (beats, by worker id; this worker's own is
// skipped) with this worker's, and logs a WARN naming the asset and both
// digests for each worker and asset whose digest differs: once, until
// that worker's digest for the asset changes again. A worker of an
// earlier version (no digests) is not judged. It returns, per asset, the
// workers that differ now.
func (s *Service) compareSettings(beats map[string]workerBeat) map[string][]SettingsDiffer {
	s.settingsMu.Lock()
	defer s.settingsMu.Unlock()
	if s.settingsWarned == nil {
		s.settingsWarned = map[string]string{}
	}
	differ := map[string][]SettingsDiffer{}
	seen := map[string]bool{}
	ids := make([]string, 0, len(beats))
	for id := range beats {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		if id == s.id {
			continue
		}
		b := beats[id]
		for _, a := range s.site.Assets {
			theirs, ok := b.Settings[a.Name]
			if !ok {
				continue
			}
			ours := s.digests[a.Name]
			key := id + "\x00" + a.Name
			if theirs == ours {
				delete(s.settingsWarned, key)
				continue
			}
			seen[key] = true
			differ[a.Name] = append(differ[a.Name], SettingsDiffer{Worker: id, Digest: theirs})
			if s.settingsWarned[key] == theirs {
				continue
			}
			s.settingsWarned[key] = theirs
			s.log.Warn("another live worker applies other settings to this asset (thresholds, calibration or sensors): its alarms depend on which worker holds the lease; give every worker the same site file and calibration files, and restart serve",
				"asset", a.Name, "settings_digest", ours, "other_worker", id, "other_settings_digest", theirs)
		}
	}
	for key := range s.settingsWarned {
		if !seen[key] {
			delete(s.settingsWarned, key) // that worker has gone or now agrees
		}
	}
	s.settingsDiffer = differ
	return differ
}
