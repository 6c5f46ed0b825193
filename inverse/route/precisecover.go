package route

import "math"

// Precise cover beside the shallowest.
//
// A run of shallow cover, and the least cover headline, quote the station
// whose fitted depth is least, the safe side. Where that station's depth is
// loosely fitted it may lie shallow by its noise alone: a crossing service
// at 0.35 m, followed over four traverses, was quoted at 0.25 ± 0.16 m (T09)
// while two of its stations gave 0.3467 ± 0.0046 and 0.3487 ± 0.0043 m, the
// truth to a third of a sigma (found in review). BestDetermined picks such a
// station to quote beside the shallowest, only when the shallowest is loose
// (its sigma over looseShare of its cover): beside a cover known to a few
// per cent it would add a second figure and nothing more (tee-service.toml's
// main, 0.849 ± 0.014 m beside 0.868 ± 0.003 m, both short of the 0.9 m
// truth).

// looseShare is the share of its cover over which the shallowest station's
// cover sigma counts as loose: a fifth. The crossing service's loose
// stations are 52-93% (seeds 1-3), tee.toml's branch end 55%; the fits of
// the bundled scenarios' conductor 1 are under 2%.
const looseShare = 0.2

// preciseShare is the most a station's depth sigma may be of the
// shallowest station's for it to count as the better determined one: under
// half, so that it says more than the shallowest.
const preciseShare = 0.5

// preciseAgree is how many combined sigmas deeper than the shallowest
// station a better determined one may lie and still be quoted beside it:
// two, so that the two agree (the shallowest's low value is within its
// noise of the precise one) and the precise one is no deeper part of the
// conductor.
const preciseAgree = 2.0

// BestDetermined returns the index in covers and sigmas (the cover of each
// station considered and its sigma, m) of the shallowest station whose
// sigma is under preciseShare of the sigma of station low (the one of least
// cover) and whose cover lies within preciseAgree combined sigmas of it; ok
// is false when there is none, or when low's sigma is not over looseShare
// of its cover. Stations with a sigma that is not positive and finite are
// passed over. It panics if sigmas is shorter than covers or low is out of
// range.
func BestDetermined(covers, sigmas []float64, low int) (best int, ok bool) {
	sl := sigmas[low]
	if !(sl > 0) || math.IsInf(sl, 0) || !(sl > looseShare*math.Abs(covers[low])) {
		return 0, false
	}
	for i, c := range covers {
		s := sigmas[i]
		if i == low || !(s > 0) || math.IsInf(s, 0) || math.IsNaN(c) || s >= preciseShare*sl {
			continue
		}
		if c-covers[low] > preciseAgree*math.Hypot(s, sl) {
			continue
		}
		if !ok || c < covers[best] {
			best, ok = i, true
		}
	}
	return best, ok
}
