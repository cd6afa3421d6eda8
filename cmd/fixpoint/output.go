package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"
)

// report is what every tabular result offers.
type report interface {
	WriteTable(io.Writer) error
	WriteJSON(io.Writer) error
	WriteCSV(io.Writer) error
}

// emit writes r in format ("table", "json" or "csv") to out.
func (a *app) emit(cmd *cobra.Command, out output, format string, r report) error {
	return out.write(cmd.Context(), a.stdout, func(w io.Writer) error {
		switch format {
		case "json":
			return r.WriteJSON(w)
		case "csv":
			return r.WriteCSV(w)
		}
		return r.WriteTable(w)
	})
}

// output is where a command writes its result: standard output, or a file
// that is written to a temporary file in the same directory and renamed
// into place, so that a failure or an interrupt leaves no partial file.
type output struct {
	path   string // "" or "-" for standard output
	force  bool
	inputs []string
}

// check refuses an output path that is one of the inputs, or that exists
// when force is not set. It runs before any work is done.
func (o output) check() error {
	if o.path == "" || o.path == "-" {
		return nil
	}
	outAbs, err := filepath.Abs(o.path)
	if err != nil {
		return &inputError{File: o.path, Msg: err.Error()}
	}
	outInfo, statErr := os.Stat(o.path)
	for _, in := range o.inputs {
		inAbs, err := filepath.Abs(in)
		same := err == nil && inAbs == outAbs
		if !same && statErr == nil {
			if inInfo, err := os.Stat(in); err == nil && os.SameFile(inInfo, outInfo) {
				same = true
			}
		}
		if same {
			return usagef("output %s is the input file %s; fixpoint never overwrites an input", o.path, in)
		}
	}
	if statErr == nil {
		if outInfo.IsDir() {
			return usagef("output %s is a directory", o.path)
		}
		if !o.force {
			return usagef("output %s exists; use --force to replace it", o.path)
		}
	}
	return nil
}

// write renders into memory with fn, then writes the bytes to standard
// output or atomically to the file. A cancelled context stops before the
// file appears.
func (o output) write(ctx context.Context, stdout io.Writer, fn func(io.Writer) error) error {
	var buf bytes.Buffer
	if err := fn(&buf); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if o.path == "" || o.path == "-" {
		_, err := stdout.Write(buf.Bytes())
		return err
	}
	return writeFileAtomic(ctx, o.path, buf.Bytes(), o.force)
}

// writeFileAtomic writes data to path through a temporary file in the same
// directory, synced and renamed. Without replace, an existing path is
// refused (checked again here: it may have appeared since check).
func writeFileAtomic(ctx context.Context, path string, data []byte, replace bool) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return &inputError{File: path, Msg: "cannot create output: " + openProblem(err)}
	}
	name := tmp.Name()
	ok := false
	defer func() {
		if !ok {
			tmp.Close()
			os.Remove(name)
		}
	}()
	if _, err := tmp.Write(data); err != nil {
		return &inputError{File: path, Msg: "cannot write output: " + err.Error()}
	}
	if err := tmp.Sync(); err != nil {
		return &inputError{File: path, Msg: "cannot write output: " + err.Error()}
	}
	if err := tmp.Close(); err != nil {
		return &inputError{File: path, Msg: "cannot write output: " + err.Error()}
	}
	if err := os.Chmod(name, 0o644); err != nil {
		return &inputError{File: path, Msg: err.Error()}
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if !replace {
		// Link fails if path exists, so a file created meanwhile is not
		// clobbered.
		err := os.Link(name, path)
		if errors.Is(err, os.ErrExist) {
			return usagef("output %s exists; use --force to replace it", path)
		}
		if err == nil {
			ok = true
			os.Remove(name)
			return nil
		}
		// No hard links on this file system: check, then rename.
		if _, err := os.Lstat(path); err == nil {
			return usagef("output %s exists; use --force to replace it", path)
		}
	}
	if err := os.Rename(name, path); err != nil {
		return &inputError{File: path, Msg: fmt.Sprintf("cannot replace output: %v", openProblem(err))}
	}
	ok = true
	return nil
}
