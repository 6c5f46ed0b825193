package live

import (
	"os"
	"testing"
)

// FuzzParseSite feeds arbitrary text to ParseSite: no panic.
func FuzzParseSite(f *testing.F) {
	b, err := os.ReadFile("../../testdata/site/harrow-fen.toml")
	if err != nil {
		f.Fatal(err)
	}
	f.Add(b)
	f.Add([]byte("[asset]\nname = \"x\"\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		_, _ = ParseSite("fuzz.toml", data)
	})
}
