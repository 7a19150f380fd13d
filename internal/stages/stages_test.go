package stages

import (
	"errors"
	"runtime"
	"strings"
	"testing"
)

var sink []byte

// A stage that allocates 20 MB is recorded with at least that much
// allocated and, on Linux, a peak of at least that much resident memory;
// its error is passed on; the table names every stage.
func TestRecorder(t *testing.T) {
	var r Recorder
	const size = 20 << 20
	if err := r.Do("fill", func() error {
		sink = make([]byte, size)
		for i := range sink {
			sink[i] = byte(i)
		}
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	bad := errors.New("bad")
	if err := r.Do("fail", func() error { return bad }); err != bad {
		t.Errorf("Do returned %v, want the stage's error", err)
	}
	if len(r.Stages) != 2 {
		t.Fatalf("%d stages recorded, want 2", len(r.Stages))
	}
	s := r.Stages[0]
	if s.Alloc < size {
		t.Errorf("fill allocated %d bytes by the record, want at least %d", s.Alloc, size)
	}
	if runtime.GOOS == "linux" && s.Peak < size {
		t.Errorf("peak %d bytes after filling %d", s.Peak, size)
	}
	if s.Seconds <= 0 {
		t.Errorf("fill took %v s", s.Seconds)
	}
	var b strings.Builder
	if err := r.Write(&b); err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"fill", "fail", "total", "peak memory (MB)"} {
		if !strings.Contains(b.String(), w) {
			t.Errorf("table lacks %q:\n%s", w, b.String())
		}
	}
}
