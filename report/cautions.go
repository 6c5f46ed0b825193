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
