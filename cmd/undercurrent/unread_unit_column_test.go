package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestUnreadUnitColumnAdvice checks the command line's wording of the
// error for a field column that is bx by its name but whose unit is not
// read ("bx [furlong]"): it names the column and the flags that read it,
// --column with the name quoted for the shell and --unit, and the unit
// lists of that error and of a --unit naming no unit are the whole list
// ingest reads (gamma and Oe included). Before, the first said "no column
// for bx" with the column among those found, and the second listed "nT,
// pT, uT, mT, T, G or mG".
func TestUnreadUnitColumnAdvice(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "furlong.csv")
	if err := os.WriteFile(p, []byte("time,x,y,z,bx [furlong],by,bz\n0,0,0,0,20,16000,-46000\n1,1,0,0,21,16000,-46000\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "inspect", p)
	for _, want := range []string{
		`no column for bx: column "bx [furlong]" may be bx (its name begins so)`,
		"(want " + ingest.FieldUnits + ", or one of them with the size of a count before it",
		"--column 'bx=bx [furlong]')",
		"--unit bx=U)",
	} {
		if code != 1 || !strings.Contains(errOut, want) {
			t.Errorf("exit %d, stderr %q; want exit 1 and %q", code, errOut, want)
		}
	}
	for _, u := range []string{"gamma", "Oe", "milligauss"} {
		if !strings.Contains(ingest.FieldUnits, u) {
			t.Errorf("FieldUnits %q leaves out %s", ingest.FieldUnits, u)
		}
	}
	code, _, errOut = cli(t, "inspect", "--unit", "bx=furlong", p)
	if want := `unknown field unit "furlong" (want ` + ingest.FieldUnits + ", or one of them with the size of a count before it, as 0.1nT or 100pT)"; code != 2 || !strings.Contains(errOut, want) {
		t.Errorf("--unit bx=furlong: exit %d, stderr %q; want exit 2 and %q", code, errOut, want)
	}
	// The mapping and unit it names read the column.
	code, _, errOut = cli(t, "inspect", "--column", "bx=bx [furlong]", "--unit", "bx=gamma", p)
	if code != 0 {
		t.Errorf("with the mapping and unit advised: exit %d, stderr %q", code, errOut)
	}
}
