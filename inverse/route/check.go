package route

import "math"

// exactFloor is the current sigma, a fraction of the station's current,
// that Build gives a station whose current is used (OK and not a dipole)
// and whose CurrentSigma is zero: such a current is read as exact, to one
// part in a billion. The step tests weigh a change in current against the
// stations' combined sigma; with both zero nothing could be called
// significant, and a simulated 20% fall between two such stations was
// dropped without a word (found in review, using the package as a
// library). Refusing the zero instead made locate fail on a noise-free log,
// whose fits give exactly zero sigmas. One part in a billion keeps a real
// change (a 2 A fall on 10 A is 2e8 such sigmas) and leaves out the
// rounding of fits of exact readings (about 1e-12 of the current).
const exactFloor = 1e-9

// floorSigma returns the current sigma Build uses for s (see exactFloor).
func floorSigma(s *Station) float64 {
	if !s.usable() || s.CurrentSigma != 0 {
		return s.CurrentSigma
	}
	return math.Max(exactFloor*math.Abs(s.Current), math.SmallestNonzeroFloat64)
}
