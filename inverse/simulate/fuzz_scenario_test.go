package simulate

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseScenario feeds arbitrary text to Parse: no panic.
func FuzzParseScenario(f *testing.F) {
	seeds := 0
	for _, g := range []string{"../../testdata/scenarios/*.toml", "../../testdata/demo/*.toml"} {
		m, _ := filepath.Glob(g)
		for _, p := range m {
			b, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(b)
			seeds++
		}
	}
	if seeds == 0 {
		f.Fatal("no scenario files to seed from")
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		_, _ = Parse(data, "fuzz.toml")
	})
}
