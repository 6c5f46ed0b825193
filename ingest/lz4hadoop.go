package ingest

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"

	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/pierrec/lz4/v4"
)

// Parquet's LZ4 codec (the older one, before LZ4_RAW) was never pinned
// down, and writers differ: Hadoop's framing (what Spark's lz4 codec and
// arrow-rs write: blocks each after its uncompressed and compressed sizes
// as 32-bit big-endian integers), the LZ4 frame format (older arrow-rs),
// or a bare LZ4 block. arrow-go registers no codec for it, so such a file
// was refused with "compression for LZ4 unimplemented". lz4Codec reads
// all three as other readers do: Hadoop framing when the sizes in it add
// up, else a frame by its magic number, else a bare block. It writes
// Hadoop framing (one block), as Parquet's C++ library does.
type lz4Codec struct{}

func init() { compress.RegisterCodec(compress.Codecs.Lz4, lz4Codec{}) }

// lz4FrameMagic begins an LZ4 frame (0x184D2204, little-endian).
var lz4FrameMagic = []byte{0x04, 0x22, 0x4d, 0x18}

func (lz4Codec) DecodeWithError(dst, src []byte) ([]byte, error) {
	if out, ok := decodeHadoopLZ4(dst, src); ok {
		return out, nil
	}
	if bytes.HasPrefix(src, lz4FrameMagic) {
		var b bytes.Buffer
		if _, err := io.Copy(&b, lz4.NewReader(bytes.NewReader(src))); err != nil {
			return nil, fmt.Errorf("LZ4 frame: %w", err)
		}
		return append(dst[:0], b.Bytes()...), nil
	}
	n, err := lz4.UncompressBlock(src, dst[:cap(dst)])
	if err != nil {
		return nil, fmt.Errorf("LZ4 (neither Hadoop-framed, an LZ4 frame nor a bare block): %w", err)
	}
	return dst[:n], nil
}

// decodeHadoopLZ4 decodes src as Hadoop-framed LZ4 blocks into dst, which
// must have room for them all; false when src is not so framed (its sizes
// do not add up, or a block does not decode to its stated size).
func decodeHadoopLZ4(dst, src []byte) ([]byte, bool) {
	out := dst[:cap(dst)]
	n := 0
	for len(src) > 0 {
		if len(src) < 8 {
			return nil, false
		}
		raw := int(binary.BigEndian.Uint32(src[0:4]))
		comp := int(binary.BigEndian.Uint32(src[4:8]))
		src = src[8:]
		if comp > len(src) || raw > len(out)-n {
			return nil, false
		}
		got, err := lz4.UncompressBlock(src[:comp], out[n:n+raw])
		if err != nil || got != raw {
			return nil, false
		}
		n += raw
		src = src[comp:]
	}
	return out[:n], true
}

func (c lz4Codec) Decode(dst, src []byte) []byte {
	out, err := c.DecodeWithError(dst, src)
	if err != nil {
		panic(err)
	}
	return out
}

func (c lz4Codec) Encode(dst, src []byte) []byte {
	bound := c.CompressBound(int64(len(src)))
	if int64(cap(dst)) < bound {
		dst = make([]byte, bound)
	}
	dst = dst[:cap(dst)]
	var lc lz4.Compressor
	n, err := lc.CompressBlock(src, dst[8:])
	if err != nil {
		panic(err)
	}
	if n == 0 && len(src) > 0 {
		panic(errors.New("lz4: data not compressible into its bound"))
	}
	binary.BigEndian.PutUint32(dst[0:4], uint32(len(src)))
	binary.BigEndian.PutUint32(dst[4:8], uint32(n))
	return dst[:8+n]
}

func (c lz4Codec) EncodeLevel(dst, src []byte, _ int) []byte { return c.Encode(dst, src) }

func (lz4Codec) CompressBound(n int64) int64 { return 8 + int64(lz4.CompressBlockBound(int(n))) }
