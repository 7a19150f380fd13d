package atomicfile

import (
	"os"
	"path/filepath"
	"testing"
)

// Writing replaces the content, keeps an existing file's permissions, and
// leaves no temporary file in the folder.
func TestWrite(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.csv")
	if err := Write(path, []byte("one\n")); err != nil {
		t.Fatal(err)
	}
	if fi, err := os.Stat(path); err != nil || fi.Mode().Perm() != 0o644 {
		t.Fatalf("new file: %v, mode %v; want 0644", err, fi.Mode().Perm())
	}
	if err := os.Chmod(path, 0o600); err != nil {
		t.Fatal(err)
	}
	if err := Write(path, []byte("two\n")); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil || string(b) != "two\n" {
		t.Fatalf("content %q, %v; want %q", b, err, "two\n")
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o600 {
		t.Errorf("mode %v after rewriting, want the earlier 0600", fi.Mode().Perm())
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("folder holds %d entries, want only the file", len(entries))
	}
}

// A missing folder is an error naming the path, and nothing is created.
func TestWriteMissingFolder(t *testing.T) {
	path := filepath.Join(t.TempDir(), "no", "such", "a.csv")
	err := Write(path, []byte("x"))
	if err == nil {
		t.Fatal("writing into a missing folder succeeded")
	}
	if _, serr := os.Stat(path); !os.IsNotExist(serr) {
		t.Errorf("the file exists after a failed write: %v", serr)
	}
}
