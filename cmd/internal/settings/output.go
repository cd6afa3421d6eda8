package settings

import (
	"path/filepath"
	"slices"
	"strings"

	"github.com/spf13/pflag"
)

// Output is where and how a command writes its result.
type Output struct {
	// Format is table, json, csv, yaml, xlsx or pdf.
	Format string
	// Path is the output file, or "" for standard output.
	Path  string
	Force bool
}

// Reports are the formats of the commands whose results are tables
// (solve, compare, sensitivity, forecast, plan): a terminal table, JSON,
// CSV or a spreadsheet workbook.
func Reports() []string { return []string{"table", "json", "csv", "xlsx"} }

// AddOutput declares --format (one of formats, the first the default),
// --output and --force.
func AddOutput(f *pflag.FlagSet, formats ...string) {
	f.String("format", "", "output format: "+strings.Join(formats, ", ")+" (default: from the -o file's extension, else "+formats[0]+")")
	f.StringP("output", "o", "", "write to this `file` instead of standard output")
	f.Bool("force", false, "replace the output file if it exists")
}

// extensions maps output file extensions to formats.
var extensions = map[string]string{".csv": "csv", ".json": "json", ".yaml": "yaml", ".yml": "yaml", ".pdf": "pdf", ".xlsx": "xlsx", ".txt": "table"}

// Output reads --format, --output and --force. Without --format the format
// follows the output file's extension; a --format that contradicts the
// extension is an error.
func (s *Source) Output(formats ...string) (Output, error) {
	o := Output{Format: s.text("format"), Path: s.text("output")}
	if o.Format == "" {
		o.Format = formats[0]
	}
	if o.Path == "-" {
		o.Path = ""
	}
	var err error
	if o.Force, err = s.boolean("force"); err != nil {
		return o, err
	}
	ext := strings.ToLower(filepath.Ext(o.Path))
	implied, known := extensions[ext]
	switch {
	case !slices.Contains(formats, o.Format):
		return o, Errorf("unknown format %q; want one of %s", clip(o.Format), strings.Join(formats, ", "))
	case o.Path == "" || !known || !slices.Contains(formats, implied):
		// An extension this command does not write says nothing.
	case !s.given("format"):
		o.Format = implied
	case implied != o.Format && implied != "table":
		return o, Errorf("--format %s contradicts the output file %s (a %s file); drop --format or rename the file", o.Format, o.Path, implied)
	}
	if o.Format == "xlsx" && o.Path == "" {
		return o, Errorf("--format xlsx writes a workbook, which goes to a file, not to standard output: give -o FILE.xlsx")
	}
	return o, nil
}
