package main

import (
	"runtime/debug"
)

// version returns the module version and VCS revision from the build
// information: "v1.2.0 (a1b2c3d4e5f6)", "(devel) (a1b2c3d4e5f6, modified)".
func version() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown"
	}
	v := info.Main.Version
	if v == "" {
		v = "(devel)"
	}
	var rev, modified string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = ", modified"
			}
		}
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if rev != "" {
		v += " (" + rev + modified + ")"
	}
	return v
}
