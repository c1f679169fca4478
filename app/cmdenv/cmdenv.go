// Package cmdenv runs before the window toolkit's packages are initialised
// and hides one locale setting from them for that moment.
//
// Many Linux machines run with LANG=C.UTF-8: this project's build machine
// does, and it is, from memory, the usual setting of Debian-based
// container images. The toolkit's locale lookup
// (github.com/jeandeaual/go-locale, through fyne.io/fyne/v2/lang) takes "C" and "POSIX" for "no locale" but reads
// "C.UTF-8" as the language tag "C", which does not parse, and so every
// run of every command printed three lines of "Fyne error: Error parsing
// user locale C" on standard error. The toolkit reads the locale once,
// in its package initialisation.
//
// Go initialises packages in the order of their import paths, each once
// its own imports are done (The Go Programming Language Specification,
// "Package initialization", since Go 1.21). This package's path sorts
// before "fyne.io/…" and it imports only the standard library, so its
// init runs first: it shortens such a value to "C" (or "POSIX"). main
// calls Restore at once to give the process its environment back, so that
// the tools whirlfit runs (ffmpeg) see what the user set.
//
// It is a module of its own, replaced by this folder in whirlfit's go.mod,
// because every package of the module whirlfit has a path "whirlfit/…",
// which sorts after "fyne.io/…".
package cmdenv

import (
	"os"
	"strings"
)

// saved holds the variables changed, with their values.
var saved = map[string]string{}

func init() {
	// The first of these that is set decides the locale (POSIX; the
	// lookup reads them in this order).
	for _, k := range []string{"LC_ALL", "LC_MESSAGES", "LANG"} {
		v := os.Getenv(k)
		if v == "" {
			continue
		}
		if short := Plain(v); short != v {
			saved[k] = v
			os.Setenv(k, short)
		}
		return
	}
}

// Plain returns "C" or "POSIX" for a value naming that locale with a
// codeset or modifier ("C.UTF-8", "POSIX@euro"), and v unchanged
// otherwise.
func Plain(v string) string {
	base, _, _ := strings.Cut(v, ".")
	base, _, _ = strings.Cut(base, "@")
	if base == "C" || base == "POSIX" {
		return base
	}
	return v
}

// Restore puts back what init changed.
func Restore() {
	for k, v := range saved {
		os.Setenv(k, v)
	}
	clear(saved)
}
