// Package route turns per-group fits of one conductor into an along-route
// profile and the findings a crew should act on.
//
// The input is plain data: one Station per group (a traverse, a sensor or a
// time window), each holding the fitted point on the conductor, its
// direction, current and depth with their one-sigma uncertainties (a used
// station's zero current sigma is read as exact, one part in a billion of
// its current, so that a change in current stays testable; see Station). Build
// orders the stations along the fitted route, measures chainage along it and
// looks for five things:
//
//   - steps in current: current leaving the conductor between two stations
//     (a coating defect, a leak to earth, a tee), and stations whose current
//     departs from both neighbours (a local disturbance, not a step); and
//     where the conductor ends or its current leaves it for good: stations
//     at either end of the route whose lines all lie over one and a half
//     times as deep as the sound stations before them and short of their
//     current as past an end, not as where a conductor dives (a line over
//     ten times as deep counting only against a dive, whatever its
//     current), are left out of the profile and the end is reported, with
//     the current and depth before it fitted allowing for the share of the
//     end's field the stations approaching it miss (ends.go, endbefore.go);
//     for the steps those stations read their current divided by that
//     share, when the share explains them (endshare.go);
//   - cover shallower than a minimum the caller names;
//   - stations whose fit is poor or ambiguous; when the sound stations
//     either side (within three) differ in direction by 10 degrees or more
//     in plan, the finding names the bend as the likely cause, with the turn
//     (bendAt), and changes in current within the bend are not taken for
//     steps (see Steps in current);
//   - dipole-like anomalies: fields better explained by a magnetised
//     object than by a current. The caller decides (Station.Dipole, with
//     the object's position in Station.Object); package report refits the
//     groups this package reports as current anomalies or poor fits with a
//     point dipole beside the conductor. A current anomaly at a station
//     already reported as a poor fit is not reported twice. The object's
//     depth is given below ground when the ground is known, else below the
//     sensors, saying so (Settings.DepthsBelowGround);
//   - weak, steep further sources (Station.Further): a line under 10% of
//     the station's current dipping more than 45 degrees is more likely
//     the fit absorbing a bend or a change of depth of the conductor than
//     another conductor. It is reported, not checked for cover, and a
//     caution when, were it a conductor, it may lie shallower than the
//     minimum cover (weakSources).
//
// # Ordering and chainage
//
// The stations' points are chained by nearest neighbour from the station
// farthest from their centroid (an end of an open route), then the chain is
// improved by 2-opt moves (reversing a run of stations whenever that shortens
// the path). The chain runs in the direction that best agrees with the order
// in which the caller gave the stations. Chainage is the cumulative horizontal (east,
// north) distance between successive station points:
//
//	c_0 = 0,  c_i = c_(i-1) + |P_i - P_(i-1)|_EN
//
// Round a bend that quality names (below) the chord cuts the corner:
// there chainage runs along the first sound station's line to where it
// meets the next sound station's line and on along that, the stations in
// between placed on those two legs and kept in the caller's order (see
// corner.go).
//
// Each station's direction is turned to point along increasing chainage and
// its current negated when that flips it, so that currents from separately
// fitted groups share one sign convention. For an AC phasor the phase moves
// by 180 degrees instead.
//
// Stations closer along the route than a tenth of its station spacing are
// repeats of one station (a route walked again, in a log of its own): they
// take no part in each other's direction, and the steps and the
// between-station scatter take each set of repeats as one station, their
// inverse-variance mean (see repeats.go). Repeats whose currents disagree
// beyond their sigmas (a chi-square over the sets of repeats) are reported
// as KindWalksDiffer, with each walk's level and its change from the
// first walk (see walks.go). When one change, or one ratio, per walk
// accounts for their disagreement, each later walk's stations are first
// brought to the first walk's level by it, its sigma carried, so that
// the steps see one current along the route (Route.FirstWalk,
// Placed.FirstWalkCurrent). Where the repeats read one level, so that a
// change and a ratio fit them alike, the change is taken, the currents
// published at the first walk's level carry the two's difference in
// their sigmas, and a step between stations of one later walk is also
// given at that walk's own level and as a share of its current. Repeats
// whose depths differ between the walks beyond 3 sigmas are reported as
// KindWalksDepthDiffer. When one change per walk on one side of a
// point between two sets of repeats accounts for it (a step whose size
// changed between the walks), the finding is a warning with each walk's
// step there, and only the stations on that side are brought to the
// first walk's level, so that the steps take the first walk's step;
// otherwise the combined station's sigma is widened by the repeats'
// disagreement. For AC, each later walk's phases are first referred to
// the first walk's by one fitted offset (walks on different days have
// phase references of their own); where one offset does not hold (a
// phasor loss that changed between the walks), a KindWalksDiffer caution
// says where, and the phasor steps take the first walk's phases alone at
// the repeated stations (see walkphase.go).
//
// # Steps in current
//
// Between successive usable stations i and i+1 the change in current is
//
//	dI = I_(i+1) - I_i,   s = sqrt(s_i^2 + s_(i+1)^2).
//
// A gradual loss of current along the route is not a step: on a coated
// pipeline protected by impressed current the current decays roughly as
// I(x) = I0 exp(-a x), a = sqrt(R'G') (transmission-line model). Build
// therefore subtracts the smooth trend g dx, with g the median gradient
// dI/dx over up to Settings.TrendWindow intervals on either side (skipping
// the two intervals that share a station with the one tested, so the trend
// is independent of dI and a step does not leak into its neighbours), and
// reports a step when
//
//	|dI - g dx| > k sqrt(s^2 + (dx s_g)^2)      (k = Settings.StepK, default 3)
//
// where s_g^2 = (pi/2) mean(s_k^2/dx_k^2)/m is the large-sample variance of
// the median of the m neighbouring gradients (the median of m normal values
// has variance about pi sigma^2 / (2 m)), or the same from the gradients'
// own spread (1.4826 MAD) when they scatter more, and s^2 = s1^2 + s2^2 +
// 2 tau^2: tau (Route.ModelScatter) is the between-station scatter beyond
// the fits' own sigmas, the error of the straight-line model near bends,
// estimated robustly from the detrended differences of the whole route
// (scatter.go) and added to every station's variance, in the anomaly test
// and the sizes reported too. On a short route (7 to 15 usable stations)
// tau is taken only when a test at 1% finds scatter beyond the fits'
// sigmas, and is then widened for the few intervals it is estimated from
// (Student's t; Route.ScatterWidening); shorter routes take none. When one
// step, fitted with its transition, explains that excess (an F test at 1%),
// the scatter is taken about the step instead (stepscatter.go): a step spread
// over several stations is not scatter. A run whose levels either side (below) do
// not differ by k sigma is not reported: one or two stations off, not
// current leaving.
//
// Steps are found one at a time, the most significant first, and each one
// found is left out of the trend of the others, so that a step is never taken
// for part of the trend. Two steps either side of one station that cancel
// (down and back up to within k sigma) mark that station as a current
// anomaly, a local disturbance such as a magnetised object distorting its
// fit; it is reported, left out, and the search runs again. Adjacent steps of
// the same sign are one step spread over the stations between them (a fault
// close to a traverse shows partly in the traverse's own current), reported
// once with its total size. The step is bracketed between the two stations, whose chainages are the
// finding's range.
//
// Such a spread step need not pass the test above in either interval,
// each holding part of it, though its size from the levels either side is
// many sigmas. When no single interval is left to find, every span of two
// intervals that change the same way is tested as the size is measured:
// two levels and a shared slope fitted to up to eight stations either side,
// the middle station left out, the step's sigma scaled by the Birge ratio.
// The largest span whose |step|/sigma exceeds the Bonferroni bound for the
// route's spans (a route-wide rate of 1% at k = 3; 3.19 for 8 spans, 3.47
// for 20) is taken as one step over both intervals, and the search goes on
// (detect, spanTest).
//
// Near a bend the straight-line fits are biased by the turned arm: the
// currents of the stations nearest the vertex read several per cent high
// and those some depths away a few sigma, so a rise into a bend and a fall
// out of it are the model's error. Steps whose bracket overlaps a bend that
// the poor-fit findings name (from the sound station before it to the one
// after) are merged into one step across the bend, sized from the levels
// either side of it, and reported only when those differ by k sigma and
// MinStep, saying it was measured across the bend; otherwise the bend's
// poor-fit finding says what was withheld (acrossBends). A station inside
// a named bend is not reported as a current anomaly.
//
// Its size is not the difference of the bracketing stations: near the point
// where current leaves, an infinite-line fit sees a semi-infinite conductor,
// and at a distance d from its end at depth h a point above it sees the
// fraction (1 + d/sqrt(d^2 + h^2))/2 of the current, so the fitted currents
// change over several stations. The size is the difference of the levels
// either side, fitted with the transition between them (see plateau.go):
//
//	I(x) = I_after + (I_before - I_after) (1 + (x_f - x)/sqrt((x_f - x)^2 + H^2))/2 + g (x - x_f)
//
// over the run's stations and up to eight sound ones beyond each end, with
// x_f and H found by a grid search, the trend g always fitted with four
// stations or more (a trend kept only when significant biases the step,
// and so does leaving it out beside a one-station side; see plateau.go
// sharedSlope), a shared
// scatter tau^2 added to the stations' own variances (DerSimonian & Laird
// 1986), and the sigma the half-width of the profile interval of
// I_after - I_before, scaled by the Birge ratio when that exceeds one; a
// gradual transition's x_f and H are then polished off the grid and their
// uncertainty added by the delta method when that is wider. When the
// transition's shape places x_f within the bracket the finding gives that
// location with its sigma, the profile interval of x_f (profileRange), or
// a station spacing's sqrt(12) share where the level model misfits its
// stations (two losses sized as one; levels.misfits). A step with a
// single station on a side (a loss between a route's first two stations
// or its last two) and three or more on the other is sized instead by
// averaging over the grid: the levels, the step and x_f are the means over
// the grid's transitions weighted by their likelihood, exp(-Delta chi^2 /
// 2s), and their sigmas the weighted spread, for the lone station's level
// rests on the transition's shape, which chi-square's long valley in
// (x_f, H) fixes poorly (oneside.go). H stays within the grid's range (0.02 to 3
// station spacings), the step's sigma is never less than the levels'
// covariance gives, and a fit in which the trend inflates the step's
// variance more than maxInflation times (the levels and the slope nearly
// collinear) is not used: the bracketing stations are. A poor station sets
// no level alone: steps either side of a poor bracketing station are
// merged into one across it (acrossPoor), a poor bracketing station's
// sigma is scaled by the square root of its reduced chi-square, and a run
// whose levels agree does not bound its neighbours' plateaus; nor does a
// run whose step goes against the change between its bracketing stations
// (against), or whose change a more significant neighbour's transition
// explains (the stations reading a leak's tail; stepFindings; a neighbour
// with one station on a side is judged by its levels fitted across the
// run too, as the run's bracket cuts its long side short). A station
// whose misfit is many times the noise measured from its own readings
// (Station.Noise), against what the route's soundest fits show, counts as
// poor here whatever the survey's yardstick says, and the shift its misfit
// can make, and that of the stations beside it, widens the sigmas
// (strain.go).
//
// The sigmas of the size and the location are checked by Monte Carlo
// coverage (common practice): on synthetic routes with a known step the
// spread of (reported - true)/sigma must be close to one, on station
// lists built directly (coverage_test.go) and through the line fits of
// simulated traverses (coverage_fits_test.go).
// With station scatter beyond the fits' sigmas the size's sigma is
// conservative there, by design: the route's tau is added on top of the
// plateau fit's own scatter, for model error that neighbouring stations
// share and that does not average away over a plateau.
//
// # Cover
//
// Depth is measured below the depth reference of the fit; cover is depth
// minus Settings.SensorHeight (the sensors' height above ground when the
// depth reference is the sensors' mean height). No single minimum cover is
// law: US NEC Table 300.5 asks 600 mm for direct-burial cable up to 1000 V in
// general locations; UK distribution practice is 450-600 mm for LV and
// 600-700 mm for 11 kV. The minimum and the name of the code it comes from
// are settings.
//
// A depth's sigma from the fit covers the reading noise only: at a metre's
// depth under a strong signal it can be a fraction of a millimetre, while
// the ground level itself is known only as well as the sensors' height
// above it was held. Settings.GroundSigma, the one-sigma uncertainty of the
// ground relative to the depth reference, is added in quadrature to every
// depth sigma for the cover check and the cover reported.
package route
