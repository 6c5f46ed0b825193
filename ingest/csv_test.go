package ingest

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

func TestCSVRead(t *testing.T) {
	cases := []struct {
		name string
		text string
		opts []Option
		// want: first row of (time, x, y, z, bx, by, bz)
		want  [7]float64
		rows  int
		group []string
		frame Frame
	}{
		{
			name: "canonical",
			text: "time,x,y,z,bx,by,bz\n0,1,2,3,10,20,30\n1,1,2,3,10,20,30\n",
			want: [7]float64{0, 1, 2, 3, 10, 20, 30}, rows: 2,
		},
		{
			name: "mapping and units",
			text: "t_s;E;N;U;Bx_uT;By_uT;Bz_uT\n5;1;2;3;1.5;-2;0.25\n",
			opts: []Option{WithColumns("x=E,y=N", "z=U")},
			want: [7]float64{5, 1, 2, 3, 1500, -2000, 250}, rows: 1,
		},
		{
			name: "explicit units override",
			text: "time,bx,by,bz,x\n1500,0.5,1,2,250\n",
			opts: []Option{WithUnits("time=ms", "bx=G", "by=mT", "bz=T", "x=cm")},
			want: [7]float64{1.5, 2.5, 0, 0, 0.5e5, 1e6, 2e9}, rows: 1,
		},
		{
			name: "NED to ENU",
			text: "time,x,y,z,bx,by,bz\n0,1,2,3,10,20,30\n",
			opts: []Option{WithFrame(FrameNED)},
			want: [7]float64{0, 2, 1, -3, 20, 10, -30}, rows: 1,
		},
		{
			name: "sensor frame kept",
			text: "time,bx,by,bz\n0,10,20,30\n",
			opts: []Option{WithFrame(FrameSensor)},
			want: [7]float64{0, 0, 0, 0, 10, 20, 30}, rows: 1, frame: FrameSensor,
		},
		{
			name: "comments, blank lines, CRLF, tabs, group, quotes",
			text: "# Harrow Fen substation\r\n\r\ntime\tbx\tby\tbz\ttraverse\r\n# calibration pause\r\n0\t1\t2\t3\t\"A, north\"\r\n\r\n1\t1\t2\t3\tB\r\n",
			want: [7]float64{0, 0, 0, 0, 1, 2, 3}, rows: 2, group: []string{"A, north", "B"},
		},
		{
			name: "blank separated",
			text: "time   bx   by   bz\n  0  1  2  3\n  1  1  2  3\n",
			want: [7]float64{0, 0, 0, 0, 1, 2, 3}, rows: 2,
		},
		{
			name: "RFC 3339 times",
			text: "time,bx,by,bz\n2024-03-01T12:00:00.5Z,1,2,3\n2024-03-01 12:00:01+00:00,1,2,3\n",
			want: [7]float64{1709294400.5, 0, 0, 0, 1, 2, 3}, rows: 2,
		},
		{
			name: "no header line",
			text: "0,1,2,3\n1,1,2,3\n",
			opts: []Option{WithHeader("time", "bx", "by", "bz")},
			want: [7]float64{0, 0, 0, 0, 1, 2, 3}, rows: 2,
		},
		{
			name: "missing allowed",
			text: "time,bx,by,bz\n0,,NaN,3\n",
			opts: []Option{WithAllowMissing(true)},
			want: [7]float64{0, 0, 0, 0, math.NaN(), math.NaN(), 3}, rows: 1,
		},
		{
			name: "backwards allowed",
			text: "time,bx,by,bz\n1,1,2,3\n0,1,2,3\n",
			opts: []Option{WithAllowBackwards(true)},
			want: [7]float64{1, 0, 0, 0, 1, 2, 3}, rows: 2,
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			mem := checked(t)
			p := writeFile(t, "log.csv", tc.text)
			s, err := ReadSamples(p, append(tc.opts, WithAllocator(mem))...)
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != tc.rows {
				t.Fatalf("rows = %d, want %d", s.Len(), tc.rows)
			}
			got := [7]float64{s.Time[0], 0, 0, 0, s.Bx[0], s.By[0], s.Bz[0]}
			if s.X != nil {
				got[1], got[2], got[3] = s.X[0], s.Y[0], s.Z[0]
			}
			for i := range got {
				if !(got[i] == tc.want[i] || math.IsNaN(got[i]) && math.IsNaN(tc.want[i])) {
					t.Errorf("first row = %v, want %v", got, tc.want)
					break
				}
			}
			if fmt.Sprint(s.Group) != fmt.Sprint(tc.group) {
				t.Errorf("group = %q, want %q", s.Group, tc.group)
			}
			if s.Frame != tc.frame {
				t.Errorf("frame = %v, want %v", s.Frame, tc.frame)
			}
		})
	}
}

func TestCSVErrors(t *testing.T) {
	cases := []struct {
		name string
		text string
		opts []Option
		want string // the error message after the file name
	}{
		{"not a number", "time,bx,by,bz\n0,1,2,3\n1,1,2,1oo.0\n", nil, `:3: column bz: "1oo.0" is not a number`},
		{"short row", "time,bx,by,bz\n0,1,2\n", nil, `:2: short row: 3 fields where the header has 4: "0,1,2"`},
		{"long row", "time,bx,by,bz\n0,1,2,3,4,5\n", nil, `:2: long row: 6 fields where the header has 4`},
		{"empty file", "", nil, `: empty file`},
		{"only comments", "# nothing\n\n", nil, `: no header line`},
		{"missing field columns", "time,Bx,By,Bvert\n0,1,2,3\n", []Option{WithColumns("bx=Bx")},
			`:1: no column for bz (columns found: time, Bx, By, Bvert; mapping tried: bx=Bx; give one with a column mapping such as bz=NAME, on the command line --column bz=NAME, and its unit with a unit option bz=U (on the command line --unit bz=U) unless the name states it (Bz_uT, "Bz (uT)"), else it is read in nT)`},
		{"mapping names an absent column", "time,bx,by,bz\n", []Option{WithColumns("bz=Bz_nT")}, `mapping bz=Bz_nT: no column "Bz_nT"`},
		{"time backwards", "time,bx,by,bz\n0,1,2,3\n2,1,2,3\n1.5,1,2,3\n", nil, `:4: column time: time goes backwards: 1.5 after 2`},
		{"NaN", "time,bx,by,bz\n0,1,NaN,3\n", nil, `:2: column by: missing value "NaN"; missing values are not allowed by default`},
		{"empty cell", "time,bx,by,bz\n0,1,,3\n", nil, `:2: column by: missing value (empty cell)`},
		{"infinite", "time,bx,by,bz\n0,1,2,1e999\n", nil, `:2: column bz: "1e999" is out of range`},
		{"bad time", "time,bx,by,bz\nnoon,1,2,3\n", nil, `:2: column time: "noon" is not a number or an RFC 3339 time`},
		{"bad unit", "time,bx,by,bz\n", []Option{WithUnits("bx=furlong")}, `unknown field unit "furlong"`},
		{"only latitude", "time,lat,bx,by,bz\n0,52,1,2,3\n", nil, `found only one of latitude and longitude`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			mem := checked(t)
			p := writeFile(t, "log.csv", tc.text)
			_, err := ReadSamples(p, append(tc.opts, WithAllocator(mem))...)
			wantErr(t, err, tc.want)
			if !strings.HasPrefix(err.Error(), "ingest: ") {
				t.Errorf("error %q lacks the package prefix", err)
			}
			if !strings.Contains(err.Error(), "log.csv") && !strings.Contains(tc.want, "unit") {
				t.Errorf("error %q does not name the file", err)
			}
		})
	}
}

// TestCSVChunkBoundaries reads the same log with chunks of a few bytes and
// with one chunk, with one and several workers, and expects the same values
// and the same error lines.
func TestCSVChunkBoundaries(t *testing.T) {
	var b strings.Builder
	b.WriteString("# Fenwick Lane cable route, traverse 3\ntime,x,y,z,bx,by,bz,group\n")
	for i := 0; i < 500; i++ {
		if i%97 == 0 {
			b.WriteString("# marker\n\n")
		}
		fmt.Fprintf(&b, "%g,%g,0,0.3,%g,%g,%g,T%d\r\n", 0.01*float64(i), 0.05*float64(i), 1.0/float64(i+3), -2.5e4+float64(i), 4.1e4, i/100)
	}
	p := writeFile(t, "log.csv", b.String())
	ref, err := ReadSamples(p, withChunkBytes(1<<20), WithWorkers(1))
	if err != nil {
		t.Fatal(err)
	}
	if ref.Len() != 500 {
		t.Fatalf("rows = %d, want 500", ref.Len())
	}
	for _, chunk := range []int{1, 7, 64, 1000} {
		for _, workers := range []int{1, 3} {
			mem := checked(t)
			s, err := ReadSamples(p, withChunkBytes(chunk), WithWorkers(workers), WithAllocator(mem))
			if err != nil {
				t.Fatalf("chunk %d: %v", chunk, err)
			}
			for i := range ref.Time {
				if s.Time[i] != ref.Time[i] || s.X[i] != ref.X[i] || s.Bx[i] != ref.Bx[i] || s.Group[i] != ref.Group[i] {
					t.Fatalf("chunk %d workers %d row %d differs", chunk, workers, i)
				}
			}
		}
	}
	// An error late in the file reports the same line whatever the chunking.
	bad := strings.Replace(b.String(), ",-24550,", ",-24.5x0,", 1)
	q := writeFile(t, "bad.csv", bad)
	lines := strings.Split(bad, "\n")
	wantLine := 0
	for i, l := range lines {
		if strings.Contains(l, "-24.5x0") {
			wantLine = i + 1
		}
	}
	for _, chunk := range []int{5, 100, 1 << 20} {
		mem := checked(t)
		_, err := ReadSamples(q, withChunkBytes(chunk), WithAllocator(mem))
		wantErr(t, err, fmt.Sprintf("bad.csv:%d: column by: \"-24.5x0\" is not a number", wantLine))
	}
}

// TestCSVBackwardsAcrossChunks puts the backwards step at a chunk boundary.
func TestCSVBackwardsAcrossChunks(t *testing.T) {
	text := "time,bx,by,bz\n0,1,2,3\n1,1,2,3\n2,1,2,3\n1,1,2,3\n3,1,2,3\n"
	p := writeFile(t, "log.csv", text)
	for _, chunk := range []int{1, 8, 16, 1 << 10} {
		mem := checked(t)
		_, err := ReadSamples(p, withChunkBytes(chunk), WithAllocator(mem))
		wantErr(t, err, "log.csv:5: column time: time goes backwards: 1 after 2")
	}
}

// TestCSVEarlyRelease stops reading after one batch: the goroutines must end
// and every batch parsed ahead must be freed.
func TestCSVEarlyRelease(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i := 0; i < 20000; i++ {
		fmt.Fprintf(&b, "%d,1,2,3\n", i)
	}
	p := writeFile(t, "log.csv", b.String())
	mem := checked(t)
	r, err := Open(p, withChunkBytes(4096), WithAllocator(mem))
	if err != nil {
		t.Fatal(err)
	}
	if !r.Next() {
		t.Fatal(r.Err())
	}
	if r.RecordBatch().NumRows() == 0 {
		t.Fatal("empty batch")
	}
	r.Release()
	if r.Next() {
		t.Fatal("Next after Release returned true")
	}
}

func TestCSVGeodetic(t *testing.T) {
	// Positions 0.001 deg north and east of the first reading, at the
	// DOMAIN.md check point (40.137 N, -105.236 E, 1682 m): expect east
	// and north (0, 111.066633) and (85.245398, 0.00048) m, the tangent
	// plane's; up is the height above the origin's, 0 for both (the tangent
	// plane's own up there is -0.000969 and -0.000569 m).
	const tol = 2e-6
	text := "time,lat,lon,height,bx,by,bz\n0,40.137,-105.236,1682,1,2,3\n1,40.138,-105.236,1682,1,2,3\n2,40.137,-105.235,1682,1,2,3\n"
	p := writeFile(t, "gps.csv", text)
	s, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	if s.Origin == nil || *s.Origin != (Geodetic{40.137, -105.236, 1682}) {
		t.Fatalf("origin = %v, want the first reading", s.Origin)
	}
	want := [][3]float64{{0, 0, 0}, {0, 111.066633, 0}, {85.245398, 0.00048, 0}}
	for i, w := range want {
		got := [3]float64{s.X[i], s.Y[i], s.Z[i]}
		for k := range w {
			if math.Abs(got[k]-w[k]) > 1e-5 || (k != 1 && math.Abs(got[k]-w[k]) > tol && i == 1) {
				t.Errorf("row %d: enu = %v, want %v", i, got, w)
			}
		}
	}
	// A chosen origin.
	o := Geodetic{40.138, -105.236, 1682}
	s, err = ReadSamples(p, WithOrigin(o))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Y[0]+111.066633) > 1e-4 || math.Abs(s.Y[1]) > 1e-9 {
		t.Errorf("with origin %v: y = %v", o, s.Y)
	}
	// The mean origin puts the mean position at (0, 0, 0).
	s, err = ReadSamples(p, WithOriginMean())
	if err != nil {
		t.Fatal(err)
	}
	var mx, my float64
	for i := range s.X {
		mx += s.X[i] / 3
		my += s.Y[i] / 3
	}
	if math.Abs(mx) > 1e-6 || math.Abs(my) > 1e-6 {
		t.Errorf("mean origin: mean position (%g, %g), want (0, 0)", mx, my)
	}
	// The origin travels with the converted log.
	r, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	q := filepath.Join(t.TempDir(), "gps.arrow")
	if err := WriteReader(q, r); err != nil {
		t.Fatal(err)
	}
	s, err = ReadSamples(q)
	if err != nil {
		t.Fatal(err)
	}
	if s.Origin == nil || *s.Origin != (Geodetic{40.137, -105.236, 1682}) || math.Abs(s.Y[1]-111.066633) > 1e-5 {
		t.Errorf("after conversion: origin %v, y %v", s.Origin, s.Y)
	}
}

// TestCSVGroupsSurviveLaterReads: Samples must own its strings (Arrow
// strings alias batch memory), so a first read stays intact while later
// reads run.
func TestCSVGroupsSurviveLaterReads(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,bx,by,bz,group\n")
	for i := 0; i < 60000; i++ {
		fmt.Fprintf(&b, "%d,1,2,3,T%02d\n", i, 1+i/2000)
	}
	p := writeFile(t, "groups.csv", b.String())
	first, err := ReadSamples(p)
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 3; k++ {
		if _, err := ReadSamples(p); err != nil {
			t.Fatal(err)
		}
	}
	for i, g := range first.Group {
		if want := fmt.Sprintf("T%02d", 1+i/2000); g != want {
			t.Fatalf("row %d: group %q, want %q", i, g, want)
		}
	}
}

// TestCSVNoHeaderHintFits: a CSV log without a header line is refused
// with a hint to give the column names; the hint's example names as many
// columns as the file has, so that, given as it stands, it reads the file
// (found in review: seven names offered for an eight-column file, refused
// as "long row: 8 fields where the header has 7"). Fails before the
// change for every width but 7.
func TestCSVNoHeaderHintFits(t *testing.T) {
	for n := 4; n <= 9; n++ {
		row := func(i int) string {
			f := make([]string, n)
			for k := range f {
				f[k] = fmt.Sprint(i*10 + k + 1)
			}
			f[0] = fmt.Sprint(i)
			return strings.Join(f, ",")
		}
		p := writeFile(t, "log.csv", row(0)+"\n"+row(1)+"\n"+row(2)+"\n")
		_, err := ReadSamples(p, WithAllocator(checked(t)))
		if err == nil {
			t.Fatalf("%d columns without a header read", n)
		}
		_, rest, ok := strings.Cut(err.Error(), "--header ")
		hint, _, _ := strings.Cut(rest, ",  say")
		hint, _, _ = strings.Cut(hint, ", say")
		if !ok || hint == "" {
			t.Fatalf("%d columns: no --header hint in %q", n, err)
		}
		s, err := ReadSamples(p, WithHeader(strings.Split(hint, ",")...), WithAllocator(checked(t)))
		if err != nil {
			t.Errorf("%d columns: the hint --header %s does not read the file: %v", n, hint, err)
			continue
		}
		if s.Len() != 3 {
			t.Errorf("%d columns: %d rows read with the hint", n, s.Len())
		}
	}
}
