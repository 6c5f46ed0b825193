package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// Decimal commas (12,5 for 12.5), as spreadsheets write CSV in many
// locales, with a semicolon or tab as the delimiter (common practice:
// the comma cannot separate fields when it marks decimals).
func TestCSVDecimalComma(t *testing.T) {
	points := "time;x;y;z;bx;by;bz\n" +
		"2024-03-01T10:00:00.5Z;0.25;-1.5;0;48213.52;-1200.25;-44000.125\n" +
		"2024-03-01T10:00:01Z;0.5;-1.5;0;48214.5;-1201;-44001\n"
	commas := "time;x;y;z;bx;by;bz\n" +
		"2024-03-01T10:00:00.5Z;0,25;-1,5;0;48213,52;-1200,25;-44000,125\n" +
		"2024-03-01T10:00:01Z;0,5;-1,5;0;48214,5;-1201;-44001\n"
	want, err := ReadSamples(writeFile(t, "points.csv", points))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, text string
		opts       []Option
	}{
		{"detected, semicolons", commas, nil},
		{"detected, tabs", strings.ReplaceAll(commas, ";", "\t"), nil},
		{"given", commas, []Option{WithDecimalComma(true)}},
		// The first record holds no decimal comma to detect them by.
		{"given, first record whole numbers", strings.Replace(commas, "0,25;-1,5;0;48213,52;-1200,25;-44000,125", "0;-1;0;48213;-1200;-44000", 1), []Option{WithDecimalComma(true)}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ReadSamples(writeFile(t, "commas.csv", tc.text), tc.opts...)
			if err != nil {
				t.Fatal(err)
			}
			if got.Meta["decimal_separator"] != "," {
				t.Errorf("decimal_separator %q", got.Meta["decimal_separator"])
			}
			if got.Len() != 2 || got.Time[0] != want.Time[0] || got.Time[1] != want.Time[1] {
				t.Fatalf("times %v, want %v", got.Time, want.Time)
			}
			from := 0
			if strings.Contains(tc.name, "whole") {
				from = 1
			}
			for i := from; i < 2; i++ {
				if got.X[i] != want.X[i] || got.Y[i] != want.Y[i] || got.Bx[i] != want.Bx[i] || got.By[i] != want.By[i] || got.Bz[i] != want.Bz[i] {
					t.Errorf("row %d: %v %v %v %v %v, want %v %v %v %v %v", i, got.X[i], got.Y[i], got.Bx[i], got.By[i], got.Bz[i],
						want.X[i], want.Y[i], want.Bx[i], want.By[i], want.Bz[i])
				}
			}
		})
	}
	// A file with decimal points is not taken for one with decimal commas.
	if want.Meta["decimal_separator"] != "" {
		t.Errorf("points read with decimal_separator %q", want.Meta["decimal_separator"])
	}
}

func TestCSVDecimalCommaErrors(t *testing.T) {
	commas := "time;x;y;z;bx;by;bz\n" +
		"0;0,25;-1,5;0;48213,52;-1200,25;-44000,125\n" +
		"1;0,5;-1,5;0;48214.5;-1201;-44001\n"
	cases := []struct {
		name, text string
		opts       []Option
		want       string
	}{
		{"point among commas", commas, nil, `commas.csv:3: column bx: "48214.5" is not a number (the file is read with decimal commas, so a point is not a decimal point)`},
		{"commas refused", commas, []Option{WithDecimalComma(false)}, `commas.csv:2: column x: "0,25" is not a number (a decimal comma? read the file with decimal commas`},
		{"comma delimiter", strings.ReplaceAll(commas, ";", ","), []Option{WithDecimalComma(true)}, "decimal commas need a delimiter other than the comma"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadSamples(writeFile(t, "commas.csv", tc.text), tc.opts...)
			wantErr(t, err, tc.want)
		})
	}
}

// A longer file through small parse chunks and several workers: the
// decimal-comma path must read every row as its decimal-point twin.
func TestCSVDecimalCommaChunks(t *testing.T) {
	var pts, cms strings.Builder
	pts.WriteString("t\tbx\tby\tbz\n")
	cms.WriteString("t\tbx\tby\tbz\n")
	for i := range 3000 {
		row := fmt.Sprintf("%d.%d\t%d.%03d\t-%d.5\t%d\n", i/10, i%10, 48000+i, (i*37)%1000, i, -44000+i)
		pts.WriteString(row)
		cms.WriteString(strings.ReplaceAll(row, ".", ","))
	}
	want, err := ReadSamples(writeFile(t, "points.tsv", pts.String()))
	if err != nil {
		t.Fatal(err)
	}
	got, err := ReadSamples(writeFile(t, "commas.tsv", cms.String()), withChunkBytes(997), WithWorkers(3))
	if err != nil {
		t.Fatal(err)
	}
	if got.Len() != want.Len() {
		t.Fatalf("%d rows, want %d", got.Len(), want.Len())
	}
	for i := range want.Time {
		if got.Time[i] != want.Time[i] || got.Bx[i] != want.Bx[i] || got.By[i] != want.By[i] || got.Bz[i] != want.Bz[i] {
			t.Fatalf("row %d: %v %v %v %v, want %v %v %v %v", i, got.Time[i], got.Bx[i], got.By[i], got.Bz[i], want.Time[i], want.Bx[i], want.By[i], want.Bz[i])
		}
	}
}
