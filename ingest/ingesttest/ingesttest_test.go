package ingesttest

import (
	"os"
	"path/filepath"
	"testing"
)

func TestRepoRootHoldsGoMod(t *testing.T) {
	root := RepoRoot(t)
	if _, err := os.Stat(filepath.Join(root, "go.mod")); err != nil {
		t.Fatalf("RepoRoot %s has no go.mod: %v", root, err)
	}
	if _, err := os.Stat(filepath.Join(root, "ingest", "ingesttest")); err != nil {
		t.Fatalf("RepoRoot %s is not this repository: %v", root, err)
	}
}

func TestIAGAFile(t *testing.T) {
	// SOURCE.md beside the data lists this file: Boulder 1-minute variation
	// data for 1 November 2014.
	p := IAGAFile(t, "bou20141101vmin.min")
	if filepath.Base(p) != "bou20141101vmin.min" {
		t.Errorf("IAGAFile = %s", p)
	}
}
