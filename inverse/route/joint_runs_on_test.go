package route

import (
	"math"
	"strings"
	"testing"
)

// jointStep is the fixture of the stations locate fed to Build for an
// invented Pellingham Causeway cable (simulated, seed 1, 2 nT noise):
// 20 A DC along east 0.9 m below ground, stepping down to 1.4 m between
// east 29 and 30 m (a joint bay) where 3 A leave it, and running on at
// 1.4 m with 17 A; traverses 12 m long every 4 m from east 2 m (T01) to
// 58 m (T15), the sensor 0.3 m up, depths below ground. T08 (east 30 m)
// straddles the step and fits poorly; T09-T15 fit the deeper cable.
func jointStep() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{2, -8.94179e-05, -0.898985}, Dir: [3]float64{1, -3.81207e-05, 2.20208e-05}, Current: 19.9762, CurrentSigma: 0.004601, Depth: 0.898985, DepthSigma: 0.0003136, RMS: 2.075, Chi2: 343.505, DOF: 355, OK: true},
		{Key: "T02", Point: [3]float64{6, -9.08353e-05, -0.89888}, Dir: [3]float64{1, 4.11916e-06, -7.00761e-05}, Current: 19.9752, CurrentSigma: 0.004606, Depth: 0.89888, DepthSigma: 0.000314, RMS: 2.077, Chi2: 344.4, DOF: 355, OK: true},
		{Key: "T03", Point: [3]float64{10, -0.00018359, -0.898776}, Dir: [3]float64{1, -1.73843e-05, -0.000608157}, Current: 19.9763, CurrentSigma: 0.004545, Depth: 0.898776, DepthSigma: 0.0003098, RMS: 2.05, Chi2: 335.38, DOF: 355, OK: true},
		{Key: "T04", Point: [3]float64{14, 1.96741e-05, -0.898036}, Dir: [3]float64{1, -0.000124392, -0.000331285}, Current: 19.9559, CurrentSigma: 0.004687, Depth: 0.898036, DepthSigma: 0.0003196, RMS: 2.115, Chi2: 357.107, DOF: 355, OK: true},
		{Key: "T05", Point: [3]float64{18, 5.20944e-05, -0.897025}, Dir: [3]float64{1, 8.67327e-05, -0.000712524}, Current: 19.929, CurrentSigma: 0.005436, Depth: 0.897025, DepthSigma: 0.0003709, RMS: 2.455, Chi2: 481.094, DOF: 355, OK: true},
		{Key: "T06", Point: [3]float64{22, -5.15989e-06, -0.892781}, Dir: [3]float64{0.999996, -9.11185e-05, -0.00280042}, Current: 19.8248, CurrentSigma: 0.008071, Depth: 0.892781, DepthSigma: 0.0005521, RMS: 3.658, Chi2: 1068.07, DOF: 355, OK: true},
		{Key: "T07", Point: [3]float64{25.9856, -0.00385253, -0.849768}, Dir: [3]float64{0.999785, 0.00222197, -0.0206005}, Current: 19.149, CurrentSigma: 0.01226, Depth: 0.849768, DepthSigma: 0.001543, RMS: 3.805, Chi2: 1155.34, DOF: 350, OK: true},
		{Key: "T08", Point: [3]float64{30, -0.000105666, -1.24241}, Dir: [3]float64{0.996555, -0.000166153, -0.082935}, Current: 18.2406, CurrentSigma: 0.04323, Depth: 1.24241, DepthSigma: 0.003919, RMS: 15.04, Chi2: 18055.9, DOF: 355, OK: true},
		{Key: "T09", Point: [3]float64{34, 0.000403797, -1.40427}, Dir: [3]float64{0.999968, 0.00116724, -0.00796702}, Current: 17.1141, CurrentSigma: 0.05124, Depth: 1.40427, DepthSigma: 0.002397, RMS: 2.202, Chi2: 387.015, DOF: 350, OK: true},
		{Key: "T10", Point: [3]float64{38, -0.000527572, -1.41013}, Dir: [3]float64{0.999993, 0.00036215, -0.00365528}, Current: 17.1656, CurrentSigma: 0.008374, Depth: 1.41013, DepthSigma: 0.0008676, RMS: 2.578, Chi2: 530.335, DOF: 355, OK: true},
		{Key: "T11", Point: [3]float64{42, 0.000299071, -1.40504}, Dir: [3]float64{0.999999, 4.19206e-05, -0.00121251}, Current: 17.079, CurrentSigma: 0.006557, Depth: 1.40504, DepthSigma: 0.0006813, RMS: 2.026, Chi2: 327.471, DOF: 355, OK: true},
		{Key: "T12", Point: [3]float64{46, -0.000492531, -1.40252}, Dir: [3]float64{1, 0.000211263, -0.00062491}, Current: 17.0393, CurrentSigma: 0.006815, Depth: 1.40252, DepthSigma: 0.0007091, RMS: 2.109, Chi2: 355, DOF: 355, OK: true},
		{Key: "T13", Point: [3]float64{50, 1.25849e-05, -1.40303}, Dir: [3]float64{1, 3.18865e-05, -8.767e-05}, Current: 17.0381, CurrentSigma: 0.006489, Depth: 1.40303, DepthSigma: 0.0006753, RMS: 2.007, Chi2: 321.561, DOF: 355, OK: true},
		{Key: "T14", Point: [3]float64{54, -0.000174925, -1.4008}, Dir: [3]float64{1, 0.000339443, 0.000197987}, Current: 17.0122, CurrentSigma: 0.006608, Depth: 1.4008, DepthSigma: 0.0006881, RMS: 2.047, Chi2: 334.542, DOF: 355, OK: true},
		{Key: "T15", Point: [3]float64{58, 0.000556276, -1.40132}, Dir: [3]float64{1, 0.000474616, -0.000388344}, Current: 17.0182, CurrentSigma: 0.006318, Depth: 1.40132, DepthSigma: 0.0006578, RMS: 1.957, Chi2: 305.547, DOF: 355, OK: true},
	}
}

// TestJointRunsOnDeeper: a cable that steps deeper at a joint and loses
// current there is not a conductor's end. Past a real end a line fitted
// to the half-line's field comes out deeper and weaker the farther the
// traverse lies from it (Biot-Savart over the half-line); here seven
// traverses over 24 m agree to 0.01 m and 0.2 A, as a continuing line
// does. The stations past the joint stay in the current and cover
// profile, and the 3 A lost there (the simulated truth, Kirchhoff's
// current law at the joint) is found as a fall across it.
func TestJointRunsOnDeeper(t *testing.T) {
	r, err := Build(jointStep(), &Settings{DepthsBelowGround: true, MaxReducedChi2: 4})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range r.Findings {
		if strings.Contains(f.Message, "appears to end") {
			t.Errorf("end reported at a joint the cable runs on past: %s", f.Message)
		}
	}
	for _, p := range r.Stations {
		if p.Point[0] > 31 && !p.usable() {
			t.Errorf("%s (east %.0f m, past the joint, %.4g A at %.4g m; truth 17 A at 1.4 m) left out of the profile: %s", p.Key, p.Point[0], p.Current, p.Depth, p.Problem)
		}
	}
	var step *Finding
	steps := findings(r, KindCurrentStep)
	for i := range steps {
		if steps[i].From <= 28.5 && steps[i].To >= 31.5 {
			step = &steps[i]
		}
	}
	if step == nil {
		t.Fatalf("no current step across the joint (between chainage 28 and 32 m): %v", r.Findings)
	}
	if step.Severity != SeverityWarning {
		t.Errorf("step across the joint is a %s, want a warning (3 A leave the cable): %s", step.Severity, step.Message)
	}
	if len(step.Values) == 0 {
		t.Fatalf("step has no size: %s", step.Message)
	}
	v := step.Values[0]
	t.Logf("step %.3g ± %.2g A: %s", v.Value, v.Sigma, step.Message)
	if math.Abs(math.Abs(v.Value)-3) > 3*v.Sigma+0.1 {
		t.Errorf("step %.3g ± %.2g A, want the 3 A lost at the joint (simulated truth) within 3 sigma: %s", v.Value, v.Sigma, step.Message)
	}
}
