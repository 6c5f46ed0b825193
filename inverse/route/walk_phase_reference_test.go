package route

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

// phaseDays simulates an AC route walked on two days (phasorRoute,
// simulated truth): day1 with the current up before chainage 52.5 m and
// down after it, day2 a day later with up2 and down2, every phase of
// day2 read offDeg later (the phase of the current against the logger's
// clock on another day), read with sigmas of sa A and sp degrees, its stations 3 mm off day1's, named
// "day2.csv:T01" and so on; the walks named after their logs.
func phaseDays(seed uint64, up, down, up2, down2 complex128, offDeg, sa, sp float64) []Station {
	rng := rand.New(rand.NewPCG(seed, 1616))
	d1 := phasorRoute(rng, up, down, sa, sp, 0)
	d2 := phasorRoute(rng, up2, down2, sa, sp, 0)
	return phaseDaysTurning(d1, d2, offDeg, 0)
}

// phaseDaysTurning names the walks d1 and d2 (phasorRoute) as phaseDays
// does, day2's phases read offDeg later and turning rampDegPerS more a
// second along its walk (its day's frequency off the one demodulated at
// by its own amount; stations 20 s apart).
func phaseDaysTurning(d1, d2 []Station, offDeg, rampDegPerS float64) []Station {
	for i := range d1 {
		d2[i].Phase += rampDegPerS * 20 * float64(i)
		d1[i].Walk = "day1.csv"
		d2[i].Walk = "day2.csv"
		d2[i].Key = "day2.csv:" + d2[i].Key
		d2[i].Point[1] += 0.003
		d2[i].Phase = wrapDeg(d2[i].Phase + offDeg)
		d2[i].Start = d2[i].Start.Add(25 * time.Hour)
	}
	return append(d1, d2...)
}

// lossTruth is the phasor leaving between up and down, A, and its angle
// to up's phase, degrees (Kirchhoff's current law for phasors).
func lossTruth(up, down complex128) (mag, ang float64) {
	l := up - down
	return cmplx.Abs(l), wrapDeg((cmplx.Phase(l) - cmplx.Phase(up)) * 180 / math.Pi)
}

// TestWalkPhaseOffsetKeepsLoss: 30 A at 0° turning to 30 A at 30° at
// chainage 52.5 m (15.53 A leaving at -75° to the line current; simulated
// truth), walked on two days whose phase references differ by 40° and by
// -170° (past ±180°), 30 seeds each. Each pooled route reports the one
// phasor loss, within 4 sigma of the truth, sized as the same walks at
// one phase reference size it (within 5% of its sigma); an information names day2.csv's phase offset, whose pulls
// against the simulated offset have a spread near 1 (0.6-1.5 over 30
// seeds: an honest sigma). Before, the walks' phases were averaged as
// they read: the repeats' combined phase sigmas of some 20° hid the
// 30° turn, and no step was reported.
func TestWalkPhaseOffsetKeepsLoss(t *testing.T) {
	up, down := complex(30, 0), 30*deg(30)
	wantMag, wantAng := lossTruth(up, down)
	for _, off := range []float64{40, -170} {
		var pulls []float64
		for seed := uint64(1); seed <= 30; seed++ {
			r, err := Build(phaseDays(seed, up, down, up, down, off, 0.004, 0.004), nil)
			if err != nil {
				t.Fatal(err)
			}
			fs := findings(r, KindCurrentStep)
			if len(fs) != 1 {
				t.Errorf("offset %g°, seed %d: %d current steps, want 1", off, seed, len(fs))
				for _, f := range r.Findings {
					t.Log(f.Message)
				}
				continue
			}
			mag, ok1 := valueOf(fs[0], "current leaving")
			ang, ok2 := valueOf(fs[0], "angle to line current")
			if !ok1 || !ok2 {
				t.Errorf("offset %g°, seed %d: no phasor values in %s", off, seed, fs[0].Message)
				continue
			}
			if math.Abs(mag.Value-wantMag) > 4*mag.Sigma || math.Abs(wrapDeg(ang.Value-wantAng)) > 4*ang.Sigma {
				t.Errorf("offset %g°, seed %d: %.4f ± %.4f A at %.3f ± %.3f°, want %.4f A at %.3f°", off, seed, mag.Value, mag.Sigma, ang.Value, ang.Sigma, wantMag, wantAng)
			}
			// The same walks at one phase reference: the loss as found
			// there, whatever the offset.
			same, err := Build(phaseDays(seed, up, down, up, down, 0, 0.004, 0.004), nil)
			if err != nil {
				t.Fatal(err)
			}
			if fo := findings(same, KindCurrentStep); len(fo) == 1 {
				if m0, ok := valueOf(fo[0], "current leaving"); !ok || math.Abs(mag.Value-m0.Value) > 0.05*m0.Sigma || math.Abs(mag.Sigma-m0.Sigma) > 0.05*m0.Sigma {
					t.Errorf("offset %g°, seed %d: %.4f ± %.4f A, at one reference %.4f ± %.4f A", off, seed, mag.Value, mag.Sigma, m0.Value, m0.Sigma)
				}
			} else {
				t.Errorf("offset %g°, seed %d: %d steps at one reference", off, seed, len(fo))
			}
			var got *Value
			for _, f := range walksDifferOf(r) {
				if v, ok := valueOf(f, "phase offset day2.csv"); ok && f.Severity == SeverityInfo {
					got = &v
				}
			}
			if got == nil {
				t.Errorf("offset %g°, seed %d: no information naming the phase offset", off, seed)
				continue
			}
			pulls = append(pulls, wrapDeg(got.Value-off)/got.Sigma)
		}
		if len(pulls) < 20 {
			continue
		}
		var m, s float64
		for _, p := range pulls {
			m += p
		}
		m /= float64(len(pulls))
		for _, p := range pulls {
			s += (p - m) * (p - m)
		}
		s = math.Sqrt(s / float64(len(pulls)-1))
		if s < 0.6 || s > 1.5 || math.Abs(m) > 0.6 {
			t.Errorf("offset %g°: phase offset pulls mean %.2f, sd %.2f over %d seeds, want near 0 and 1", off, m, s, len(pulls))
		}
	}
}

// TestWalkPhaseLossChanged: day1 turns from 30 A at 0° to 30 A at 5°
// at chainage 52.5 m (2.62 A leaving), day2 a day later, its phase
// reference 40° on, from 30 A at 0° to 30 A at 45° (22.96 A leaving;
// simulated truth; sigmas 0.03 A and 0.06°): the loss grew between the
// walks. Over 10 seeds, a
// caution says the phases differ along the route, the turn changed by
// 40° (within 4 sigma) between stations either side of 52.5 m, and the
// step is day1's loss (within 4 sigma), not an average of the two.
// Before, the repeats' phases were averaged as they read and the step
// came out of neither walk, or not at all.
func TestWalkPhaseLossChanged(t *testing.T) {
	up, down, down2 := complex(30, 0), 30*deg(5), 30*deg(45)
	wantMag, _ := lossTruth(up, down)
	for seed := uint64(1); seed <= 10; seed++ {
		r, err := Build(phaseDays(seed, up, down, up, down2, 40, 0.03, 0.06), nil)
		if err != nil {
			t.Fatal(err)
		}
		var caution *Finding
		for _, f := range walksDifferOf(r) {
			if f.Severity == SeverityCaution && strings.Contains(f.Message, "phases differ along the route") {
				caution = &f
			}
		}
		if caution == nil {
			t.Errorf("seed %d: no caution that the walks' phases differ along the route", seed)
			for _, f := range r.Findings {
				t.Log(f.Message)
			}
		} else {
			v, ok := valueOf(*caution, "phase turn change day2.csv")
			if !ok || math.Abs(v.Value-40) > 4*v.Sigma+0.05 {
				t.Errorf("seed %d: turn change %+v, want 40°: %s", seed, v, caution.Message)
			}
			if caution.From > 52.5 || caution.To < 52.5 {
				t.Errorf("seed %d: caution over %.1f-%.1f m", seed, caution.From, caution.To)
			}
		}
		fs := findings(r, KindCurrentStep)
		if len(fs) != 1 {
			t.Errorf("seed %d: %d current steps, want day1's one", seed, len(fs))
			continue
		}
		mag, ok := valueOf(fs[0], "current leaving")
		if !ok || math.Abs(mag.Value-wantMag) > 4*mag.Sigma {
			t.Errorf("seed %d: %+v, want day1's %.4f A: %s", seed, mag, wantMag, fs[0].Message)
		}
	}
}

// TestWalkPhaseDriftKeepsLoss: the 30° turn of TestWalkPhaseOffsetKeepsLoss
// walked again a day later with its phases 40° on and turning 0.02° a
// second more along the walk (0.4° a station; its day's frequency 56 µHz
// further off the one demodulated at; simulated truth), 10 seeds: no
// caution that the phases differ along the route, the one loss found
// within 4 sigma of the truth, and the information gives the turn within
// 4 sigma of 0.02° a second. Before, one offset per walk left the turn as
// a change along the route (a false caution, the later walk's phases left
// out), and before that no step was found at all.
func TestWalkPhaseDriftKeepsLoss(t *testing.T) {
	up, down := complex(30, 0), 30*deg(30)
	wantMag, _ := lossTruth(up, down)
	for seed := uint64(1); seed <= 10; seed++ {
		rng := rand.New(rand.NewPCG(seed, 1617))
		d1 := phasorRoute(rng, up, down, 0.01, 0.02, 0)
		d2 := phasorRoute(rng, up, down, 0.01, 0.02, 0)
		r, err := Build(phaseDaysTurning(d1, d2, 40, 0.02), nil)
		if err != nil {
			t.Fatal(err)
		}
		var drift *Value
		for _, f := range walksDifferOf(r) {
			if f.Severity != SeverityInfo {
				t.Errorf("seed %d: %s %s", seed, f.Severity, f.Message)
			}
			if v, ok := valueOf(f, "phase drift day2.csv"); ok {
				drift = &v
			}
		}
		if drift == nil || math.Abs(drift.Value-0.02) > 4*drift.Sigma {
			t.Errorf("seed %d: drift %+v, want 0.02°/s", seed, drift)
		}
		fs := findings(r, KindCurrentStep)
		if len(fs) != 1 {
			t.Errorf("seed %d: %d current steps, want 1", seed, len(fs))
			continue
		}
		if mag, ok := valueOf(fs[0], "current leaving"); !ok || math.Abs(mag.Value-wantMag) > 4*mag.Sigma {
			t.Errorf("seed %d: %+v, want %.4f A", seed, mag, wantMag)
		}
	}
}
