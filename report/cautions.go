package report

// Cautions are printed on every crew report, in this order, and carried
// by every file a crew may read alone (results.json, route.geojson,
// findings.csv) and by the terminal summaries. They hold whatever the
// estimates say.
var Cautions = []string{
	"These are estimates computed from magnetic field readings, not a verified locate.",
	"Confirm the position and depth of every conductor by approved methods before any excavation.",
	"Treat every conductor as live, whatever current this report estimates.",
	"Local codes, permits and licensed practice prevail over anything in this report.",
}

// CautionShort is the cautions in one line, for places where all four do
// not fit: the printed report's running footer and the head of its long
// tables, repeated on every printed page, so that a page torn from the
// report (the one with the dig position, handed to an excavation crew)
// still carries them.
const CautionShort = "Estimates from magnetic readings, not a verified locate: confirm every position and depth by approved methods before any excavation; treat every conductor as live."

// NetCurrentCaution says that an AC current read is the net current the
// sensors see. An alternating current induces currents in the
// conducting metal bonded around or beside its conductor (a cable's
// sheath or armour, steel trunking or conduit, a cable tray, a parallel
// earth conductor), which flow back along it within the sensors' view.
// Outside that metal their field is that of a line where the conductor
// is (Ampere's law), so a fit reads the conductor's current and the
// induced return together, as a sound fit with small sigmas: no misfit
// can show it. (Simulated: a 400 A cable at the centre of steel trunking
// bonded at both ends read 282.84 A, 45 degrees behind, quality good.)
// locate notes it on an AC run that found a current, and the live
// pipeline carries it on every AC estimate and asset.
const NetCurrentCaution = "The current read is the net current the sensors see: the conductor's own and any current induced in sheaths, armour, trunking or other bonded metal around or beside it, which flows back within their view (a cable in steel trunking bonded at both ends can read well under its current, turned in phase). The fit cannot tell them apart and shows no misfit for it: check each conductor's current once with a clamp meter before taking it as the conductor's own."
