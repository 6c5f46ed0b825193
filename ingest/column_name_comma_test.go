package ingest

import "testing"

// IETF RFC 4180 (section 2, item 6) lets a quoted field hold the
// delimiter, so a header may name a column "Field X, nT". A mapping split
// every pair at its commas, and no such name could be mapped. A part
// after a comma without "=" now continues the name before it, whether the
// parts come in one string or in several (as a command line's list flag
// splits them); messages quote such names in their lists of columns.
func TestColumnNameWithComma(t *testing.T) {
	const text = "time,x,y,z,\"Field X, nT\",\"Field Y, nT\",\"Field Z, nT\"\n0,1,2,0.3,450,16000,-46250\n"
	p := writeFile(t, "log.csv", text)
	_, err := ReadSamples(p)
	wantErr(t, err, `no column for bx, by, bz (columns found: time, x, y, z, "Field X, nT", "Field Y, nT", "Field Z, nT"`)
	for _, opts := range [][]string{
		{"bx=Field X, nT,by=Field Y, nT,bz=Field Z, nT"},
		{"bx=Field X", " nT", "by=Field Y", " nT", "bz=Field Z", " nT"},
	} {
		s, err := ReadSamples(p, WithColumns(opts...))
		if err != nil {
			t.Fatalf("%q: %v", opts, err)
		}
		if s.Bx[0] != 450 || s.By[0] != 16000 || s.Bz[0] != -46250 {
			t.Errorf("%q: read %v %v %v, want 450 16000 -46250", opts, s.Bx[0], s.By[0], s.Bz[0])
		}
	}
	// A part with "=" still has to name a canonical column.
	_, err = ReadSamples(p, WithColumns("bx=Field X, nT,bzz=Field Z, nT"))
	wantErr(t, err, `column mapping "bzz=Field Z, nT": want canonical=source`)
}
