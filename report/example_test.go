package report_test

import (
	"fmt"
	"os"

	"undercurrent/report"
)

// A one-group DC result over the fictional Harrow Fen substation yard.
func harrowFen() *report.Document {
	return &report.Document{
		SchemaVersion:  report.SchemaVersion,
		Tool:           report.Tool{Name: "undercurrent", Version: "v0.1.0"},
		Title:          "Harrow Fen substation, earthing check",
		Frame:          report.Frame{Kind: report.FrameLocalENU},
		DepthReference: report.DepthReference{Kind: report.DepthBelowSensors, SensorHeight: 0.3},
		Signal:         report.Signal{Mode: report.SignalDC},
		Groups: []report.Group{{
			Points: 41, RMS: 4.8, Background: [3]float64{210, 18740, -45110}, OK: true,
			Sources: []report.Source{{
				Kind: report.KindLine, Point: [3]float64{2.41, 0, -1.12}, Direction: [3]float64{0, 1, 0},
				Current: 12.31, CurrentSigma: 0.04, Depth: 1.12, DepthSigma: 0.006, Azimuth: 0.4, AzimuthSigma: 0.3,
			}},
		}},
	}
}

func ExampleWriteCSV() {
	if err := report.WriteCSV(os.Stdout, harrowFen()); err != nil {
		fmt.Println(err)
	}
	// Output:
	// chainage_m,route_chainage_m,group,source,conductor,kind,signal,current_a,current_sigma_a,phase_deg,phase_sigma_deg,depth_m,depth_sigma_m,depth_reference,cover_m,cover_sigma_m,moment_a_m2,moment_sigma_a_m2,east_m,north_m,up_m,lon_deg,lat_deg,azimuth_deg,azimuth_sigma_deg,dip_deg,dip_sigma_deg,offset_m,offset_sigma_m,points,rms_nt,reference_chi2,dof,ok,problem,used,left_out,pair_current_times_spacing_am,pair_current_times_spacing_sigma_am,pair_net_current_a,pair_net_current_sigma_a,pair_net_current_phase_deg,pair_net_current_phase_sigma_deg,sum_current_a,sum_current_sigma_a,sum_phase_deg,sum_phase_sigma_deg,uncertainty_note,current_first_walk_a,current_first_walk_sigma_a,fit,station_scatter_current_a,station_scatter_depth_m,log
	// ,,,1,1,line,dc,12.3100,0.04,,,1.12000,0.006,mean-sensor-height,0.82000,0.006,,,2.410,0.000,-1.120,,,0.400,0.3,0.00,,0.000,,41,4.8,,,true,,,,,,,,,,,,,,,,,sound,,,
}

func ExampleWriteGeoJSON() {
	d := harrowFen()
	d.Frame.Origin = &report.Origin{Lat: 52.4719, Lon: 0.1623, H: 3}
	d.Groups[0].Sources[0].Span = [2]float64{-10, 10}
	if err := report.WriteGeoJSON(os.Stdout, d); err != nil {
		fmt.Println(err)
	}
	// Output:
	// {"type":"FeatureCollection","schema_version":3,"cautions":["These are estimates computed from magnetic field readings, not a verified locate.","Confirm the position and depth of every conductor by approved methods before any excavation.","Treat every conductor as live, whatever current this report estimates.","Local codes, permits and licensed practice prevail over anything in this report."],"coordinate_frame":"wgs84","local_origin":{"lat_deg":52.4719,"lon_deg":0.1623,"height_m":3},"depth_reference":{"kind":"mean-sensor-height","z_m":0,"sensor_height_m":0.3},"signal":{"mode":"dc","current":"DC amperes, signed along the Point's azimuth_deg: negative flows the other way (a pair conductor's net_current_a along the pair's azimuth_deg)"},
	// "features":[
	// {"type":"Feature","id":"conductor/c1/1","geometry":{"type":"Point","coordinates":[0.16233547,52.47190000]},"properties":{"azimuth_deg":0.400,"azimuth_sigma_deg":0.3,"caution":"Estimates from magnetic readings, not a verified locate: confirm every position and depth by approved methods before any excavation; treat every conductor as live.","conductor":1,"cover_m":0.82000,"cover_sigma_m":0.006,"current_a":12.3100,"current_sigma_a":0.04,"depth_m":1.12000,"depth_note":"depth_m is the depth below the sensors, not below the ground: the sensors were 0.30 m above the ground, so cover_m, the depth below ground, is 0.30 m less.","depth_reference":"mean-sensor-height","depth_sigma_m":0.006,"dip_deg":0.00,"feature":"conductor","fit":"sound","group":"","ok":true,"source":1,"span_m":[-10.000,10.000]}}
	// ]}
}

func ExampleWriteJSON() {
	d := harrowFen()
	d.Findings = []report.Finding{{
		Kind: "shallow-cover", Severity: report.SeverityCaution, Position: [3]float64{2.41, 0, -1.12},
		Message: "example only",
	}}
	if err := report.WriteJSON(os.Stdout, d); err != nil {
		fmt.Println(err)
	}
	// Output:
	// {
	//   "cautions": [
	//     "These are estimates computed from magnetic field readings, not a verified locate.",
	//     "Confirm the position and depth of every conductor by approved methods before any excavation.",
	//     "Treat every conductor as live, whatever current this report estimates.",
	//     "Local codes, permits and licensed practice prevail over anything in this report."
	//   ],
	//   "schema_version": 3,
	//   "tool": {
	//     "name": "undercurrent",
	//     "version": "v0.1.0"
	//   },
	//   "title": "Harrow Fen substation, earthing check",
	//   "inputs": [],
	//   "frame": {
	//     "kind": "local-enu"
	//   },
	//   "depth_reference": {
	//     "kind": "mean-sensor-height",
	//     "z_m": 0,
	//     "sensor_height_m": 0.3
	//   },
	//   "signal": {
	//     "mode": "dc"
	//   },
	//   "groups": [
	//     {
	//       "key": "",
	//       "points": 41,
	//       "centroid_m": [0, 0, 0],
	//       "rms_nt": 4.8,
	//       "background_nt": [210, 18740, -45110],
	//       "background_sigma_nt": [0, 0, 0],
	//       "chi2": 0,
	//       "dof": 0,
	//       "ok": true,
	//       "sources": [
	//         {
	//           "kind": "line",
	//           "point_m": [2.41, 0, -1.12],
	//           "direction": [0, 1, 0],
	//           "current_a": 12.31,
	//           "current_sigma_a": 0.04,
	//           "depth_m": 1.12,
	//           "depth_sigma_m": 0.006,
	//           "offset_m": 0,
	//           "offset_sigma_m": 0,
	//           "azimuth_deg": 0.4,
	//           "azimuth_sigma_deg": 0.3,
	//           "dip_deg": 0,
	//           "dip_sigma_deg": 0,
	//           "span_m": [0, 0]
	//         }
	//       ],
	//       "fit": "sound"
	//     }
	//   ],
	//   "findings": [
	//     {
	//       "kind": "shallow-cover",
	//       "severity": "caution",
	//       "chainage_from_m": 0,
	//       "chainage_to_m": 0,
	//       "position_m": [2.41, 0, -1.12],
	//       "message": "example only",
	//       "id": "finding/shallow-cover/c1"
	//     }
	//   ]
	// }
}

// The crew report always carries the cautions.
func ExampleWriteHTML() {
	f, err := os.CreateTemp("", "report-*.html")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.Remove(f.Name())
	defer f.Close()
	if err := report.WriteHTML(f, harrowFen()); err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range report.Cautions {
		fmt.Println(c)
	}
	// Output:
	// These are estimates computed from magnetic field readings, not a verified locate.
	// Confirm the position and depth of every conductor by approved methods before any excavation.
	// Treat every conductor as live, whatever current this report estimates.
	// Local codes, permits and licensed practice prevail over anything in this report.
}
