// Package buildinfo names the program's version, for --version, the
// report's colophon and run summaries.
package buildinfo

import (
	"runtime/debug"
	"strings"
)

// Program is the release of sondeclim. Raise it with each release; builds
// between releases add the source revision (see Version).
const Program = "0.1.0"

// Version returns Program followed by the source revision and a "+dirty"
// mark when the binary was built from a checkout with uncommitted changes
// (as recorded by the Go toolchain), e.g. "0.1.0 (a1b2c3d4e5f6)".
func Version() string {
	rev, dirty := "", false
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				rev = s.Value
			case "vcs.modified":
				dirty = s.Value == "true"
			}
		}
	}
	if rev == "" {
		return Program
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	var b strings.Builder
	b.WriteString(Program + " (" + rev)
	if dirty {
		b.WriteString("+dirty")
	}
	b.WriteString(")")
	return b.String()
}
