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
