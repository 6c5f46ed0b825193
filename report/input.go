package report

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
)

// NewInput describes the file at path for Document.Inputs, with the
// SHA-256 of its bytes; role is "survey", "base" or "calibration" and rows
// the readings kept from it (0 when not a log).
func NewInput(role, path string, rows int) (Input, error) {
	f, err := os.Open(path)
	if err != nil {
		return Input{}, fmt.Errorf("report: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return Input{}, fmt.Errorf("report: reading %s: %w", path, err)
	}
	return Input{Role: role, Path: path, SHA256: hex.EncodeToString(h.Sum(nil)), Rows: rows}, nil
}
