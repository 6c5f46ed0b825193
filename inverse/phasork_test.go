package inverse

import (
	"math"
	"testing"
)

// TestPhasorK checks the AC count guard's threshold: a standard normal
// exceeds 3 in modulus with probability 0.0026998 (normal tables, e.g. the
// NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.1), and the
// modulus of a two-component normal of unit sigma is Rayleigh distributed,
// P(R > k) = exp(-k^2/2), so the threshold with the same tail is 3.4393.
func TestPhasorK(t *testing.T) {
	if math.Abs(phasorK-3.4393) > 1e-4 {
		t.Errorf("phasorK = %.6f, want 3.4393", phasorK)
	}
	if p := math.Exp(-phasorK * phasorK / 2); math.Abs(p-0.0026998) > 1e-7 {
		t.Errorf("Rayleigh tail at phasorK = %.7f, want the normal tail at 3, 0.0026998", p)
	}
}
