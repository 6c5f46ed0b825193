package ingest

import (
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"os"

	"github.com/apache/arrow-go/v18/parquet/file"

	"undercurrent/ingest/ipcguard"
)

// MaxPipeMessage is the longest Arrow IPC stream message body read from
// a pipe or another input that is not a regular file: 1 GiB, some 13
// million rows of a 10-column float64 log in one record batch (the cap is
// on the whole batch, all its columns). A longer declared length is
// refused before it is read, as a size limit: save the stream to a file,
// or write it in smaller record batches. From a regular file a body is
// bounded by the bytes left in the file instead (its memory grows as the
// bytes arrive; a length past the end is a cut-short file).
const MaxPipeMessage = 1 << 30

// arrowSchemaKey is the Parquet key-value metadata key under which Arrow
// writers store the Arrow schema as a serialized IPC message.
const arrowSchemaKey = "ARROW:schema"

// checkArrowFooter checks an Arrow IPC file's footer flatbuffer with
// ipcguard before arrow-go decodes it. A file too short for a footer, or
// whose footer length does not fit, is left to arrow-go, which refuses it
// without sizing memory from it. It returns the footer's record batch
// blocks and where the data before the footer ends (nil, 0 if it was left
// to arrow-go).
func checkArrowFooter(f *os.File) (batches []ipcguard.Block, end int64, err error) {
	st, err := f.Stat()
	if err != nil {
		return nil, 0, nil
	}
	const tail = 10 // footer length (4 bytes) + "ARROW1"
	size := st.Size()
	if size < 2*6+4 {
		return nil, 0, nil
	}
	var b [tail]byte
	if _, err := f.ReadAt(b[:], size-tail); err != nil || string(b[4:]) != "ARROW1" {
		return nil, 0, nil
	}
	n := int64(binary.LittleEndian.Uint32(b[:4]))
	if n <= 0 || n+2*6+4 > size {
		return nil, 0, nil
	}
	footer := make([]byte, n)
	if _, err := f.ReadAt(footer, size-tail-n); err != nil {
		return nil, 0, nil
	}
	blocks, err := ipcguard.FooterBlocks(footer)
	if err != nil {
		return nil, 0, err
	}
	// Each block's message, as far as the file holds it (arrow-go refuses
	// a block past the end, or over its metadata limit, by itself).
	end = size - tail - n
	var meta []byte
	for _, b := range blocks {
		if !b.Dictionary {
			batches = append(batches, b)
		}
		if b.Offset < 0 || b.Meta < 8 || b.Body < 0 || b.Offset > end || int64(b.Meta) > end-b.Offset || int64(b.Meta) > ipcguard.MaxMetadata {
			continue
		}
		meta = append(meta[:0], make([]byte, b.Meta)...)
		if _, err := f.ReadAt(meta, b.Offset); err != nil {
			return nil, 0, nil
		}
		if err := ipcguard.CheckBlock(b, meta); err != nil {
			return nil, 0, err
		}
	}
	return batches, end, nil
}

// blockPastEnd says, for an Arrow IPC file's record batch block that runs
// past the data before the footer (at byte end), where and by how much;
// "" for a block that fits.
func blockPastEnd(b ipcguard.Block, end int64) string {
	if b.Offset >= 0 && b.Meta >= 0 && b.Body >= 0 && b.Offset <= end && int64(b.Meta) <= end-b.Offset && b.Body <= end-b.Offset-int64(b.Meta) {
		return ""
	}
	return fmt.Sprintf("the file's footer puts this record batch at byte %d, %d bytes of metadata and a body of %d bytes, past the end of the record batches at byte %d", b.Offset, b.Meta, b.Body, end)
}

// MaxBuffer is the largest one buffer an Arrow or Parquet reader sizes
// from a length the input does not hold (ipcguard.Bounded): 1 GiB, a
// decompressed float64 column of 134 million rows in one record batch, or
// a Parquet page. A compressed buffer whose corrupt uncompressed length
// asks for more is refused. It does not bound a whole record batch: an
// Arrow IPC stream's message bodies are bounded by the file (or by
// MaxPipeMessage from a pipe), and an Arrow IPC file's by the file's size.
const MaxBuffer = 1 << 30

// maxBuffer and maxPipeMessage are the limits in force: MaxBuffer and
// MaxPipeMessage, lowered by tests to check the rules on small files.
var (
	maxBuffer      = MaxBuffer
	maxPipeMessage = int64(MaxPipeMessage)
)

// checkArrowSchemaKey checks the serialized Arrow schema a Parquet file
// may hold under ARROW:schema, which pqarrow decodes with arrow-go's IPC
// reader, decoding the base64 text as pqarrow does.
func checkArrowSchemaKey(pf *file.Reader) error {
	kv := pf.MetaData().KeyValueMetadata()
	if kv == nil {
		return nil
	}
	v := kv.FindValue(arrowSchemaKey)
	if v == nil {
		return nil
	}
	var b []byte
	var err error
	if len(*v)%4 == 0 {
		b, err = base64.StdEncoding.DecodeString(*v)
	}
	if len(b) == 0 || err != nil {
		b, err = base64.RawStdEncoding.DecodeString(*v)
	}
	if err != nil {
		return nil // pqarrow refuses it as bad base64
	}
	return ipcguard.CheckSchemaStream(b)
}
