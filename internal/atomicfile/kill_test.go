package atomicfile

import (
	"bytes"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// TestMain lets TestKillsDuringWrites run this test binary as a program
// that saves one file over and over.
func TestMain(m *testing.M) {
	if path := os.Getenv("KINETARIUM_SAVE_LOOP"); path != "" {
		saveLoop(path)
	}
	os.Exit(m.Run())
}

// saveContents are the two versions the loop saves in turn, large enough
// (256 KiB) that a kill often lands in the middle of one.
var saveContents = [2][]byte{bytes.Repeat([]byte("first version\n"), 256<<10/14), bytes.Repeat([]byte("second version\n"), 256<<10/15)}

// saveLoop saves path forever, alternating the two versions and the two
// ways of writing (Write, and Create with Commit).
func saveLoop(path string) {
	for i := 0; ; i++ {
		data := saveContents[i%2]
		if i%4 < 2 {
			Write(path, data)
			continue
		}
		f, err := Create(path)
		if err != nil {
			continue
		}
		for c := range 8 {
			f.Write(data[c*len(data)/8 : (c+1)*len(data)/8])
		}
		f.Commit()
	}
}

// The kills of issue 17 again: a program killed (SIGKILL) at random
// moments while it saves a file never leaves the file half-written (it
// holds one version or the other, whole), and the temporary files that
// the kills leave behind are removed by the next save once they are older
// than StaleAfter (issue 17: 81 files, 27 MB, after 300 kills, forever).
// `go test` kills 30 times; KINETARIUM_PROBES=full kills 300 times.
func TestKillsDuringWrites(t *testing.T) {
	if testing.Short() {
		t.Skip("runs child processes")
	}
	kills := 30
	if os.Getenv("KINETARIUM_PROBES") == "full" {
		kills = 300
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "model.json")
	if err := Write(path, saveContents[0]); err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(17, 300))
	for k := range kills {
		cmd := exec.Command(os.Args[0], "-test.run", "^$")
		cmd.Env = append(os.Environ(), "KINETARIUM_SAVE_LOOP="+path)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(5+rng.IntN(45)) * time.Millisecond)
		cmd.Process.Kill()
		cmd.Wait()
		got, err := os.ReadFile(path)
		if err != nil || (!bytes.Equal(got, saveContents[0]) && !bytes.Equal(got, saveContents[1])) {
			t.Fatalf("kill %d: the file holds %d bytes that are neither version (%v)", k, len(got), err)
		}
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".model.json.tmp*"))
	var size int64
	for _, f := range left {
		if fi, err := os.Stat(f); err == nil {
			size += fi.Size()
		}
		old := time.Now().Add(-2 * StaleAfter)
		os.Chtimes(f, old, old)
	}
	if err := Write(path, saveContents[1]); err != nil {
		t.Fatal(err)
	}
	after, _ := filepath.Glob(filepath.Join(dir, ".model.json.tmp*"))
	t.Logf("%d kills while saving: the file was whole after every one; %d temporary files (%d KiB) left by the kills, %d after the next save once they were older than %v",
		kills, len(left), size>>10, len(after), StaleAfter)
	if len(after) != 0 {
		t.Errorf("%d temporary files left after the next save: %v", len(after), after)
	}
}
