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
	// Misnamed refuses an output file named as a kind of file the command
	// does not write (-o advice.pdf for solve). It is reported by the
	// output check after the check that the output is not an input.
	Misnamed error
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
	case o.Path == "" || !known:
		// No extension, or one that says nothing about the format.
	case implied == "table" && o.Format != "pdf" && o.Format != "xlsx":
		// .txt holds any text format.
	case !slices.Contains(formats, implied):
		o.Misnamed = Errorf("the output file %s is named as %s, which this command does not write (it writes %s)%s; name the file %s",
			o.Path, fileKind[implied], strings.Join(formats, ", "), briefHint(implied), extensionsOf(formats))
		return o, nil
	case !s.given("format"):
		o.Format = implied
	case implied != o.Format:
		if !s.Changed("format") {
			return o, Errorf("format %s (from FIXPOINT_FORMAT or the settings file) contradicts the output file %s (named as %s); give --format %s or rename the file", o.Format, o.Path, fileKind[implied], implied)
		}
		return o, Errorf("--format %s contradicts the output file %s (named as %s); drop --format or rename the file", o.Format, o.Path, fileKind[implied])
	}
	if o.Format == "xlsx" && o.Path == "" {
		return o, Errorf("--format xlsx writes a workbook, which goes to a file, not to standard output: give -o FILE.xlsx")
	}
	return o, nil
}

// fileKind names the kind of file an extension implies, for messages.
var fileKind = map[string]string{"csv": "a CSV file", "json": "a JSON file", "yaml": "a YAML file", "pdf": "a PDF file",
	"xlsx": "a workbook", "table": "a text file"}

// briefHint points from a PDF output to the brief command.
func briefHint(format string) string {
	if format == "pdf" {
		return "; a PDF brief is written by fixpoint brief"
	}
	return ""
}

// extensionsOf lists the file extensions of formats, for messages.
func extensionsOf(formats []string) string {
	var exts []string
	for _, f := range formats {
		for _, e := range []string{".txt", ".csv", ".json", ".yaml", ".xlsx", ".pdf"} {
			if extensions[e] == f {
				exts = append(exts, e)
			}
		}
	}
	if len(exts) == 1 {
		return exts[0]
	}
	return strings.Join(exts[:len(exts)-1], ", ") + " or " + exts[len(exts)-1] + " (or with no extension)"
}
