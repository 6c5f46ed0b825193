package main

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLocateEarthReturnShare: a 20 A, 50 Hz service cable at 35° (the AC
// walk scenario) with its current returning partly along a pipe 2 m
// beside it, 1.2 m down, 12 A at 200° (165° from the cable's, 15° off
// anti-phase). Before, the pipe's summary gave only its phase from
// conductor 1 (found in review); now results.json and the summary give the
// share of the cable's current it carries back, 12 cos 15° / 20 = 0.5796,
// and the net current the two leave to other paths, the magnitude of the
// phasor sum |20 + 12 e^{i165°}| = 8.964 A (phasor arithmetic on the
// simulated truth), each within four sigmas.
func TestLocateEarthReturnShare(t *testing.T) {
	extra := walkLine("water main", -1.6, -1.2, 12, 50, 200)
	_, log := acWalkAt(t, t.TempDir(), "50.0", extra)
	dir := t.TempDir()
	res := filepath.Join(dir, "res")
	out := mustCLI(t, "locate", "--freq", "50", "--group-by", "group", "-o", res, log)
	raw, err := os.ReadFile(filepath.Join(res, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Conductors []struct {
			Number      int      `json:"number"`
			Share       *float64 `json:"return_share"`
			ShareSigma  *float64 `json:"return_share_sigma"`
			Net         *float64 `json:"net_to_earth_a"`
			NetSigma    *float64 `json:"net_to_earth_sigma_a"`
			PhaseFromC1 *float64 `json:"phase_from_conductor_1_deg"`
		} `json:"conductors"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Conductors) != 1 {
		t.Fatalf("%d further conductors, want the water main", len(doc.Conductors))
	}
	c := doc.Conductors[0]
	if c.Share == nil || c.Net == nil || c.ShareSigma == nil || c.NetSigma == nil {
		t.Fatalf("no return share or net current in results.json (phase from conductor 1 %v)", c.PhaseFromC1)
	}
	share := 12 * math.Cos(15*math.Pi/180) / 20
	net := cmplx.Abs(20 + cmplx.Rect(12, 165*math.Pi/180))
	t.Logf("return share %.5f ± %.5f (true %.5f), net %.4f ± %.4f A (true %.4f)", *c.Share, *c.ShareSigma, share, *c.Net, *c.NetSigma, net)
	if !(math.Abs(*c.Share-share) <= 4**c.ShareSigma) {
		t.Errorf("return share %.5f ± %.5f, true %.5f", *c.Share, *c.ShareSigma, share)
	}
	if !(math.Abs(*c.Net-net) <= 4**c.NetSigma) {
		t.Errorf("net current %.4f ± %.4f A, true %.4f A", *c.Net, *c.NetSigma, net)
	}
	if !strings.Contains(out, "carries back") || !strings.Contains(out, "remote earth") {
		t.Errorf("the summary does not give the share carried back and the net current:\n%s", out)
	}
	page, err := os.ReadFile(filepath.Join(res, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), "carries back") {
		t.Error("report.html does not give the share carried back")
	}
}
