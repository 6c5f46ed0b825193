package calibrate_test

import (
	"fmt"
	"log"
	"math"
	"os"
	"path/filepath"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

func ExampleDemodulate() {
	// One second of a 2 kHz log walked along the Fenwick Lane cable route,
	// over a conductor carrying 50 Hz: 80 nT RMS east, in phase with t = 0.
	s := &ingest.Samples{Source: "fenwick-lane-ac.csv"}
	for i := 0; i < 2000; i++ {
		t := 1.7e9 + float64(i)/2000
		s.Time = append(s.Time, t)
		s.X = append(s.X, 0.5*float64(i)/2000)
		s.Y = append(s.Y, 0)
		s.Z = append(s.Z, 0.3)
		ph := 2 * math.Pi * 50 * float64(i) / 2000
		s.Bx = append(s.Bx, 1500+80*math.Sqrt2*math.Cos(ph))
		s.By = append(s.By, 20800)
		s.Bz = append(s.Bz, -47500)
	}
	res, err := calibrate.Demodulate(s, &calibrate.DemodSettings{Freq: 50, Window: 0.2})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, w := range res.Windows[:2] {
		fmt.Printf("t0+%.3f s at x = %.3f m: east %.2f nT RMS\n", w.Time-1.7e9, w.Pos[0], real(w.B[0]))
	}
	// Output:
	// t0+0.100 s at x = 0.050 m: east 80.00 nT RMS
	// t0+0.300 s at x = 0.150 m: east 80.00 nT RMS
}

func ExampleDespike() {
	s := &ingest.Samples{Source: "harrow-fen-yard.csv"}
	for i := 0; i < 30; i++ {
		s.Time = append(s.Time, float64(i))
		s.Bx = append(s.Bx, 1500+0.1*float64(i%3))
		s.By = append(s.By, 20800)
		s.Bz = append(s.Bz, -47500)
	}
	s.By[12] += 350 // a passing vehicle's door slam, one sample
	rep, err := calibrate.Despike(s, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("removed rows", rep.Rows, "kept", rep.Kept)
	// Output: removed rows [12] kept 29
}

func ExampleBaseCorrect() {
	// A base station at Harrow Fen substation, read every minute, saw the
	// field rise 6 nT north over ten minutes; the rover's readings are
	// corrected for it.
	base := &ingest.Samples{Source: "harrow-fen-base.csv"}
	for i := range 11 {
		base.Time = append(base.Time, 60*float64(i))
		base.Bx = append(base.Bx, 1500)
		base.By = append(base.By, 20800+6*float64(i)/10)
		base.Bz = append(base.Bz, -47500)
	}
	rover := &ingest.Samples{Source: "fenwick-lane.csv",
		Time: []float64{300, 600}, Bx: []float64{1620, 1630}, By: []float64{20903, 20906}, Bz: []float64{-47550, -47560}}
	rep, err := calibrate.BaseCorrect(rover, base, &calibrate.BaseSettings{RefMode: "first"})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(rover.By, rep.Range[1], len(rep.Warnings))
	// Output: [20900 20900] 3 0
}

func ExampleTilt() {
	// Sensor pitched 10 degrees nose-up while facing north in a field of
	// 20 000 nT north and 45 000 nT down; tilt correction restores it.
	const d = math.Pi / 180
	s := &ingest.Samples{Source: "kestrel-moor-T1.csv", Time: []float64{0},
		Bx:   []float64{20000*math.Cos(10*d) - 45000*math.Sin(10*d)},
		By:   []float64{0},
		Bz:   []float64{20000*math.Sin(10*d) + 45000*math.Cos(10*d)},
		Roll: []float64{0}, Pitch: []float64{10}, Yaw: []float64{0},
		Frame: ingest.FrameSensor}
	if err := calibrate.Tilt(s, nil); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("E %.1f N %.1f U %.1f nT\n", s.Bx[0]+0, s.By[0], s.Bz[0])
	// Output: E 0.0 N 20000.0 U -45000.0 nT
}

// The AC chain from a log to a conductor's current and phase. The log is
// invented: inverse/simulate makes one traverse walked across a 50 Hz cable
// on the Fenwick Lane route (20 A RMS at 35°, 0.8 m deep, 4 nT of noise),
// written to a CSV file and read back as any logged file would be.
func ExampleDemodulate_fitLines() {
	sc, err := simulate.Parse([]byte(`
name = "fenwick-lane-ac-traverse"
seed = 7
start = "2026-03-14T11:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 4.0
sample_rate_hz = 500.0
[survey]
route = [[0.0, 0.0], [10.0, 0.0]]
count = 1
first_at_m = 5.0
length_m = 8.0
speed_m_s = 1.0
[[conductor]]
name = "service cable"
kind = "line"
point = [0.0, 0.4, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 20.0
frequency_hz = 50.0
phase_deg = 35.0
`), "fenwick-lane-ac-traverse.toml")
	if err != nil {
		log.Fatal(err)
	}
	made, err := simulate.Simulate(sc)
	if err != nil {
		log.Fatal(err)
	}
	dir, err := os.MkdirTemp("", "ac-chain")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "traverse.csv")
	if err := ingest.WriteSamples(path, made); err != nil {
		log.Fatal(err)
	}

	// Ingest, demodulate at the known frequency, fit.
	s, err := ingest.ReadSamples(path)
	if err != nil {
		log.Fatal(err)
	}
	res, err := calibrate.Demodulate(s, &calibrate.DemodSettings{Freq: 50, Window: 0.2})
	if err != nil {
		log.Fatal(err)
	}
	var p inverse.Problem
	var sigma float64
	for _, w := range res.Windows {
		p.Points = append(p.Points, w.Pos)
		p.Phasors = append(p.Phasors, w.B)
		p.Travel = append(p.Travel, w.Travel)
		sigma += (w.Sigma[0] + w.Sigma[1] + w.Sigma[2]) / 3
	}
	// Window.Sigma is the one-sigma of each part of a phasor, which is
	// what Problem.Sigma takes.
	p.Sigma = sigma / float64(len(res.Windows))
	ground := 0.0
	fit, err := inverse.FitLines(&p, &inverse.Settings{Count: 1, ReferenceZ: &ground})
	if err != nil {
		log.Fatal(err)
	}
	c := fit.Sources[0]
	fmt.Printf("%d windows, warnings %d\n", len(res.Windows), len(res.Warnings))
	fmt.Printf("current %.1f A RMS at %.0f°, %.2f m below the ground\n", c.Current, c.Phase, c.Depth)
	// Output:
	// 40 windows, warnings 0
	// current 20.0 A RMS at 35°, 0.80 m below the ground
}
