package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestLocateCrossingServiceBestDeterminedCover: the service of
// crossing-service.toml lies 0.35 m below ground along its whole length
// (the scenario's geometry, the simulated truth). Followed as conductor 2
// over four traverses, its shallowest fitted station is a loose one (0.15
// to 0.31 m, sigma 0.14-0.16 m, on seeds 1-3), while two stations give the
// cover to under 0.005 m. Before, the cover finding and the least-cover
// headline quoted only the loose station, and the precise values appeared
// in no finding. Both now give the best determined station beside the
// shallowest, and it agrees with the truth within kSigma of its sigma.
// Since the stations lie where the service crosses each traverse's line
// (not at its point under the readings' centre, far along it from the
// traverse at 60 degrees), every station reads 0.348-0.367 m with a sigma
// under 0.02 m, and the shallowest is quoted alone: then that value must
// be as precise and agree with the truth in the same way.
func TestLocateCrossingServiceBestDeterminedCover(t *testing.T) {
	sc, path := scenario(t, "crossing-service.toml")
	var want float64
	for _, c := range sc.Conductors {
		if c.Name == "crossing service" {
			want = -c.Point[2]
		}
	}
	check := func(seed int, where, text string) {
		t.Helper()
		const tag = "best determined at "
		var v, s float64
		if i := strings.Index(text, tag); i >= 0 {
			rest := text[i+len(tag):]
			j := strings.Index(rest, ": ")
			if j < 0 {
				t.Fatalf("seed %d: %s: %q", seed, where, text)
			}
			if _, err := fmt.Sscanf(rest[j+2:], "%g ± %g m", &v, &s); err != nil {
				t.Fatalf("seed %d: %s: %q: %v", seed, where, text, err)
			}
		} else {
			// No best determined station beside the shallowest: the
			// shallowest, the first value with a sigma, must be precise.
			m := regexp.MustCompile(`([0-9.]+) ± ([0-9.]+) m`).FindStringSubmatch(text)
			if m == nil {
				t.Fatalf("seed %d: %s gives no cover: %q", seed, where, text)
			}
			v, _ = strconv.ParseFloat(m[1], 64)
			s, _ = strconv.ParseFloat(m[2], 64)
		}
		if s > 0.02 || math.Abs(v-want) > kSigma*s+0.001 {
			t.Errorf("seed %d: %s: best determined cover %.4f ± %.4f m, true %.2f m", seed, where, v, s, want)
		}
	}
	for seed := 1; seed <= 3; seed++ {
		dir := t.TempDir()
		log := filepath.Join(dir, "log.csv")
		mustCLI(t, "simulate", "--seed", fmt.Sprint(seed), path, "-o", log)
		res := filepath.Join(dir, "res")
		out := mustCLI(t, "locate", "--group-by", "group", "--sensor-height", "0.3", "--min-cover", "0.6", "-o", res, log)
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, "Least cover") {
				check(seed, "the headline", l)
			}
		}
		raw, err := os.ReadFile(filepath.Join(res, "results.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Findings []docFinding `json:"findings"`
		}
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, f := range doc.Findings {
			if f.Kind == "shallow-cover" && f.Conductor == 2 {
				check(seed, "the cover finding", f.Message)
				n++
			}
		}
		if n == 0 {
			t.Errorf("seed %d: no cover finding on conductor 2", seed)
		}
	}
}
