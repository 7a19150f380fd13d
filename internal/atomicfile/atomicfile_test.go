package atomicfile

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
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

// A killed save leaves its temporary file behind; the next save of the
// same file removes it once it is older than StaleAfter, and leaves other
// files (and young temporaries, of a save that may be in progress) alone.
func TestWriteRemovesStaleTemporaries(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "model.json")
	old := time.Now().Add(-2 * StaleAfter)
	mk := func(name string, mtime time.Time) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("half"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(p, mtime, mtime); err != nil {
			t.Fatal(err)
		}
		return p
	}
	stale := []string{mk(".model.json.tmp123456", old), mk(".model.json.tmp9", old)}
	keep := []string{
		mk(".model.json.tmp777", time.Now()), // young: a save in progress
		mk(".other.json.tmp123", old),        // another file's
		mk(".model.json.tmpx1", old),         // not our naming
		mk("model.json.tmp123", old),         // not our naming
		mk(".model.json.tmp123.keep", old),   // not our naming
	}
	if err := Write(path, []byte("{}\n")); err != nil {
		t.Fatal(err)
	}
	for _, p := range stale {
		if _, err := os.Stat(p); !os.IsNotExist(err) {
			t.Errorf("stale %s is still there (%v)", filepath.Base(p), err)
		}
	}
	for _, p := range keep {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("%s was removed: %v", filepath.Base(p), err)
		}
	}
}

// Saving through a symbolic link writes the file it points to and keeps
// the link, relative or absolute, also along a chain of links.
func TestWriteKeepsSymbolicLinks(t *testing.T) {
	dir := t.TempDir()
	if err := os.Mkdir(filepath.Join(dir, "real"), 0o755); err != nil {
		t.Fatal(err)
	}
	target := filepath.Join(dir, "real", "model.json")
	if err := os.WriteFile(target, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.json")
	if err := os.Symlink(filepath.Join("real", "model.json"), link); err != nil {
		t.Skipf("no symbolic links here: %v", err)
	}
	link2 := filepath.Join(dir, "link2.json")
	if err := os.Symlink(link, link2); err != nil {
		t.Fatal(err)
	}
	for i, p := range []string{link, link2} {
		want := fmt.Sprintf("new %d", i)
		if err := Write(p, []byte(want)); err != nil {
			t.Fatal(err)
		}
		fi, err := os.Lstat(p)
		if err != nil || fi.Mode()&os.ModeSymlink == 0 {
			t.Fatalf("%s is no longer a symbolic link (%v)", p, err)
		}
		if b, _ := os.ReadFile(target); string(b) != want {
			t.Errorf("target holds %q, want %q", b, want)
		}
		if fi, _ := os.Stat(target); fi.Mode().Perm() != 0o600 {
			t.Errorf("target mode %v, want the earlier 0600", fi.Mode().Perm())
		}
	}
	// A dangling link creates the file it names.
	dangling := filepath.Join(dir, "dangling.json")
	if err := os.Symlink(filepath.Join("real", "new.json"), dangling); err != nil {
		t.Fatal(err)
	}
	if err := Write(dangling, []byte("x")); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(filepath.Join(dir, "real", "new.json")); err != nil || string(b) != "x" {
		t.Errorf("dangling link: target %q, %v", b, err)
	}
}

// ReadFile refuses a file (or a device) larger than the limit, naming
// the path and the limit.
func TestReadFileLimit(t *testing.T) {
	path := filepath.Join(t.TempDir(), "big.json")
	if err := os.WriteFile(path, make([]byte, 2048), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadFile(path, 2048); err != nil {
		t.Errorf("a file of exactly the limit: %v", err)
	}
	_, err := ReadFile(path, 1024)
	if err == nil || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "1 KiB") {
		t.Errorf("over the limit: %v; want the path and 1 KiB", err)
	}
	if _, err := os.Stat("/dev/zero"); err == nil {
		if _, err := ReadFile("/dev/zero", 1<<20); err == nil || !strings.Contains(err.Error(), "1 MiB") {
			t.Errorf("/dev/zero: %v; want a size error", err)
		}
	}
}

// Text drops a UTF-8 byte-order mark and names UTF-16 and UTF-32.
func TestText(t *testing.T) {
	for _, c := range []struct {
		in      []byte
		want    string
		wantErr string
	}{
		{[]byte("{}"), "{}", ""},
		{[]byte("\xef\xbb\xbf{}"), "{}", ""},
		{[]byte("\xff\xfe{\x00}\x00"), "", "UTF-16"},
		{[]byte("\xfe\xff\x00{\x00}"), "", "UTF-16"},
		{[]byte("{\x00\"\x00"), "", "UTF-16"},
		{[]byte("\xff\xfe\x00\x00{\x00\x00\x00"), "", "UTF-32"},
	} {
		got, err := Text(c.in)
		switch {
		case c.wantErr == "" && (err != nil || string(got) != c.want):
			t.Errorf("Text(%q) = %q, %v; want %q", c.in, got, err, c.want)
		case c.wantErr != "" && (err == nil || !strings.Contains(err.Error(), c.wantErr)):
			t.Errorf("Text(%q): error %v; want one naming %s", c.in, err, c.wantErr)
		}
	}
}

// A file written a piece at a time is not in place until Commit: readers
// see the old content meanwhile, Abort leaves the old content and no
// temporary file, and a symbolic link is kept.
func TestCreateCommitAbort(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "samples.csv")
	if err := Write(path, []byte("old\n")); err != nil {
		t.Fatal(err)
	}
	w, err := CreateCSV(path)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 5000 {
		if err := w.Row([]string{fmt.Sprint(i), "a,b"}); err != nil {
			t.Fatal(err)
		}
	}
	if b, _ := os.ReadFile(path); string(b) != "old\n" {
		t.Fatalf("before Commit the file holds %d bytes, want the old content", len(b))
	}
	if err := w.Commit(); err != nil {
		t.Fatal(err)
	}
	rows, err := ReadCSV(path)
	if err != nil || len(rows) != 5000 || rows[4999][0] != "4999" || rows[0][1] != "a,b" {
		t.Fatalf("read back %d rows, %v", len(rows), err)
	}
	w.Abort() // after Commit: nothing happens

	p, err := Create(path)
	if err != nil {
		t.Fatal(err)
	}
	p.Write([]byte("half"))
	p.Abort()
	if rows2, _ := ReadCSV(path); len(rows2) != 5000 {
		t.Errorf("after Abort the file has %d rows, want the 5000 committed", len(rows2))
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("folder holds %d entries after Abort, want only the file", len(entries))
	}

	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink("samples.csv", link); err != nil {
		t.Skip("no symbolic links here:", err)
	}
	p, err = Create(link)
	if err != nil {
		t.Fatal(err)
	}
	p.Write([]byte("new\n"))
	if err := p.Commit(); err != nil {
		t.Fatal(err)
	}
	if fi, err := os.Lstat(link); err != nil || fi.Mode()&os.ModeSymlink == 0 {
		t.Errorf("the link was replaced: %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "new\n" {
		t.Errorf("the link's target holds %q, want %q", b, "new\n")
	}
}

// JSONSyntaxAt points at the offending character, or at the end of a text
// that ends too early; valid JSON has no such place.
func TestJSONSyntaxAt(t *testing.T) {
	for _, c := range []struct {
		data string
		at   int64
		ok   bool
	}{
		{`{"format": x}`, 11, true},
		{"{\"a\": 1,\n \"b\": [1, 2,, 3]}", 21, true},
		{`{"a": {"b": tru}}`, 15, true},
		{`{"a": [1, 2`, 11, true},
		{`{"a": 1} x`, 9, true},
		{`{"a": 1}`, 0, false},
	} {
		at, ok := JSONSyntaxAt([]byte(c.data))
		if at != c.at || ok != c.ok {
			t.Errorf("%q: %d, %v; want %d, %v", c.data, at, ok, c.at, c.ok)
		}
	}
}
