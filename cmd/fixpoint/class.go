package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
)

// classFile returns the class of a loaded file for a command that takes
// class configs only.
func (a *app) class(cmd *cobra.Command, path string) (*modelfile.Class, error) {
	f, err := a.load(cmd, path, modelfile.ClassFile)
	if err != nil {
		return nil, err
	}
	return f.Class, nil
}
