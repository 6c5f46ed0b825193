package ingest

import (
	"encoding/base64"
	"encoding/binary"
	"os"

	"github.com/apache/arrow-go/v18/parquet/file"

	"undercurrent/ingest/ipcguard"
)

// MaxPipeMessage is the longest Arrow IPC stream message body read from
// a pipe or another input that is not a regular file (whose size bounds
// its messages instead): 1 GiB, some 13 million rows of a 10-column
// float64 log in one record batch. A longer declared length is refused
// before it is read.
const MaxPipeMessage = 1 << 30

// arrowSchemaKey is the Parquet key-value metadata key under which Arrow
// writers store the Arrow schema as a serialized IPC message.
const arrowSchemaKey = "ARROW:schema"

// checkArrowFooter checks an Arrow IPC file's footer flatbuffer with
// ipcguard before arrow-go decodes it. A file too short for a footer, or
// whose footer length does not fit, is left to arrow-go, which refuses it
// without sizing memory from it.
func checkArrowFooter(f *os.File) error {
	st, err := f.Stat()
	if err != nil {
		return nil
	}
	const tail = 10 // footer length (4 bytes) + "ARROW1"
	size := st.Size()
	if size < 2*6+4 {
		return nil
	}
	var b [tail]byte
	if _, err := f.ReadAt(b[:], size-tail); err != nil || string(b[4:]) != "ARROW1" {
		return nil
	}
	n := int64(binary.LittleEndian.Uint32(b[:4]))
	if n <= 0 || n+2*6+4 > size {
		return nil
	}
	footer := make([]byte, n)
	if _, err := f.ReadAt(footer, size-tail-n); err != nil {
		return nil
	}
	blocks, err := ipcguard.FooterBlocks(footer)
	if err != nil {
		return err
	}
	// Each block's message, as far as the file holds it (arrow-go refuses
	// a block past the end, or over its metadata limit, by itself).
	end := size - tail - n
	var meta []byte
	for _, b := range blocks {
		if b.Offset < 0 || b.Meta < 8 || b.Body < 0 || b.Offset > end || int64(b.Meta) > end-b.Offset || int64(b.Meta) > ipcguard.MaxMetadata {
			continue
		}
		meta = append(meta[:0], make([]byte, b.Meta)...)
		if _, err := f.ReadAt(meta, b.Offset); err != nil {
			return nil
		}
		if err := ipcguard.CheckBlock(b, meta); err != nil {
			return err
		}
	}
	return nil
}

// MaxBuffer is the largest one buffer an Arrow or Parquet reader takes
// (ipcguard.Bounded): 1 GiB, a float64 column of 134 million rows in one
// record batch or page. A compressed Arrow buffer whose corrupt
// uncompressed length asks for more is refused as corrupt.
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
