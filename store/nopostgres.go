//go:build nopostgres

package store

// Built with the nopostgres tag, the store has no PostgreSQL backend: it
// opens and creates SQLite files only, and refuses a server URL saying so.
// The application is never built this way. The fuzz scripts build the
// fuzz targets that use a real database so (scripts/fuzz-smoke), because
// the fuzzer's bookkeeping for every input grows with the code it
// instruments, and the PostgreSQL client and its TLS stack are a third of
// that code in a binary that never reaches them; everything the targets
// run is the same code as in the application.

import (
	"context"
	"errors"
)

// errNoServer refuses a server URL in a build without the PostgreSQL
// backend.
var errNoServer = errors.New("this build of polypledger has no PostgreSQL support (it was built with the nopostgres tag); use a database file")

func openPostgres(context.Context, string, Options) (*Store, error) { return nil, errNoServer }

func createPostgres(context.Context, string, Options, func(*Store) error) error { return errNoServer }

// Describe names a database location for messages and screens the way
// Store.Location does, without opening it: a file's path as given, or
// "a database on a server" for a server URL (never the URL itself, which
// may hold a password).
func Describe(location string) string {
	if IsServerURL(location) {
		return "a database on a server"
	}
	return location
}

// deniedSentence says why a database may only be read (a file: there is
// no server role to name).
func deniedSentence(*Store) string { return "this database may only be read" }

// lostReason says why a connection to a server ended: never, without one.
func lostReason(error) string { return "the server stopped answering" }
