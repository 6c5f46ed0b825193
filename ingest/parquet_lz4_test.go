package ingest

import (
	"bytes"
	"encoding/binary"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/pierrec/lz4/v4"
)

// TestParquetLZ4FromOtherWriter reads testdata/lz4-hadoop-arrowrs.parquet,
// written by another Parquet implementation (parquet-wasm 0.8.0, which is
// arrow-rs, with its Compression.LZ4: Parquet's older LZ4 codec, as Spark's
// lz4 also writes), 200 invented readings: time 1000 + 0.002 i s, bx 17600
// + 0.25 (i mod 7), by 1200 - 0.5 (i mod 5), bz -46000 + 0.125 (i mod 3)
// nT. Before, arrow-go had no codec for it and the file was refused with
// "compression for LZ4 unimplemented".
func TestParquetLZ4FromOtherWriter(t *testing.T) {
	s, err := ReadSamples(filepath.Join("testdata", "lz4-hadoop-arrowrs.parquet"), WithAllocator(checked(t)))
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Time) != 200 {
		t.Fatalf("%d rows, want 200", len(s.Time))
	}
	for i := range s.Time {
		want := [4]float64{1000 + float64(i)*0.002, 17600 + float64(i%7)*0.25, 1200 - float64(i%5)*0.5, -46000 + float64(i%3)*0.125}
		got := [4]float64{s.Time[i], s.Bx[i], s.By[i], s.Bz[i]}
		if got != want {
			t.Fatalf("row %d: %v, want %v", i, got, want)
		}
	}
}

// TestLZ4CodecForms checks that the LZ4 codec decodes each form writers
// give Parquet's LZ4 pages: Hadoop framing (sizes as 32-bit big-endian
// integers before each block, built here by hand in two blocks), an LZ4
// frame (written with the lz4 package's frame writer) and a bare block,
// and that bytes in none of these forms are an error, not a page.
func TestLZ4CodecForms(t *testing.T) {
	text := bytes.Repeat([]byte("Fenwick Lane traverse T07 -46214.04 17600.25 1200.5\n"), 40)
	block := func(b []byte) []byte {
		out := make([]byte, lz4.CompressBlockBound(len(b)))
		n, err := lz4.CompressBlock(b, out, nil)
		if err != nil || n == 0 {
			t.Fatalf("lz4 block: %d, %v", n, err)
		}
		return out[:n]
	}
	var hadoop []byte
	for _, part := range [][]byte{text[:700], text[700:]} {
		b := block(part)
		hadoop = binary.BigEndian.AppendUint32(hadoop, uint32(len(part)))
		hadoop = binary.BigEndian.AppendUint32(hadoop, uint32(len(b)))
		hadoop = append(hadoop, b...)
	}
	var frame bytes.Buffer
	fw := lz4.NewWriter(&frame)
	if _, err := fw.Write(text); err != nil {
		t.Fatal(err)
	}
	if err := fw.Close(); err != nil {
		t.Fatal(err)
	}
	codec, err := compress.GetCodec(compress.Codecs.Lz4)
	if err != nil {
		t.Fatal(err)
	}
	for name, src := range map[string][]byte{"hadoop": hadoop, "frame": frame.Bytes(), "block": block(text)} {
		got, err := compress.Decode(codec, make([]byte, len(text)), src)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if !bytes.Equal(got, text) {
			t.Errorf("%s: decoded %d bytes, not the text", name, len(got))
		}
	}
	if _, err := compress.Decode(codec, make([]byte, len(text)), []byte("not lz4 at all")); err == nil {
		t.Error("garbage decoded without an error")
	}
}
