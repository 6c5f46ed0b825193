package route

import (
	"math"
	"strings"
	"testing"
)

// bendStations is an invented bore diving at 15 degrees under four
// stations 10 m apart along east, the depths on the 15-degree line, each
// fitted with dip fitDip[k] (degrees, along east) and DipSigma 0.1 deg.
func bendStations(fitDip []float64) []Station {
	tan := math.Tan(15 * math.Pi / 180)
	var st []Station
	for k, dip := range fitDip {
		x := 10 * float64(k)
		r := dip * math.Pi / 180
		depth := 1 + x*tan
		st = append(st, Station{
			Key: "T0" + string(rune('1'+k)), OK: true,
			Point: [3]float64{x, 0, -depth}, Dir: [3]float64{math.Cos(r), 0, -math.Sin(r)},
			Current: 20, CurrentSigma: 0.05, Depth: depth, DepthSigma: 0.02, DipSigma: 0.1,
		})
	}
	return st
}

// TestBendDoubtWidens: the second station's line fitted at 12.6 deg where
// its neighbours' depths slope at 15 deg (as a bore's entry bend tilts it,
// in review) is cautioned, and its dip, depth and current sigmas widened
// as bend.go says: the dip's by the 2.4-degree departure, the depth's by
// that departure in radians times the depth (no Reach given), the
// current's by it times the current. Stations fitted on the slope are
// left alone.
func TestBendDoubtWidens(t *testing.T) {
	r, err := Build(bendStations([]float64{15, 12.6, 15, 15}), &Settings{})
	if err != nil {
		t.Fatal(err)
	}
	var bends []Finding
	for _, f := range r.Findings {
		if f.Kind == KindBendNear {
			bends = append(bends, f)
		}
	}
	if len(bends) != 1 || bends[0].Keys[0] != "T02" || bends[0].Severity != SeverityCaution {
		t.Fatalf("bend-near findings %+v, want one caution at T02", bends)
	}
	if !strings.Contains(bends[0].Message, "the conductor bends near here") {
		t.Errorf("message %q does not say the conductor bends near here", bends[0].Message)
	}
	for _, p := range r.Stations {
		if p.Key != "T02" {
			if p.Bend != nil || p.DipSigma != 0.1 || p.DepthSigma != 0.02 || p.CurrentSigma != 0.05 {
				t.Errorf("%s on the slope widened: %+v", p.Key, p.Bend)
			}
			continue
		}
		w := 2.4
		wr := w * math.Pi / 180
		for _, q := range []struct {
			name      string
			got, want float64
		}{
			{"dip sigma", p.DipSigma, math.Hypot(0.1, w)},
			{"depth sigma", p.DepthSigma, math.Hypot(0.02, wr*p.Depth)},
			{"current sigma", p.CurrentSigma, math.Hypot(0.05, wr*20)},
		} {
			if !(math.Abs(q.got-q.want) <= 1e-6*q.want) {
				t.Errorf("T02 %s %.6g, want %.6g", q.name, q.got, q.want)
			}
		}
	}
}

// TestBendDoubtJoinsPoorFit: a station already cautioned as a poor fit
// takes the bend's clause into that finding, not a second caution.
func TestBendDoubtJoinsPoorFit(t *testing.T) {
	st := bendStations([]float64{15, 12.6, 15, 15})
	st[1].Problem = "two conductors fit as well as one"
	r, err := Build(st, &Settings{})
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, f := range r.Findings {
		if len(f.Keys) != 1 || f.Keys[0] != "T02" {
			continue
		}
		n++
		if f.Kind != KindPoorFit || !strings.Contains(f.Message, "the conductor bends near here") {
			t.Errorf("T02 finding %s: %s", f.Kind, f.Message)
		}
	}
	if n != 1 {
		t.Errorf("%d findings name T02 alone, want its one poor-fit finding", n)
	}
}
