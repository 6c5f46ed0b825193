// Package ingesttest helps tests across the project find the repository root
// and the real observatory files kept outside it, and check the words of
// messages (OutsideParentheses).
//
// The real IAGA-2002 files live in ../shared/data/iaga2002 as seen from the
// repository root (the directory holding go.mod). They are INTERMAGNET
// observatory data distributed by the U.S. Geological Survey (public domain;
// see SOURCE.md there) and are never copied into the repository: tests that
// need them are skipped when they are absent.
package ingesttest

import (
	"os"
	"path/filepath"
	"regexp"
	"testing"
)

// RepoRoot returns the directory holding go.mod, walking up from the
// test's working directory (its package directory). It fails the test when
// there is none.
func RepoRoot(t testing.TB) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatal("ingesttest: go.mod not found above the working directory")
		}
		dir = parent
	}
}

// IAGADir returns the directory of the real IAGA-2002 files, skipping the
// test when it is absent.
func IAGADir(t testing.TB) string {
	t.Helper()
	d := filepath.Join(RepoRoot(t), "..", "shared", "data", "iaga2002")
	if _, err := os.Stat(d); err != nil {
		t.Skipf("real IAGA-2002 files not present at %s", d)
	}
	return d
}

// IAGAFile returns the path of the real IAGA-2002 file name, skipping the
// test when it is absent.
func IAGAFile(t testing.TB, name string) string {
	t.Helper()
	p := filepath.Join(IAGADir(t), name)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("real IAGA-2002 file absent: %v", err)
	}
	return p
}

// innerParentheses matches a parenthesis that holds no other.
var innerParentheses = regexp.MustCompile(`\([^()]*\)`)

// OutsideParentheses is s with every balanced parenthesis (nested ones
// too) taken out; an unbalanced one is left, so that its words are
// checked. Tests of the crew's and operators' messages look for
// statistics outside parentheses with it.
func OutsideParentheses(s string) string {
	for {
		t := innerParentheses.ReplaceAllString(s, "")
		if t == s {
			return s
		}
		s = t
	}
}
