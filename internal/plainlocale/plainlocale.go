// Package plainlocale tidies a "C.UTF-8" style locale (the default on many
// Debian machines) to plain "C" before the user-interface toolkit reads it:
// the toolkit cannot parse "C.UTF-8" and would print an error on every run,
// even for command-line work. Import it for its side effect, first, from
// package main. It changes nothing when the locale names a real language.
package plainlocale

import (
	"os"
	"strings"
)

func init() {
	for _, name := range []string{"LC_ALL", "LC_MESSAGES", "LANG"} {
		v := os.Getenv(name)
		if v == "" {
			continue
		}
		if strings.HasPrefix(v, "C.") || strings.HasPrefix(v, "POSIX.") {
			os.Setenv(name, "C")
		}
		return
	}
}
