package ingest

import (
	"fmt"
	"testing"
)

// TestCSVDoubledCR reads rows ending in "\r\r\n", as a CSV writer that
// ends its rows in CRLF writes them through a text-mode file on Windows,
// which turns the LF into CRLF again. Before, one CR was taken off and the
// other stayed in the last field: the group "T01\r" (found in review, in
// every output). Every CR before the LF is taken off; a quoted last field
// and line numbers in errors are read as with one CR.
func TestCSVDoubledCR(t *testing.T) {
	text := "time,bx,by,bz,line\r\r\n" +
		"0,1,2,3,T01\r\r\n" +
		"1,1,2,3,T01\r\r\n" +
		"2,1,2,3,\"T02\"\r\r\n" +
		"3,1,2,3,T02\r\r\r\n"
	want := []string{"T01", "T01", "T02", "T02"}
	p := writeFile(t, "crcr.csv", text)
	bad := writeFile(t, "crcr-bad.csv", text+"4,1,2,1oo,T02\r\r\n")
	for _, chunk := range []int{1, 4, 9, 1 << 20} {
		mem := checked(t)
		s, err := ReadSamples(p, WithColumns("group=line"), withChunkBytes(chunk), WithAllocator(mem))
		if err != nil {
			t.Fatalf("chunk %d: %v", chunk, err)
		}
		if fmt.Sprintf("%q", s.Group) != fmt.Sprintf("%q", want) {
			t.Errorf("chunk %d: groups %q, want %q", chunk, s.Group, want)
		}
		if s.Len() != 4 || s.Bz[3] != 3 || s.Time[3] != 3 {
			t.Errorf("chunk %d: time %v bz %v", chunk, s.Time, s.Bz)
		}
		_, err = ReadSamples(bad, WithColumns("group=line"), withChunkBytes(chunk), WithAllocator(mem))
		wantErr(t, err, `crcr-bad.csv:6: column bz: "1oo" is not a number`)
	}
}
