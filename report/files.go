package report

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"undercurrent/ingest"
)

// The files WriteFiles makes.
const (
	FileJSON     = "results.json"
	FileCSV      = "results.csv"
	FileFindings = "findings.csv"
	FileGeoJSON  = "route.geojson"
	FileHTML     = "report.html"
)

// WriteFiles writes results.json, results.csv, findings.csv,
// route.geojson and report.html into dir, creating dir (and its parents) when it does not
// exist. Everything is rendered in memory first, so a document that cannot
// be written leaves the disk untouched; each file is then written atomically
// (ingest.WriteFileAtomic). If a write fails, the files already written are
// removed, and so is dir when WriteFiles created it: there is no partial
// output directory.
func WriteFiles(dir string, d *Document) error {
	return WriteFilesWith(dir, d, CSVOptions{})
}

// WriteFilesWith is WriteFiles with results.csv and findings.csv written
// in the style opt asks for (WriteCSVWith, WriteFindingsCSVWith), which
// report.html's settings say with how to open them; results.json and
// route.geojson are as WriteFiles writes them.
func WriteFilesWith(dir string, d *Document, opt CSVOptions) error {
	type out struct {
		name  string
		write func(io.Writer, *Document) error
		data  []byte
	}
	files := []*out{
		{name: FileJSON, write: WriteJSON},
		{name: FileCSV, write: func(w io.Writer, d *Document) error { return WriteCSVWith(w, d, opt) }},
		{name: FileFindings, write: func(w io.Writer, d *Document) error { return WriteFindingsCSVWith(w, d, opt) }},
		{name: FileGeoJSON, write: WriteGeoJSON},
		{name: FileHTML, write: func(w io.Writer, d *Document) error { return writeHTML(w, d, opt) }},
	}
	for _, f := range files {
		var buf bytes.Buffer
		if err := f.write(&buf, d); err != nil {
			return err
		}
		f.data = buf.Bytes()
	}
	created := false
	switch st, err := os.Stat(dir); {
	case errors.Is(err, fs.ErrNotExist):
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return fmt.Errorf("report: %w", err)
		}
		created = true
	case err != nil:
		return fmt.Errorf("report: %w", err)
	case !st.IsDir():
		return fmt.Errorf("report: %s exists and is not a directory", dir)
	}
	var written []string
	for _, f := range files {
		path := filepath.Join(dir, f.name)
		err := ingest.WriteFileAtomic(path, func(w io.Writer) error {
			_, err := w.Write(f.data)
			return err
		})
		if err != nil {
			for _, p := range written {
				os.Remove(p)
			}
			if created {
				os.Remove(dir) // only succeeds when empty, as it should
			}
			return fmt.Errorf("report: writing %s: %w", path, err)
		}
		written = append(written, path)
	}
	return nil
}
