package main

import "sync"

// groupMemo keeps what a group's readings give whatever their fit: the
// sensors' tracks (sensorTracks, from the positions) and the DC noise
// measured along them (tracksNoise). Drift, the misfit check, the survey's
// noise, the position scatter and the document each asked for them, and
// each pass sorted every sensor-period's differences again: 13 % of a
// 300-traverse DC locate's CPU (found in review). Each value is kept with
// the readings it came from (the slices' first element and length), so a
// copy of the group with other fields (refitWith turns them) or readings
// appended since computes its own; a mutex lets the groups' fits share it.
type groupMemo struct {
	mu     sync.Mutex
	tracks memoKey
	tr     [][]int
	noiseK [2]memoKey
	nz     float64
}

// memoKey names a slice of readings by its first element and length.
type memoKey struct {
	p *[3]float64
	n int
}

func keyOf(v [][3]float64) memoKey {
	if len(v) == 0 {
		return memoKey{}
	}
	return memoKey{&v[0], len(v)}
}

// sensorTracks is sensorTracks(pts), kept for pts; m nil computes it.
func (m *groupMemo) sensorTracks(pts [][3]float64) [][]int {
	if m == nil {
		return sensorTracks(pts)
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	return m.tracksLocked(pts)
}

func (m *groupMemo) tracksLocked(pts [][3]float64) [][]int {
	k := keyOf(pts)
	if m.tr == nil || m.tracks != k {
		m.tr, m.tracks = sensorTracks(pts), k
	}
	return m.tr
}

// noise is tracksNoise(fields, sensorTracks(pts)), kept for the two.
func (m *groupMemo) noise(pts, fields [][3]float64) float64 {
	if m == nil {
		return tracksNoise(fields, sensorTracks(pts))
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	k := [2]memoKey{keyOf(pts), keyOf(fields)}
	if m.noiseK != k || m.noiseK == ([2]memoKey{}) {
		m.nz, m.noiseK = tracksNoise(fields, m.tracksLocked(pts)), k
	}
	return m.nz
}
