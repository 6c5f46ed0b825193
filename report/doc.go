// Package report turns fit results into what people read: the result
// document (Document) and its five renderings.
//
//   - WriteJSON: the result document, field names fixed by the project
//     (groups[] with key, points, rms_nt, background_nt and sources[] with
//     kind, point_m, direction, current_a, current_sigma_a, phase_deg,
//     depth_m, depth_sigma_m; findings[]; schema_version), read back by
//     ReadJSON.
//   - WriteCSV: one row per group and source, in route order, for a
//     spreadsheet.
//   - WriteGeoJSON: the route, conductors and findings for a GIS, as an
//     RFC 7946 FeatureCollection in WGS84 longitude and latitude when the
//     survey was geo-referenced, or in local metres, marked as such, when
//     it was not.
//   - WriteHTML: the crew report, one self-contained page with the cautions,
//     a summary, plots drawn with gonum.org/v1/plot as inline SVG, and the
//     corrections and settings used.
//   - WriteFindingsCSV: the findings alone, one row each with the safety
//     cautions and the run's warnings first, for a spreadsheet.
//
// The safety cautions (Cautions) go into every file a crew may be given
// alone: report.html opens with them, results.json and route.geojson carry
// them in a top-level "cautions" array (route.geojson also in a "caution"
// property, their short form, on every feature, since map viewers drop
// top-level members), and findings.csv in its first rows (kind "safety");
// results.csv is a data table without them.
//
// Every writer validates the document first (Document.Validate) and writes
// nothing when it is invalid, so a NaN never reaches a file. The writers
// take an io.Writer; WriteFiles renders all five in memory and then writes
// results.json, results.csv, findings.csv, route.geojson and report.html atomically into
// a directory, leaving no partial output directory on failure.
//
// Build makes a Document from per-group inverse fits (Fit: the readings,
// the inverse.Result or the error) and runs the along-route analysis;
// callers supply what Build cannot know (tool, inputs with NewInput,
// corrections, frame origin, signal, settings) in the head document.
// Build takes the fits as one survey and refuses, with an error naming the
// fits, what it could not report as one: keys that are repeated (or empty
// among several fits), a mix of DC and AC problems, depths measured from
// different references (below the ground at ReferenceZ for some fits,
// below the sensors for others, or two ReferenceZ heights), and a minimum
// cover to check when the depths are below the sensors and their height
// above ground is not given (as the command line refuses --min-cover
// without --sensor-height or --reference-z).
//
// # Conventions
//
// Positions are metres in a local east, north, up frame (Frame), with an
// optional WGS84 origin. Local positions are converted to WGS84 by
// ingest.Geodetic.FromLocal (up is the height above the origin's height;
// east and north are those of the tangent plane on the origin's height),
// through the ellipsoid (NIMA TR8350.2: a = 6378137 m, 1/f = 298.257223563): ENU to
// Earth-centred Earth-fixed about the origin, then ECEF to geodetic
// latitude by fixed-point iteration on
//
//	tan(phi) = z / (p (1 - e^2 N / (N + h))),  p = sqrt(x^2 + y^2).
//
// Depths are below DepthReference: the sensors' mean height unless a ground
// reference was given; cover is depth less the sensors' height above ground
// when that is known. Each line source's direction is a unit vector and its
// current is signed along it; SetRoute turns them all along the route. An
// AC current is the RMS of the phasor with phase_deg.
//
// Uncertainties are one standard deviation throughout the document; the
// crew report's plots draw two.
//
// # Along-route findings
//
// SetRoute takes the analysis of package undercurrent/inverse/route (steps
// in current, shallow cover, poor fits, dipole-like anomalies) into the
// document. The minimum cover is whatever the user named: no single value is
// law (US NEC Table 300.5 asks 600 mm for direct-burial cable up to 1000 V
// in general locations; UK distribution practice 450-700 mm).
//
// # Further conductors
//
// The strongest source of each group makes the route. The other line
// sources are linked from group to group into tracks (tracks.go): walking
// the groups in route order, each source is placed by its signed offset
// from the route's conductor (square to it, positive to the right looking
// along increasing chainage) and joins the track whose predicted offset and
// last depth are nearest, within a gate of max(1 m, 1.5 times the shallower
// depth); a group gives a track at most one source. Tracks seen in at least
// BuildSettings.TrackMinStations groups are numbered 2, 3, ... by
// decreasing median current, analysed by their own route.Build and kept in
// Document.Conductors; their findings carry Finding.Conductor.
//
// # Magnetised objects
//
// A buried steel object beside a conductor (a drum, a valve, a pile) adds a
// dipole field that a line fit absorbs as a biased current, a spurious weak
// line or a poor fit. For each group the route reports as a current anomaly,
// or as a poor fit that stands out, Build searches for one point dipole
// beside the group's conductors (inverse.StrengthsScan, then a joint fit)
// and, when the evidence, the agreement with the neighbours and the object's
// credibility all hold, marks the group as a magnetised object and reports
// the conductor refitted with it (dipole.go and its neighbours; the criteria
// are in dipole.go's comments).
package report
