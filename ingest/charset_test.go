package ingest

import (
	"fmt"
	"slices"
	"strings"
	"testing"
	"unicode/utf8"
)

// windowsLog is a ;-separated log with decimal commas as a German
// spreadsheet on Windows saves "CSV": its bytes are Windows-1252 (written
// here as escapes: 0xF6 ö, 0xDF ß, 0xD6 Ö, 0xC4 Ä, 0xDC Ü, 0x96 the en
// dash, 0x80 the euro sign, by the code page's published table).
func windowsLog(groups ...string) string {
	var b strings.Builder
	b.WriteString("# undercurrent.meta.site: Umspannwerk Gr\xfcne Aue \x80\n")
	b.WriteString("Zeit;Ost;Nord;H\xf6he;Bx (nT);By (nT);Bz (nT);Profil\x96Name\n")
	for i, g := range groups {
		for k := 0; k < 3; k++ {
			fmt.Fprintf(&b, "%d;%d,5;0,25;0,3;12,5;17000,25;-45000,5;%s\n", 1_700_000_000+10*i+k, k, g)
		}
	}
	return b.String()
}

// TestCSVWindows1252Text: a CSV file that is not UTF-8 is read as
// Windows-1252, its group values and comment lines as its header names,
// so that the traverses Öl, Äl and Ül stay three (they were one "\uFFFD"
// name in the JSON, raw bytes in the HTML), "Profil–Name" (0x96, the en
// dash U+2013) can be mapped and the outputs get valid UTF-8, with one
// warning naming the file and its first line that is not UTF-8.
func TestCSVWindows1252Text(t *testing.T) {
	p := writeFile(t, "windows.csv", windowsLog("Stra\xdfe Nord", "\xd6l", "\xc4l", "\xdcl", "Gr\xf6\xdfe"))
	s, err := ReadSamples(p, WithColumns("time=Zeit,x=Ost,y=Nord,z=Höhe,group=Profil–Name"))
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, g := range s.Group {
		if !utf8.ValidString(g) {
			t.Fatalf("group %q is not valid UTF-8", g)
		}
		if len(got) == 0 || got[len(got)-1] != g {
			got = append(got, g)
		}
	}
	if want := []string{"Straße Nord", "Öl", "Äl", "Ül", "Größe"}; !slices.Equal(got, want) {
		t.Errorf("groups %q, want %q", got, want)
	}
	if site := s.Meta["site"]; site != "Umspannwerk Grüne Aue €" {
		t.Errorf("site %q, want %q", site, "Umspannwerk Grüne Aue €")
	}
	if !slices.Contains(s.Columns, "Profil–Name") || !slices.Contains(s.Columns, "Höhe") {
		t.Errorf("columns %q lack Profil–Name and Höhe", s.Columns)
	}
	var enc []string
	for _, w := range s.Warnings {
		if strings.Contains(w, "Windows-1252") {
			enc = append(enc, w)
		}
	}
	if len(enc) != 1 || !strings.HasPrefix(enc[0], p+":1: a byte that is not UTF-8") {
		t.Errorf("encoding warnings %q, want one at %s:1", enc, p)
	}

	// A UTF-8 file draws no such warning and keeps its text.
	u := writeFile(t, "utf8.csv", "time;x;y;z;bx;by;bz;Profil\n1;0;0;0;1;2;3;Öl €\n")
	s, err = ReadSamples(u, WithColumns("group=Profil"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Group[0] != "Öl €" || strings.Contains(strings.Join(s.Warnings, "\n"), "Windows-1252") {
		t.Errorf("UTF-8 file: group %q, warnings %q", s.Group[0], s.Warnings)
	}
}

// TestCSVWindows1252Late: a byte that is not UTF-8 past the head the
// reader judges the file by (a traverse added at the end of a long
// file) is read as Windows-1252 in that value, with the warning naming
// its line; the UTF-8 names before it stay as they are.
func TestCSVWindows1252Late(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,traverse\n")
	n := 0
	for b.Len() < 200<<10 {
		n++
		fmt.Fprintf(&b, "%d,%d.125,0.25,0.3,12.5,17000.25,-45000.5,Öl\n", 1_700_000_000+n, n)
	}
	fmt.Fprintf(&b, "%d,0,0,0,1,2,3,\xc4l\n", 1_700_000_000+n+1)
	late := n + 2 // the header is line 1
	p := writeFile(t, "late.csv", b.String())
	for _, workers := range []int{1, 3} {
		s, err := ReadSamples(p, WithColumns("group=traverse"), WithWorkers(workers))
		if err != nil {
			t.Fatal(err)
		}
		if g := s.Group[len(s.Group)-1]; g != "Äl" || s.Group[0] != "Öl" {
			t.Errorf("workers %d: groups %q ... %q, want Öl ... Äl", workers, s.Group[0], g)
		}
		want := fmt.Sprintf("%s:%d: a byte that is not UTF-8", p, late)
		if w := strings.Join(s.Warnings, "\n"); strings.Count(w, "Windows-1252") != 1 || !strings.Contains(w, want) {
			t.Errorf("workers %d: warnings %q, want one %q", workers, s.Warnings, want)
		}
	}
}

// TestColumnNameNFC: a header name saved in Unicode's decomposed form
// (NFD: "Ho" + U+0308 COMBINING DIAERESIS + "he", as macOS writes names)
// is the name typed in the composed form (NFC, "H" U+00F6 "he"), and the
// other way round: the mapping compares names after NFC normalisation
// (Unicode Standard Annex #15). Before, the mapping failed with "no
// column "Höhe" (columns found: ..., Höhe, ...)".
func TestColumnNameNFC(t *testing.T) {
	const nfd, nfc = "Ho\u0308he", "H\u00f6he"
	for _, tc := range []struct{ header, mapping string }{{nfd, nfc}, {nfc, nfd}, {strings.ToUpper(nfd), nfc}} {
		p := writeFile(t, "log.csv", "time,x,y,"+tc.header+",bx,by,bz\n0,1,2,3.5,1,2,3\n")
		s, err := ReadSamples(p, WithColumns("z="+tc.mapping))
		if err != nil {
			t.Fatalf("header %q, mapping %q: %v", tc.header, tc.mapping, err)
		}
		if s.Z[0] != 3.5 {
			t.Errorf("header %q, mapping %q: z %v, want 3.5", tc.header, tc.mapping, s.Z[0])
		}
	}
	// The same name in both forms is two columns of one name.
	p := writeFile(t, "log.csv", "time,x,y,"+nfc+","+nfd+",bx,by,bz\n0,1,2,3.5,4,1,2,3\n")
	_, err := ReadSamples(p, WithColumns("z="+nfc))
	wantErr(t, err, "columns 4 and 5 are both")
}

// TestGammaSymbol: the gamma, 1 γ = 1 nT (BIPM, SI Brochure, 8th ed.,
// 2006, Table 10), is read by its symbol, the Greek small letter gamma
// U+03B3, in a column name and in a unit option, as by its name.
func TestGammaSymbol(t *testing.T) {
	p := writeFile(t, "log.csv", "time,x,y,z,Bx (γ),By (γ),Bz (γ)\n0,0,0,0,12.5,17000,-45000\n")
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 12.5 || s.By[0] != 17000 || s.Bz[0] != -45000 {
		t.Errorf("γ read as %v %v %v nT, want 12.5 17000 -45000", s.Bx[0], s.By[0], s.Bz[0])
	}
	p = writeFile(t, "log.csv", "time,x,y,z,bx,by,bz\n0,0,0,0,12.5,17000,-45000\n")
	s, err = ReadSamples(p, WithUnits("bx=γ,by=γ,bz=γ"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Bx[0] != 12.5 {
		t.Errorf("--unit bx=γ read %v nT, want 12.5", s.Bx[0])
	}
}

// TestCSVStrayByteKeepsUTF8: a UTF-8 file with traverses Südhang-1 to
// Südhang-3, one row of which (early, in the head the reader had judged
// the whole file by) holds the name in Latin-1 (0xFC for ü), and a
// comment line with a stray 0xB5 (µ in Latin-1) beside UTF-8 text. The
// whole file was read as Windows-1252, so that every valid name became
// "SÃ¼dhang-1" and the odd row alone read "Südhang-1", a traverse of its
// own (found in review). Now valid UTF-8 stays as it is and only the
// bytes that are not UTF-8 are read as Windows-1252: the odd row joins
// its traverse, and one warning names its line. Fails before the change.
func TestCSVStrayByteKeepsUTF8(t *testing.T) {
	var b strings.Builder
	b.WriteString("# undercurrent.meta.site: Südhang Feld \xb5T\n")
	b.WriteString("time,x,y,z,bx,by,bz,traverse\n")
	line := 2
	odd := 0
	for g := 1; g <= 3; g++ {
		for k := 0; k < 5; k++ {
			line++
			name := fmt.Sprintf("Südhang-%d", g)
			if g == 1 && k == 2 {
				name, odd = "S\xfcdhang-1", line
			}
			fmt.Fprintf(&b, "%d,%d.5,0.25,0.3,12.5,17000.25,-45000.5,%s\n", 1_700_000_000+10*g+k, k, name)
		}
	}
	p := writeFile(t, "stray.csv", b.String())
	s, err := ReadSamples(p, WithColumns("group=traverse"))
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, g := range s.Group {
		if len(got) == 0 || got[len(got)-1] != g {
			got = append(got, g)
		}
	}
	if want := []string{"Südhang-1", "Südhang-2", "Südhang-3"}; !slices.Equal(got, want) {
		t.Errorf("groups %q, want %q (the Latin-1 row on line %d joined to its traverse)", got, want, odd)
	}
	if site := s.Meta["site"]; site != "Südhang Feld µT" {
		t.Errorf("site %q, want %q", site, "Südhang Feld µT")
	}
	var enc []string
	for _, w := range s.Warnings {
		if strings.Contains(w, "Windows-1252") {
			enc = append(enc, w)
		}
	}
	if len(enc) != 1 || !strings.HasPrefix(enc[0], p+":1: a byte that is not UTF-8") {
		t.Errorf("encoding warnings %q, want one at %s:1", enc, p)
	}
}

// TestColumnNameNoBreakSpace: a header name holding a no-break space
// ("Mag\u00a0X", as a spreadsheet or word processor puts between words)
// is the name typed with a plain space, and the other way round; the
// mapping failed with "no column "Mag X" (columns found: ..., Mag X,
// ...)", the two looking the same (found in review). Fails before the
// change.
func TestColumnNameNoBreakSpace(t *testing.T) {
	for _, tc := range []struct{ header, mapping string }{
		{"Mag\u00a0X", "Mag X"}, {"Mag\u202fX", "mag x"}, {"Mag X", "Mag\u00a0X"},
	} {
		p := writeFile(t, "log.csv", "time,x,y,z,"+tc.header+",By,Bz\n0,1,2,3,12.5,17000,-45000\n")
		s, err := ReadSamples(p, WithColumns("bx="+tc.mapping))
		if err != nil {
			t.Fatalf("header %q, mapping %q: %v", tc.header, tc.mapping, err)
		}
		if s.Bx[0] != 12.5 {
			t.Errorf("header %q, mapping %q: bx %v, want 12.5", tc.header, tc.mapping, s.Bx[0])
		}
	}
}
