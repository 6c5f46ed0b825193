package calibrate

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzLoad feeds arbitrary bytes to Load: no panic, errors name the file.
func FuzzLoad(f *testing.F) {
	f.Add([]byte(`{"version":1,"method":"ellipsoid","created":"2024-01-01T00:00:00Z","offset_nt":[1,2,3],"matrix":[[1,0,0],[0,1,0],[0,0,1]]}`))
	f.Add([]byte(`{"version":1}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(t.TempDir(), "cal.json")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Load(p)
		if err != nil && !strings.Contains(err.Error(), p) {
			t.Fatalf("error does not name the file: %v", err)
		}
	})
}
