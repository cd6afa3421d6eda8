// Package starters holds the commented starter files fixpoint init
// writes: a class config, a system file, a fleet file with its class
// config and inventory, and an inspection-records CSV. Every number in
// them is an invented placeholder.
package starters

import (
	"embed"
	"path/filepath"
	"strings"
)

//go:embed files
var files embed.FS

// Kinds are the starters there are, by --kind.
var Kinds = []string{"class", "system", "fleet", "records"}

// File is one file of a starter.
type File struct {
	Path string
	Data []byte
}

// Files returns the files of a starter of kind at path, the main one
// first; a fleet comes with its class config and inventory beside it.
func Files(kind, path string) ([]File, error) {
	name := map[string]string{"class": "class.yaml", "system": "system.yaml", "fleet": "fleet.yaml", "records": "records.csv"}[kind]
	data, err := files.ReadFile("files/" + name)
	if err != nil {
		return nil, err
	}
	if kind != "fleet" {
		return []File{{path, data}}, nil
	}
	base := strings.TrimSuffix(path, filepath.Ext(path))
	if path == "-" {
		base = "fleet"
	}
	class, inv := base+"-class.yaml", base+"-inventory.csv"
	classData, _ := files.ReadFile("files/class.yaml")
	invData, _ := files.ReadFile("files/inventory.csv")
	text := strings.NewReplacer("CLASS", filepath.Base(class), "INVENTORY", filepath.Base(inv)).Replace(string(data))
	return []File{{path, []byte(text)}, {class, classData}, {inv, invData}}, nil
}
