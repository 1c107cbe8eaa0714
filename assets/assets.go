// Package assets holds the files the program ships inside its binary: the
// standard profiles (and, in other files of the package, icons, fonts and the
// demo scenario).
package assets

import (
	"embed"
	"io/fs"
)

//go:embed standards/*.json
var standardFiles embed.FS

// Standards holds the shipped standard profiles, one JSON file each, at its
// root (for example "asge-acg-2024.json"). report.LoadProfiles reads it
// alongside the user's own profile directory.
var Standards fs.FS = subdir(standardFiles, "standards")

// subdir returns the named directory of f as a file system of its own. The
// name is a constant valid path, so fs.Sub cannot fail; f itself is returned
// if it ever did.
func subdir(f fs.FS, dir string) fs.FS {
	s, err := fs.Sub(f, dir)
	if err != nil {
		return f
	}
	return s
}
