//go:build !unix

package app

// askForLayout does nothing where there are no user signals: the
// end-to-end tests run on Linux.
func askForLayout(write func()) {}
