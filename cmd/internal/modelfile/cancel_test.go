package modelfile

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"syscall"
	"testing"
	"time"
)

// countdown is a context that reports context.Canceled from the after-th
// call of Err on and counts the calls, so that a test cancels at a counted
// check instead of after a wall-clock time. Its Done channel is nil.
type countdown struct {
	context.Context
	after, calls int
}

func (c *countdown) Err() error {
	c.calls++
	if c.calls >= c.after {
		return context.Canceled
	}
	return nil
}

// loadAsync runs Load in a goroutine and waits for it for a generous
// time: a Load that blocks on its input fails the test instead of hanging.
func loadAsync(t *testing.T, ctx context.Context, path string) (*File, error) {
	t.Helper()
	type result struct {
		f   *File
		err error
	}
	done := make(chan result, 1)
	go func() {
		f, err := Load(ctx, path, Options{})
		done <- result{f, err}
	}()
	select {
	case r := <-done:
		return r.f, r.err
	case <-time.After(60 * time.Second):
		t.Fatalf("Load(%s) still blocked 60 s after the context was cancelled", path)
	}
	return nil, nil
}

// A FIFO with no writer blocks open(2): Load must return the cancellation
// instead of waiting for a writer (an interrupt then ends the run).
func TestLoadBlockedFIFOIsCancellable(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("no FIFOs")
	}
	path := filepath.Join(t.TempDir(), "in.yaml")
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	t.Cleanup(func() {
		// Release the abandoned open: a writer arrives and leaves.
		if w, err := os.OpenFile(path, os.O_WRONLY|syscall.O_NONBLOCK, 0); err == nil {
			w.Close()
		}
	})
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := loadAsync(t, ctx, path); !errors.Is(err, context.Canceled) {
		t.Fatalf("Load(FIFO without writer, cancelled): err = %v, want context.Canceled", err)
	}
}

// A pipe whose writer has not written yet (a process substitution that
// writes late) blocks read(2): the same. A pipe that delivers is read as a
// file (solve <(cat x.yaml) keeps working).
func TestLoadPipe(t *testing.T) {
	if _, err := os.Stat("/proc/self/fd"); err != nil {
		t.Skip("no /proc/self/fd")
	}
	demoText, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	t.Run("late writer, cancelled", func(t *testing.T) {
		r, w, err := os.Pipe()
		if err != nil {
			t.Fatal(err)
		}
		defer r.Close()
		defer w.Close() // the abandoned read then ends with EOF
		ctx, cancel := context.WithCancel(context.Background())
		go cancel()
		path := filepath.Join("/proc/self/fd", strconv.Itoa(int(r.Fd())))
		if _, err := loadAsync(t, ctx, path); !errors.Is(err, context.Canceled) {
			t.Fatalf("Load(pipe without data, cancelled): err = %v, want context.Canceled", err)
		}
	})
	t.Run("writer delivers", func(t *testing.T) {
		r, w, err := os.Pipe()
		if err != nil {
			t.Fatal(err)
		}
		defer r.Close()
		go func() {
			w.Write(demoText)
			w.Close()
		}()
		path := filepath.Join("/proc/self/fd", strconv.Itoa(int(r.Fd())))
		f, err := loadAsync(t, context.Background(), path)
		if err != nil {
			t.Fatalf("Load(pipe): %v", err)
		}
		if f.Kind != ClassFile {
			t.Errorf("Load(pipe): kind %v, want %v", f.Kind, ClassFile)
		}
	})
}

// Parsing a large class config checks ctx as it goes (the YAML parser's
// reads, then the walk of its nodes): cancelling at any of the checks
// returns context.Canceled, never a fault or another kind of file.
func TestLoadCancelledAtEveryCheck(t *testing.T) {
	text, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	// Comments make the parser read many blocks before the first node.
	pad := make([]byte, 0, 200<<10)
	for len(pad) < 200<<10 {
		pad = append(pad, "# padding to make the parse long enough to be interrupted\n"...)
	}
	path := filepath.Join(t.TempDir(), "big.yaml")
	if err := os.WriteFile(path, append(pad, text...), 0o644); err != nil {
		t.Fatal(err)
	}
	probe := &countdown{Context: context.Background(), after: 1 << 30}
	if _, err := Load(probe, path, Options{}); err != nil {
		t.Fatal(err)
	}
	total := probe.calls
	// The parser reads 200 KiB in blocks of at most 512 bytes.
	if total < 400 {
		t.Fatalf("Load checked ctx %d times over a 200 KiB file, want one check per read of the parser (at least 400)", total)
	}
	step := max(1, total/80)
	for at := 1; at <= total; at += step {
		ctx := &countdown{Context: context.Background(), after: at}
		if _, err := Load(ctx, path, Options{}); !errors.Is(err, context.Canceled) {
			t.Errorf("Load cancelled at check %d of %d: err = %v, want context.Canceled", at, total, err)
		}
	}
}
