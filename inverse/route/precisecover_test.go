package route

import "testing"

// TestBestDetermined: the crossing service of crossing-service.toml seed 1
// (true cover 0.35 m, the scenario's geometry): covers and sigmas of its
// four stations as fitted, T09 the shallowest and loosest. T06 is the
// shallowest of the two precise stations that agree with T09. A precise
// station far deeper than the shallowest, one no better determined, or any
// beside a shallowest known to a few per cent, is not quoted.
func TestBestDetermined(t *testing.T) {
	covers := []float64{0.542, 0.3467, 0.3487, 0.25}
	sigmas := []float64{0.17, 0.0046, 0.0043, 0.16}
	if b, ok := BestDetermined(covers, sigmas, 3); !ok || b != 1 {
		t.Errorf("best determined %d, %v; want 1 (T06)", b, ok)
	}
	// 0.60 m deeper than the shallowest: more than 2 combined sigmas.
	if b, ok := BestDetermined([]float64{0.30, 0.90}, []float64{0.1, 0.01}, 0); ok {
		t.Errorf("a station 0.6 m deeper quoted as the best determined (%d)", b)
	}
	// Not under half the shallowest's sigma.
	if b, ok := BestDetermined([]float64{0.30, 0.32}, []float64{0.1, 0.06}, 0); ok {
		t.Errorf("a station with 0.06 m sigma beside 0.1 m quoted (%d)", b)
	}
	// tee-service.toml's main: 0.849 ± 0.014 m is not loose (1.6%).
	if b, ok := BestDetermined([]float64{0.849, 0.868}, []float64{0.014, 0.0032}, 0); ok {
		t.Errorf("a station quoted beside a cover known to 1.6%% (%d)", b)
	}
}
