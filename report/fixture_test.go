package report

import (
	"fmt"
	"math"
	"math/rand/v2"

	"undercurrent/inverse/route"
)

// fenwickLane builds an invented result document for the fictional Fenwick
// Lane cable route out of Harrow Fen substation: twelve traverses 15 m apart
// across a cable running 60 degrees east of north, 85 A falling by 6 A
// between T07 and T08, 0.95 m below the sensors (held 0.25 m above ground)
// except at T04 where it rises to 0.78 m. Readings are the field of an
// infinite line (DOMAIN.md, Biot-Savart for an infinite filament) plus a
// uniform Earth field and noise.
// It is fixture data, not a check value.
func fenwickLane(geo bool) *Document {
	const (
		n       = 12
		spacing = 15.0
		az      = 60.0 * math.Pi / 180
		sensorH = 0.25
	)
	rng := rand.New(rand.NewPCG(2026, 5))
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	right := [3]float64{u[1], -u[0], 0}
	earth := [3]float64{120, 18650, -45200} // nT, invented mid-latitude field
	d := &Document{
		SchemaVersion: SchemaVersion,
		Tool:          Tool{Name: "undercurrent", Version: "v0.0.0-test"},
		Created:       "2026-12-02T04:00:00Z",
		Title:         "Fenwick Lane cable route",
		Site:          "Harrow Fen substation",
		Inputs: []Input{
			{Role: "survey", Path: "fenwick-lane.csv", SHA256: "3f1c0e7a9b2d4c6e8f00112233445566778899aabbccddeeff00112233445566", Rows: n * 21},
			{Role: "base", Path: "harrow-fen-base.csv", SHA256: "aa00bb11cc22dd33ee44ff5566778899aabbccddeeff00112233445566778899", Rows: 3600},
		},
		Calibration:    &Correction{File: "rover-cal.json", Summary: "hard iron (12.1, -8.4, 30.2) nT removed; soft iron within 0.4 %"},
		BaseStation:    &Correction{File: "harrow-fen-base.csv", Summary: "diurnal departure removed, 6.2 nT range over the survey"},
		Frame:          Frame{Kind: FrameLocalENU},
		DepthReference: DepthReference{Kind: DepthBelowSensors, Z: 0, SensorHeight: sensorH},
		Signal:         Signal{Mode: SignalDC},
		Settings:       map[string]string{"count": "auto", "group-by": "traverse", "min-cover": "0.6 m (NEC Table 300.5)"},
		MinCover:       &MinCover{Depth: 0.6, Code: "NEC Table 300.5"},
		Warnings:       []string{"fenwick-lane.csv: 3 rows with a missing position skipped"},
	}
	if geo {
		d.Frame.Origin = &Origin{Lat: 52.4719, Lon: 0.1623, H: 3.0}
	}
	var stations []route.Station
	for i := 0; i < n; i++ {
		key := fmt.Sprintf("T%02d", i+1)
		depth := 0.95
		if i == 3 {
			depth = 0.78
		}
		current := 85.0
		if i >= 7 {
			current = 79.0
		}
		along := float64(i) * spacing
		p0 := [3]float64{10 + along*u[0], 5 + along*u[1], -depth}
		var pos, meas, pred [][3]float64
		for k := -10; k <= 10; k++ {
			off := 0.5 * float64(k)
			r := [3]float64{p0[0] + off*right[0], p0[1] + off*right[1], 0}
			b := lineField(p0, u, r, current)
			var m, f [3]float64
			for a := 0; a < 3; a++ {
				f[a] = b[a]*1e9 + earth[a]
				m[a] = f[a] + 2*rng.NormFloat64()
			}
			pos, meas, pred = append(pos, r), append(meas, m), append(pred, f)
		}
		sigI, sigD := 0.6+0.05*float64(i%3), 0.012
		src := Source{
			Kind: KindLine, Point: p0, Direction: u,
			Current: current + sigI*rng.NormFloat64(), CurrentSigma: sigI,
			Depth: depth + sigD*rng.NormFloat64(), DepthSigma: sigD,
			Offset: 0.02 * rng.NormFloat64(), OffsetSigma: 0.01,
			Azimuth: 60 + 0.3*rng.NormFloat64(), AzimuthSigma: 0.4,
			Dip: 0, DipSigma: 0.2, Span: [2]float64{-0.2, 0.2},
		}
		if i%4 == 1 { // fits report the direction either way
			src.Direction = [3]float64{-u[0], -u[1], 0}
			src.Current = -src.Current
			src.Azimuth += 180
		}
		prof, err := NewProfile(pos, meas, pred, p0, src.Direction, ComponentDC, 0)
		if err != nil {
			panic(err)
		}
		g := Group{
			Key: key, Log: "fenwick-lane.csv", Points: len(pos), Centroid: p0, RMS: 2.0 + 0.1*float64(i%3),
			Background: earth, BackgroundSigma: [3]float64{0.5, 0.5, 0.6},
			Chi2: 120 + float64(i), DOF: 56, OK: true, Status: "converged: relative reduction below tolerance",
			Criteria: []Criterion{{Count: 1, AIC: 130, BIC: 145, RSS: 250, Chosen: true}, {Count: 2, AIC: 136, BIC: 170, RSS: 246}},
			Sources:  []Source{src},
			Profile:  prof,
		}
		d.Groups = append(d.Groups, g)
		stations = append(stations, route.Station{
			Key: key, Point: src.Point, Dir: src.Direction, Current: src.Current, CurrentSigma: src.CurrentSigma,
			Depth: src.Depth, DepthSigma: src.DepthSigma, RMS: g.RMS, OK: true,
		})
	}
	// One traverse crosses a buried steel drum.
	d.Groups[10].Problem = "a point dipole fits better than a line"
	stations[10].Dipole = true
	stations[10].Problem = ""
	r, err := route.Build(stations, &route.Settings{MinCover: 0.6, CoverCode: "NEC Table 300.5", SensorHeight: sensorH})
	if err != nil {
		panic(err)
	}
	d.SetRoute(r)
	return d
}

// lineField is the field in tesla at r of an infinite filament through p0
// with unit direction u carrying current (DOMAIN.md, forward models):
// rho = (r - p0) - ((r - p0).u) u; B = (mu0 I / 2 pi) (u x rho) / |rho|^2.
func lineField(p0, u, r [3]float64, current float64) [3]float64 {
	const mu0 = 1.25663706127e-6 // CODATA 2022
	d := [3]float64{r[0] - p0[0], r[1] - p0[1], r[2] - p0[2]}
	du := d[0]*u[0] + d[1]*u[1] + d[2]*u[2]
	rho := [3]float64{d[0] - du*u[0], d[1] - du*u[1], d[2] - du*u[2]}
	q := rho[0]*rho[0] + rho[1]*rho[1] + rho[2]*rho[2]
	k := mu0 * current / (2 * math.Pi * q)
	return [3]float64{k * (u[1]*rho[2] - u[2]*rho[1]), k * (u[2]*rho[0] - u[0]*rho[2]), k * (u[0]*rho[1] - u[1]*rho[0])}
}
