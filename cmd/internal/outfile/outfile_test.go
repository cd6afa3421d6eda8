package outfile

import (
	"context"
	"errors"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

func write(t *testing.T, tg Target, data string) error {
	t.Helper()
	return tg.WriteBytes(context.Background(), []byte(data))
}

// A new file gets the permissions the umask allows; a replaced file keeps
// its own; a read-only file is replaced only with Force, and the
// replacement is noted.
func TestModes(t *testing.T) {
	dir := t.TempDir()
	old := syscall.Umask(0o027)
	defer syscall.Umask(old)
	path := filepath.Join(dir, "new.csv")
	if err := write(t, Target{Path: path}, "a"); err != nil {
		t.Fatal(err)
	}
	if info, _ := os.Stat(path); info.Mode().Perm() != 0o640 {
		t.Errorf("new file mode %v, want 0640 (0666 under umask 027)", info.Mode().Perm())
	}
	os.Chmod(path, 0o600)
	if err := write(t, Target{Path: path, Force: true}, "b"); err != nil {
		t.Fatal(err)
	}
	if info, _ := os.Stat(path); info.Mode().Perm() != 0o600 {
		t.Errorf("replaced file mode %v, want its own 0600", info.Mode().Perm())
	}
	os.Chmod(path, 0o444)
	var notes []string
	if err := write(t, Target{Path: path, Force: true, Notes: func(s string) { notes = append(notes, s) }}, "c"); err != nil {
		t.Fatal(err)
	}
	if len(notes) != 1 || !strings.Contains(notes[0], "read-only") {
		t.Errorf("notes %q, want one about the read-only file", notes)
	}
	if data, _ := os.ReadFile(path); string(data) != "c" {
		t.Errorf("content %q", data)
	}
}

// Devices are written to, never replaced by a regular file.
func TestDevice(t *testing.T) {
	if _, err := os.Stat("/dev/null"); err != nil {
		t.Skip("no /dev/null")
	}
	for _, force := range []bool{false, true} {
		if err := write(t, Target{Path: "/dev/null", Force: force}, "x"); err != nil {
			t.Fatal(err)
		}
		info, err := os.Lstat("/dev/null")
		if err != nil || info.Mode()&fs.ModeDevice == 0 {
			t.Fatalf("/dev/null is no longer a device: %v %v", info.Mode(), err)
		}
	}
}

// /dev/stdout on a pipe is a /proc magic link whose target, "pipe:[…]",
// is no path (it was refused as a broken symbolic link): the pipe is
// written directly, with or without Force, and stays a pipe. A socket,
// which cannot be opened by its /proc link, is refused in words.
func TestMagicLinks(t *testing.T) {
	if _, err := os.Stat("/proc/self/fd"); err != nil {
		t.Skip("no /proc/self/fd")
	}
	for _, force := range []bool{false, true} {
		r, w, err := os.Pipe()
		if err != nil {
			t.Fatal(err)
		}
		path := "/proc/self/fd/" + strconv.Itoa(int(w.Fd()))
		got := make(chan string, 1)
		go func() {
			b, _ := io.ReadAll(r)
			got <- string(b)
		}()
		tg := Target{Path: path, Force: force}
		if err := tg.Check(); err != nil {
			t.Fatalf("Check(%s, force %v): %v", path, force, err)
		}
		if err := tg.Write(context.Background(), nil, func(wr io.Writer) error {
			_, err := io.WriteString(wr, "advice\n")
			return err
		}); err != nil {
			t.Fatalf("Write(%s, force %v): %v", path, force, err)
		}
		if info, err := os.Stat(path); err != nil || info.Mode()&fs.ModeNamedPipe == 0 {
			t.Errorf("%s is no longer a pipe: %v", path, err)
		}
		w.Close()
		if s := <-got; s != "advice\n" {
			t.Errorf("the pipe read %q, want %q", s, "advice\n")
		}
		r.Close()
	}
	fds, err := syscall.Socketpair(syscall.AF_UNIX, syscall.SOCK_STREAM, 0)
	if err != nil {
		t.Skipf("socketpair: %v", err)
	}
	defer syscall.Close(fds[0])
	defer syscall.Close(fds[1])
	path := "/proc/self/fd/" + strconv.Itoa(fds[0])
	err = write(t, Target{Path: path, Force: true}, "x")
	var oe *Error
	if !errors.As(err, &oe) || !strings.Contains(err.Error(), "is a socket") {
		t.Errorf("write to a socket's /proc link: err = %v, want an *Error saying it is a socket", err)
	}
}

// No file read in the run is ever written, whatever Force says, also
// through a symbolic link; an existing output needs Force.
func TestInputsProtected(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "pumps.yaml")
	os.WriteFile(in, []byte("class"), 0o644)
	link := filepath.Join(dir, "link.yaml")
	os.Symlink(in, link)
	for _, path := range []string{in, link, filepath.Join(dir, ".", "pumps.yaml")} {
		err := write(t, Target{Path: path, Force: true, Inputs: []string{in}}, "out")
		var ue *Error
		if !errors.As(err, &ue) || !strings.Contains(err.Error(), "never overwrites a file it reads") {
			t.Errorf("%s: %v, want a refusal", path, err)
		}
	}
	if data, _ := os.ReadFile(in); string(data) != "class" {
		t.Fatalf("input changed to %q", data)
	}
	out := filepath.Join(dir, "out.json")
	os.WriteFile(out, []byte("old"), 0o644)
	if err := write(t, Target{Path: out}, "new"); err == nil || !strings.Contains(err.Error(), "use --force") {
		t.Errorf("existing output without force: %v", err)
	}
}

// Temporary files left by a killed run are named so that users recognise
// them, and the next write to the same file removes stale ones.
func TestStaleTemporaryFiles(t *testing.T) {
	dir := t.TempDir()
	stale := filepath.Join(dir, tempPrefix+"plan.json.abc123.tmp")
	fresh := filepath.Join(dir, tempPrefix+"plan.json.def456.tmp")
	os.WriteFile(stale, nil, 0o600)
	os.WriteFile(fresh, nil, 0o600)
	past := time.Now().Add(-time.Hour)
	os.Chtimes(stale, past, past)
	if err := write(t, Target{Path: filepath.Join(dir, "plan.json")}, "x"); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(stale); !errors.Is(err, fs.ErrNotExist) {
		t.Error("stale temporary file not removed")
	}
	if _, err := os.Stat(fresh); err != nil {
		t.Error("a temporary file of a run that may still be writing was removed")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Errorf("%d files left, want plan.json and the fresh temporary file", len(entries))
	}
}

// A cancelled run writes nothing.
func TestCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	path := filepath.Join(t.TempDir(), "out.csv")
	err := Target{Path: path}.WriteBytes(ctx, []byte("x"))
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err %v, want context.Canceled", err)
	}
	entries, _ := os.ReadDir(filepath.Dir(path))
	if len(entries) != 0 {
		t.Errorf("%d files left after cancellation", len(entries))
	}
}
