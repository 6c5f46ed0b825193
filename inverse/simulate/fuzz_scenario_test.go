package simulate

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseScenario feeds arbitrary text to Parse: no panic.
func FuzzParseScenario(f *testing.F) {
	for _, g := range []string{"../../testdata/scenarios/*.toml", "../../testdata/demo/*.toml"} {
		m, _ := filepath.Glob(g)
		for _, p := range m {
			if b, err := os.ReadFile(p); err == nil {
				f.Add(b)
			}
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		_, _ = Parse(data, "fuzz.toml")
	})
}
