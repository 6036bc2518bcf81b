// Package goldentest compares what a renderer or command wrote with a
// golden file kept beside its tests. A change to the output is made on
// purpose: the test is run with -update, which rewrites the file, and the
// diff of the golden file is the review.
package goldentest

import (
	"bytes"
	"os"
	"testing"
)

// Compare checks got against the file at path, or rewrites the file when
// update is set. rerun is the command that rewrites the package's golden
// files, named in the failure so the reader knows how to accept a change.
func Compare(t testing.TB, path string, got []byte, update bool, rerun string) {
	t.Helper()
	if update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run %s to write it)", err, rerun)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file; if the change is meant, run %s and review the diff\n--- got (first 2000 bytes) ---\n%.2000s", path, rerun, got)
	}
}
