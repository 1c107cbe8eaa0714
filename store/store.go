// Package store keeps a unit's records — in an embedded SQLite file, or on
// a PostgreSQL server that several workstations share: numbered
// migrations, the roster, procedures and lesions, the append-only change
// log (who changed what, from which workstation), all-or-nothing CSV
// import and export, the integrity check, the online backup and the move of
// a unit between a file and a server. Every call takes a context.Context.
// The two backends behave the same; what differs between them lives in
// sqlite.go and postgres.go, and everything else speaks portable SQL (see
// db.go).
package store

import (
	"context"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/user"
	"sort"
	"strconv"
	"strings"
	"time"

	"polypledger/internal/safefile"
	"polypledger/logbook"
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// migration is one numbered schema step: a portable SQL file, run on both
// backends, followed by the backend's own statements for that step (see
// backend.steps).
type migration struct {
	version int
	name    string
	sql     string
}

// migrations returns the embedded migrations in order. Their file names
// start with the schema version they produce: 001_…, 002_…
func migrations() ([]migration, error) {
	entries, err := fs.ReadDir(migrationFiles, "migrations")
	if err != nil {
		return nil, err
	}
	var ms []migration
	for _, e := range entries {
		n, _, ok := strings.Cut(e.Name(), "_")
		v, err := strconv.Atoi(n)
		if !ok || err != nil {
			return nil, fmt.Errorf("migration %s: name must start with its number", e.Name())
		}
		b, err := migrationFiles.ReadFile("migrations/" + e.Name())
		if err != nil {
			return nil, err
		}
		ms = append(ms, migration{version: v, name: e.Name(), sql: string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].version < ms[j].version })
	for i, m := range ms {
		if m.version != i+1 {
			return nil, fmt.Errorf("migration %s: expected number %d", m.name, i+1)
		}
	}
	return ms, nil
}

// SchemaVersion is the newest schema this program writes.
var SchemaVersion = func() int {
	ms, err := migrations()
	if err != nil {
		panic(err) // the embedded files are part of the build; a bad name is a build defect
	}
	return len(ms)
}()

// Options configure Open.
type Options struct {
	// Key is the unit key for pseudonymising patient references. It may be
	// nil when only pseudonymised data is handled (export, metrics).
	Key []byte
	// Now is the clock (for "not in the future" and change-log times);
	// time.Now when nil.
	Now func() time.Time
	// BusyTimeout is how long a writer waits for another's lock (default 5 s).
	BusyTimeout time.Duration
	// ReadOnly opens the database for reading only; it is never created or
	// migrated.
	ReadOnly bool
	// KeepSchema, with ReadOnly, opens a database of an older schema as it
	// is, for Backup, which copies it unchanged; other reads need the
	// current schema.
	KeepSchema bool
	// User names the person in the change log; the OS user when empty.
	User string
	// Host names the workstation in the change log; the computer's host
	// name when empty.
	Host string
	// migrateTo stops migration at a version (tests of upgrades only).
	migrateTo int
}

// Store is an open unit database.
type Store struct {
	db       *dbh
	be       backend
	path     string // the database file (SQLite); "" on a server
	location string // what messages and screens call the database
	key      []byte
	now      func() time.Time
	user     string
	host     string
	busy     time.Duration
	readOnly bool
	// schema is the schema version the store writes to: SchemaVersion,
	// or an older one in tests of upgrades (Options.migrateTo).
	schema int
	// cannotWrite, when set, is why this connection may not write (a
	// server role granted reading only); every write is refused with it.
	cannotWrite string
	// counts and samples keep the case list's counts and samples of its
	// orders until the next change.
	counts  countCache
	samples sampleCache
	// prepared keeps an import's statements on a file from one import to
	// the next.
	prepared preparedStmts
}

// Open opens the unit database at location — a file path, or a
// postgres:// (or postgresql://) URL of a database on a unit server —
// applying any pending migrations, each in its own transaction. A database
// that does not exist yet (a file not there, or a server database holding
// no tables) is made by Create, complete or not at all, unless
// opt.ReadOnly is set.
//
// A file is first read without SQLite, and one not known to be a
// polypledger database is examined read-only with no side effect at all
// (no journal files made, no checkpoint, nothing migrated). A file that is
// empty, not a polypledger database, truncated, or written by a newer
// schema is refused with a message saying which, and is left exactly as it
// was; so is, for writing, a database that fails SQLite's quick integrity
// check. On a server, a database holding another program's tables or a
// newer schema is refused in the same words, and a server that cannot be
// reached, a refused password or a missing database each get one sentence
// saying so (never the password).
func Open(ctx context.Context, location string, opt Options) (*Store, error) {
	if location == "" {
		return nil, errors.New("no database given")
	}
	if IsServerURL(location) {
		return openPostgres(ctx, location, opt)
	}
	return openSQLite(ctx, location, opt)
}

// IsServerURL reports whether a database location names a PostgreSQL
// server (a postgres:// or postgresql:// URL) rather than a file.
func IsServerURL(location string) bool {
	l := strings.ToLower(location)
	return strings.HasPrefix(l, "postgres://") || strings.HasPrefix(l, "postgresql://")
}

// ErrExists is matched (errors.Is) by Create's error when the database
// already exists. It is fs.ErrExist.
var ErrExists = safefile.ErrExists

// Create makes a new unit database at location and, when fill is set,
// fills it before anyone else can see it; if it already exists, Create
// returns an error matching ErrExists and leaves it as it is (the caller
// may open the existing database instead). A failed or cancelled fill
// leaves nothing behind, so nothing ever has to be deleted.
//
// A file is built, migrated and filled under a temporary name beside
// path, readable by its owner only, and only the complete database is put
// at path — by a link, which never replaces a file (if another program
// creates the database meanwhile, this call's work is discarded); what a
// killed Create leaves under its temporary name is removed by the next one.
//
// On a server, the database must exist and hold no tables (a unit's IT
// person creates it, see the README); the schema is made and filled in one
// transaction, which commits only when fill succeeds. Another program
// creating the schema at the same moment waits for this one, then finds it
// there (ErrExists).
func Create(ctx context.Context, location string, opt Options, fill func(*Store) error) error {
	if location == "" {
		return errors.New("no database given")
	}
	if IsServerURL(location) {
		return createPostgres(ctx, location, opt, fill)
	}
	return createSQLite(ctx, location, opt, fill)
}

// newStore applies the options' defaults.
func newStore(be backend, opt Options) *Store {
	s := &Store{be: be, key: opt.Key, now: opt.Now, user: opt.User, host: opt.Host, busy: opt.BusyTimeout, readOnly: opt.ReadOnly, schema: SchemaVersion}
	if opt.migrateTo > 0 {
		s.schema = opt.migrateTo
	}
	if s.now == nil {
		s.now = time.Now
	}
	if s.busy <= 0 {
		s.busy = 5 * time.Second
	}
	if s.user == "" {
		s.user = osUser()
	}
	if s.host == "" {
		s.host = hostName()
	}
	return s
}

func osUser() string {
	if u, err := user.Current(); err == nil && u.Username != "" {
		return u.Username
	}
	for _, v := range []string{"USER", "USERNAME"} {
		if s := os.Getenv(v); s != "" {
			return s
		}
	}
	return "unknown"
}

func hostName() string {
	if h, err := os.Hostname(); err == nil && h != "" {
		return h
	}
	for _, v := range []string{"HOSTNAME", "COMPUTERNAME"} {
		if s := os.Getenv(v); s != "" {
			return s
		}
	}
	return "unknown"
}

// setUp checks that the database is a polypledger one of a schema this
// program knows and, for writing, prepares it (the backend's checks) and
// migrates it. keepSchema lets a read-only store open an older schema as
// it is (for Backup).
func (s *Store) setUp(ctx context.Context, stopAt int, keepSchema bool) error {
	v, err := s.be.vet(ctx, s.db)
	if err != nil {
		return err
	}
	if v > SchemaVersion {
		return fmt.Errorf("it was written by a newer version of polypledger (schema %d; this program knows up to %d); it was left untouched — use the newer program", v, SchemaVersion)
	}
	if s.readOnly {
		if v < SchemaVersion && !keepSchema {
			return fmt.Errorf("it has schema %d and must be upgraded to %d; open it once for writing", v, SchemaVersion)
		}
		return nil
	}
	if err := s.be.prepareWrite(ctx, s, v); err != nil {
		return err
	}
	return s.migrate(ctx, v, stopAt)
}

// migrate applies the migrations after version from, each in its own
// transaction together with the new version number. Each transaction reads
// the version again once it holds the write lock, so that two programs
// opening an old database at once do not both apply a step: the second
// finds it done.
func (s *Store) migrate(ctx context.Context, from, stopAt int) error {
	ms, err := migrations()
	if err != nil {
		return err
	}
	own := s.be.steps()
	for _, m := range ms {
		if m.version <= from || (stopAt > 0 && m.version > stopAt) {
			continue
		}
		err := s.inTx(ctx, func(tx *txn) error {
			if v, err := s.be.version(ctx, tx); err != nil || v >= m.version {
				return err
			}
			if _, err := tx.ExecContext(ctx, m.sql); err != nil {
				return fmt.Errorf("migration %s: %w", m.name, err)
			}
			if extra := own[m.version]; extra != "" {
				if _, err := tx.ExecContext(ctx, extra); err != nil {
					return fmt.Errorf("migration %s: %w", m.name, err)
				}
			}
			return s.be.setVersion(ctx, tx, m.version)
		})
		if err != nil {
			if s.be.classify(err) == failDenied {
				if from == 0 {
					return errors.New("the unit's tables can be made only by a role allowed to create tables in this database (its owner): run polypledger init --db with that role once; nothing was changed")
				}
				return fmt.Errorf("it has schema %d and must be upgraded to %d, which only the role that owns its tables may do: run polypledger init --db with that role once; nothing was changed", from, SchemaVersion)
			}
			return err
		}
	}
	return nil
}

// inTx runs fn in a write transaction and commits when it returns nil.
// Writers queue: the transaction takes the database's write lock when it
// begins. While the store is bound to the transaction of a Create, fn runs
// in that one.
func (s *Store) inTx(ctx context.Context, fn func(tx *txn) error) error {
	if s.db.bound != nil {
		return fn(s.db.bound)
	}
	if s.readOnly {
		return errReadOnlyStore
	}
	if s.cannotWrite != "" {
		return fmt.Errorf("%s; nothing was stored", s.cannotWrite)
	}
	tx, err := s.db.begin(ctx, nil)
	if err != nil {
		return err
	}
	defer func() {
		if r := recover(); r != nil {
			tx.rollback() // never leave the write lock held
			panic(r)
		}
	}()
	if s.path != "" {
		tx.kept, tx.pool = &s.prepared, s.db.pool
	}
	if err := s.be.lockWrites(ctx, tx); err != nil {
		tx.rollback()
		return err
	}
	if err := fn(tx); err != nil {
		tx.rollback()
		return err
	}
	if err := tx.commit(); err != nil {
		return commitError{err}
	}
	return nil
}

// errReadOnlyStore refuses a write through a store opened read-only.
var errReadOnlyStore = errors.New("the database is open read-only")

// commitError is a failure of the commit itself: on a server whose
// connection was lost at that moment, the work may or may not have been
// stored.
type commitError struct{ err error }

func (e commitError) Error() string { return e.err.Error() }
func (e commitError) Unwrap() error { return e.err }

// Close closes the database (folding a SQLite file's write-ahead log into
// it).
func (s *Store) Close() error {
	if s.db == nil {
		return nil
	}
	s.samples.close()
	s.prepared.close()
	s.be.close(s)
	err := s.db.pool.Close()
	s.db = nil
	return err
}

// Path returns the database file's absolute path, or "" for a database on
// a server.
func (s *Store) Path() string { return s.path }

// Location names the database for messages and screens: the file's path,
// or the server's host and the database's name (never a password).
func (s *Store) Location() string { return s.location }

// OnServer reports whether the database is on a PostgreSQL server.
func (s *Store) OnServer() bool { return s.path == "" }

// Writable reports whether this store may write, and if not, why.
func (s *Store) Writable() (bool, string) {
	switch {
	case s.readOnly:
		return false, errReadOnlyStore.Error()
	case s.cannotWrite != "":
		return false, s.cannotWrite
	}
	return true, ""
}

// Version returns the schema version of the open database.
func (s *Store) Version(ctx context.Context) (int, error) { return s.be.version(ctx, s.db) }

// today is the current civil date by the store's clock.
func (s *Store) today() time.Time { return logbook.Today(s.now()) }

// ErrBusy is returned (wrapped) when another program held the database lock
// for longer than the busy timeout; nothing was stored.
var ErrBusy = errors.New("the database is busy")

// explain turns driver errors into messages a unit lead can act on; every
// driver error reaching a user passes through here.
func (s *Store) explain(err error) error {
	if err == nil {
		return nil
	}
	var ce commitError
	committing := errors.As(err, &ce)
	switch s.be.classify(err) {
	case failBusy:
		return fmt.Errorf("%w: another program is writing to it and did not finish within %s; nothing was stored — try again when it has finished", ErrBusy, s.busy)
	case failFull:
		return fmt.Errorf("the disk is full; nothing was stored and the database is as it was — free some space and try again: %v", err)
	case failReadOnly:
		return fmt.Errorf("it cannot be written (read-only file or folder, or no permission); nothing was stored: %v", err)
	case failDenied:
		return fmt.Errorf("%s; nothing was stored", deniedSentence(s))
	case failCorrupt:
		return fmt.Errorf("it is damaged or not a database; restore it from a backup: %v", err)
	case failLost:
		if committing {
			return fmt.Errorf("the connection to the database server was lost while the work was being committed (%s), so it is not known whether it was stored — run polypledger check and look for it before trying again", lostReason(err))
		}
		return fmt.Errorf("the connection to the database server was lost (%s); nothing was stored — try again when the server is back", lostReason(err))
	case failConflict:
		return errors.New("another program changed the same records at the same moment; nothing was stored — try again")
	case failReadOnlyTx:
		return fmt.Errorf("the database is open for reading only (or the server takes no writes); nothing was stored: %v", err)
	}
	return err
}
