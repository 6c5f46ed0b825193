package calibrate_test

import (
	"fmt"
	"math"

	"undercurrent/calibrate"
	"undercurrent/ingest"
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
