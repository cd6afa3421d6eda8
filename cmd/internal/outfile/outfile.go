// Package outfile writes a command's result to standard output or to a
// file, safely: the result is rendered into memory first; a regular file
// is written through a temporary file in the same directory, synced and
// renamed into place (an error or an interrupt leaves no partial file);
// no file read in the run is ever replaced; an existing file is replaced
// only when asked (force), keeping its permission bits; a new file gets
// the permissions the umask allows; a device or pipe is written directly
// and never replaced.
package outfile

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// Error is a problem with the output path that the user can fix on the
// command line (exit code 2).
type Error struct{ Msg string }

func (e *Error) Error() string { return e.Msg }

// WriteError is a failure to write (exit code 1).
type WriteError struct {
	Path string
	Err  error
}

func (e *WriteError) Error() string {
	return fmt.Sprintf("%s: cannot write the output: %v", e.Path, e.Err)
}

func (e *WriteError) Unwrap() error { return e.Err }

// Target is where a result goes.
type Target struct {
	// Path is the output file; "" means standard output.
	Path  string
	Force bool
	// Inputs are the files read in the run; none may be the output.
	Inputs []string
	// Notes receives what the write did that the user should know
	// (a read-only file replaced); may be nil.
	Notes func(string)
	// Refuse, when set, is returned by Check after the inputs are
	// checked (an output named as a kind of file the command does not
	// write).
	Refuse error
}

// Check refuses an output that is one of the inputs, a directory, or an
// existing file without Force. It runs before any work is done; Write
// checks again.
func (t Target) Check() error {
	if t.Path == "" {
		return nil
	}
	real, info, err := t.resolve()
	if err != nil {
		return err
	}
	for _, in := range t.Inputs {
		if sameFile(in, real, info) {
			return &Error{fmt.Sprintf("output %s is the input file %s; fixpoint never overwrites a file it reads", t.Path, in)}
		}
	}
	if t.Refuse != nil {
		return t.Refuse
	}
	switch {
	case info == nil:
		return nil
	case info.IsDir():
		return &Error{fmt.Sprintf("output %s is a directory", t.Path)}
	case info.Mode()&fs.ModeSocket != 0:
		return &Error{fmt.Sprintf("output %s is a socket, which fixpoint cannot open; leave out -o to write to standard output", t.Path)}
	case !info.Mode().IsRegular():
		return nil // a device or a pipe: written to, never replaced
	case !t.Force:
		return &Error{fmt.Sprintf("output %s exists; use --force to replace it", t.Path)}
	}
	return nil
}

// resolve follows symbolic links to the file that would be written and
// returns its path and information (nil when it does not exist). A /proc
// magic link (/dev/stdout or /proc/self/fd/N to a pipe, "pipe:[…]") names
// no path, but the kernel opens it: such a target that is not a regular
// file is returned as named, to be written directly.
func (t Target) resolve() (string, fs.FileInfo, error) {
	real := t.Path
	if r, err := filepath.EvalSymlinks(t.Path); err == nil {
		real = r
	} else if _, lerr := os.Lstat(t.Path); lerr == nil {
		info, serr := os.Stat(t.Path)
		switch {
		case serr != nil:
			return "", nil, &Error{fmt.Sprintf("output %s is a broken symbolic link", t.Path)}
		case info.Mode().IsRegular() || info.IsDir():
			return "", nil, &Error{fmt.Sprintf("output %s is a link to a file with no path to write it through (a deleted file?); name the file itself", t.Path)}
		}
		return t.Path, info, nil
	}
	info, err := os.Stat(real)
	if errors.Is(err, fs.ErrNotExist) {
		return real, nil, nil
	}
	if err != nil {
		return "", nil, &WriteError{t.Path, err}
	}
	return real, info, nil
}

func sameFile(in, out string, outInfo fs.FileInfo) bool {
	a, err1 := filepath.Abs(in)
	b, err2 := filepath.Abs(out)
	if err1 == nil && err2 == nil && a == b {
		return true
	}
	if outInfo == nil {
		return false
	}
	inInfo, err := os.Stat(in)
	return err == nil && os.SameFile(inInfo, outInfo)
}

// Write renders with render into memory, then writes the bytes to stdout
// or to the target. A cancelled context stops before anything appears.
func (t Target) Write(ctx context.Context, stdout io.Writer, render func(io.Writer) error) error {
	var buf bytes.Buffer
	if err := render(&buf); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if t.Path == "" {
		_, err := stdout.Write(buf.Bytes())
		return err
	}
	return t.WriteBytes(ctx, buf.Bytes())
}

// WriteBytes writes data to the target file.
func (t Target) WriteBytes(ctx context.Context, data []byte) error {
	if err := t.Check(); err != nil {
		return err
	}
	real, info, err := t.resolve()
	if err != nil {
		return err
	}
	if info != nil && !info.Mode().IsRegular() {
		f, err := os.OpenFile(real, os.O_WRONLY, 0)
		if err != nil {
			return &WriteError{t.Path, err}
		}
		_, err = f.Write(data)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return &WriteError{t.Path, err}
		}
		return nil
	}
	dir, base := filepath.Split(real)
	if dir == "" {
		dir = "."
	}
	cleanStale(dir, base)
	tmp, name, err := createTemp(dir, base)
	if err != nil {
		return &WriteError{t.Path, err}
	}
	done := false
	defer func() {
		if !done {
			tmp.Close()
			os.Remove(name)
		}
	}()
	if _, err := tmp.Write(data); err != nil {
		return &WriteError{t.Path, err}
	}
	if info != nil {
		if err := tmp.Chmod(info.Mode().Perm()); err != nil {
			return &WriteError{t.Path, err}
		}
	}
	if err := tmp.Sync(); err != nil {
		return &WriteError{t.Path, err}
	}
	if err := tmp.Close(); err != nil {
		return &WriteError{t.Path, err}
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if info == nil {
		// Link fails if the path has appeared meanwhile, which is then not
		// clobbered.
		err := os.Link(name, real)
		switch {
		case errors.Is(err, fs.ErrExist):
			return &Error{fmt.Sprintf("output %s exists; use --force to replace it", t.Path)}
		case err == nil:
			done = true
			os.Remove(name)
			return nil
		}
		// No hard links on this file system: check again, then rename.
		if _, err := os.Lstat(real); err == nil {
			return &Error{fmt.Sprintf("output %s exists; use --force to replace it", t.Path)}
		}
	}
	if err := os.Rename(name, real); err != nil {
		return &WriteError{t.Path, err}
	}
	done = true
	if info != nil && info.Mode().Perm()&0o222 == 0 && t.Notes != nil {
		t.Notes(fmt.Sprintf("replaced %s, which was read-only (--force)", t.Path))
	}
	return nil
}

// tempPrefix names temporary files so that a user who finds one (after a
// SIGKILL) can tell what it is; the next write to the same file removes
// those older than staleAge.
const (
	tempPrefix = ".fixpoint-partial-"
	staleAge   = 10 * time.Minute
)

// createTemp creates a new file next to the target with the permissions
// the umask allows for a new file.
func createTemp(dir, base string) (*os.File, string, error) {
	for range 100 {
		var r [6]byte
		rand.Read(r[:])
		name := filepath.Join(dir, tempPrefix+base+"."+hex.EncodeToString(r[:])+".tmp")
		f, err := os.OpenFile(name, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o666)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		return f, name, err
	}
	return nil, "", errors.New("cannot create a temporary file")
}

// cleanStale removes temporary files of earlier writes to base that were
// left behind (a process killed mid-write).
func cleanStale(dir, base string) {
	matches, _ := filepath.Glob(filepath.Join(dir, tempPrefix+globEscape(base)+".*.tmp"))
	for _, m := range matches {
		if info, err := os.Lstat(m); err == nil && info.Mode().IsRegular() && time.Since(info.ModTime()) > staleAge {
			os.Remove(m)
		}
	}
}

func globEscape(s string) string {
	r := strings.NewReplacer(`*`, `\*`, `?`, `\?`, `[`, `\[`, `\`, `\\`)
	return r.Replace(s)
}
