package atomicfile

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// A failed write leaves the old file untouched and no temporary file behind
// (rename(2) atomicity, POSIX).
func TestAtomicFailureKeepsOldFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "f")
	if err := WriteFile(path, []byte("old")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(path, func(f *os.File) error {
		f.Write([]byte("partial"))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("got %v want boom", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Errorf("got %q want old", b)
	}
	if m, _ := filepath.Glob(TempPattern(path)); len(m) != 0 {
		t.Errorf("temporary files left: %v", m)
	}
}
