package main

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"strings"

	"undercurrent/report"
)

// The outputs of compare -o and trend -o: a file whose extension names
// what it holds. An existing file is replaced only when it begins as the
// same command writes that kind of file, so that a mistyped name cannot
// replace a log or another report.

// compareOutHeads are the kinds of file compare -o writes and how each
// begins.
var compareOutHeads = map[string]string{".csv": compareCSVHead, ".html": report.ComparisonHTMLHead}

// trendOutHeads are trend's.
var trendOutHeads = map[string]string{".html": report.TrendHTMLHead}

// checkComparedOut checks -o FILE before any work: a name ending in one
// of heads' extensions, in a directory that exists, not one of the
// inputs (a result directory or its results.json), and an existing FILE
// only one that begins as cmd writes it.
func checkComparedOut(cmd, out string, ins []string, heads map[string]string) error {
	ext := strings.ToLower(filepath.Ext(out))
	head, ok := heads[ext]
	if !ok {
		var names []string
		for _, e := range []string{".csv", ".html"} {
			if _, ok := heads[e]; ok {
				names = append(names, e)
			}
		}
		return usageErrorf("-o %s: give a %s file's name", out, strings.Join(names, " or "))
	}
	if err := checkOutFile("-o", out, false); err != nil {
		return err
	}
	for _, in := range ins {
		if sameFile(in, out) || sameFile(filepath.Join(in, "results.json"), out) {
			return usageErrorf("-o %s is an input", out)
		}
	}
	fi, err := existingOut("-o", out, "a file's name")
	if err != nil || fi == nil || fi.Size() == 0 {
		return err
	}
	b := make([]byte, len(head))
	f, err := os.Open(out)
	if err == nil {
		_, err = io.ReadFull(f, b)
		f.Close()
	}
	if err != nil || !bytes.Equal(b, []byte(head)) {
		return usageErrorf("-o %s: the file exists and is not one %s wrote: it is not replaced; choose another name", out, cmd)
	}
	return nil
}

// writeComparedOut writes out atomically (staged beside it, synced and
// renamed into place: a failure leaves no partial file and an earlier
// one as it was) with write.
func writeComparedOut(out string, write func(w io.Writer) error) error {
	tmp, err := stageFile(out, strings.ToLower(filepath.Ext(out)), write)
	if err != nil {
		return err
	}
	if err := placeFile(tmp, out, true); err != nil {
		return writeError(out, tmp, err)
	}
	return nil
}

// compareOutWriter is the writer of compare -o out for c: its CSV table
// or its HTML page, by out's extension.
func compareOutWriter(out string, c *report.Comparison) func(w io.Writer) error {
	if strings.ToLower(filepath.Ext(out)) == ".html" {
		return func(w io.Writer) error { return report.WriteComparisonHTML(w, c) }
	}
	return func(w io.Writer) error { return report.WriteComparisonCSV(w, c) }
}
