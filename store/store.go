// Package store keeps a unit's records in an embedded SQLite file: numbered
// migrations, the roster, procedures and lesions, the append-only change log,
// all-or-nothing CSV import and export, the integrity check and the online
// backup. Every call takes a context.Context. SQLite-only statements are kept
// in sqlite.go.
package store

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/user"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"polypledger/internal/safefile"
	"polypledger/logbook"
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// migration is one numbered schema step.
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
	// migrateTo stops migration at a version (tests of upgrades only).
	migrateTo int
}

// Store is an open unit database.
type Store struct {
	db       *sql.DB
	path     string
	key      []byte
	now      func() time.Time
	user     string
	busy     time.Duration
	readOnly bool
	// rdb is the pool of read-only connections for streaming, opened on
	// first use.
	rdb     *sql.DB
	rdbErr  error
	rdbOnce sync.Once
}

// querier is what both *sql.DB and *sql.Tx offer.
type querier interface {
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error)
}

// Open opens the database at path, applying any pending migrations, each
// in its own transaction. A database that does not exist yet is made by
// Create (complete, or not at all) unless opt.ReadOnly is set.
//
// A file is first read without SQLite, and one not known to be a
// polypledger database is examined read-only with no side effect at all
// (no journal files made, no checkpoint, nothing migrated). A file that is
// empty, not a polypledger database, truncated, or written by a newer
// schema is refused with a message saying which, and is left exactly as it
// was; so is, for writing, a database that fails SQLite's quick integrity
// check.
func Open(ctx context.Context, path string, opt Options) (*Store, error) {
	if path == "" {
		return nil, errors.New("no database path given")
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, fmt.Errorf("database %s: %w", path, err)
	}
	h, err := readHeader(abs)
	if err != nil {
		return nil, err
	}
	if !h.exists {
		if opt.ReadOnly {
			return nil, fmt.Errorf("database %s does not exist", path)
		}
		if err := Create(ctx, path, opt, nil); err != nil && !errors.Is(err, ErrExists) {
			return nil, err
		}
		// Made now, by this call or by another program a moment earlier.
		if h, err = readHeader(abs); err != nil {
			return nil, err
		}
	}
	if h.empty {
		return nil, fmt.Errorf("%s is an empty file (0 bytes), not a polypledger database; it was left untouched — to start a new database there, delete the empty file first, or name a file that does not exist yet", path)
	}
	if err := h.vet(path, SchemaVersion); err != nil {
		return nil, err
	}
	if h.applicationID != applicationID {
		if err := examine(ctx, abs, path, opt.ReadOnly); err != nil {
			return nil, err
		}
	}
	return open(ctx, abs, path, opt)
}

// ErrExists is matched (errors.Is) by Create's error when the database
// already exists. It is fs.ErrExist.
var ErrExists = safefile.ErrExists

// Create makes a new database at path and, when fill is set, fills it
// before anyone else can see it. The database is built, migrated and
// filled under a temporary name beside path, readable by its owner only,
// and only the complete database is put at path — by a link, which never
// replaces a file: if path exists already, or another program creates it
// meanwhile, Create returns an error matching ErrExists, path is left as it
// is and this call's work is discarded (the caller may open the existing
// database instead). A failed or cancelled fill leaves no file behind, so
// nothing ever has to be deleted at path; what a killed Create leaves under
// its temporary name is removed by the next one.
func Create(ctx context.Context, path string, opt Options, fill func(*Store) error) error {
	if path == "" {
		return errors.New("no database path given")
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return fmt.Errorf("database %s: %w", path, err)
	}
	if _, err := os.Lstat(abs); err == nil {
		return fmt.Errorf("database %s: %w", path, ErrExists)
	}
	dir := filepath.Dir(abs)
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return fmt.Errorf("cannot create folder %s for the database: %w", dir, err)
	}
	tmp, err := tempDatabase(abs)
	if err != nil {
		return fmt.Errorf("cannot create database %s: %w", path, err)
	}
	defer removeJournals(tmp)
	opt.ReadOnly = false
	s, err := open(ctx, tmp, path, opt)
	if err != nil {
		os.Remove(tmp)
		return err
	}
	if fill != nil {
		err = fill(s)
	}
	if cerr := s.Close(); err == nil {
		err = cerr
	}
	if err == nil && hasLog(tmp) {
		err = fmt.Errorf("database %s: its write-ahead log was not folded in on closing", path)
	}
	if err != nil {
		os.Remove(tmp)
		return err
	}
	if err := safefile.Place(tmp, abs, false); err != nil {
		if errors.Is(err, ErrExists) {
			return fmt.Errorf("database %s: %w (another program created it meanwhile)", path, ErrExists)
		}
		return fmt.Errorf("cannot create database %s: %w", path, err)
	}
	return nil
}

// open opens a database file that is known to be sound enough to open:
// path is the file, name what messages call it.
func open(ctx context.Context, path, name string, opt Options) (*Store, error) {
	s := &Store{path: path, key: opt.Key, now: opt.Now, user: opt.User, busy: opt.BusyTimeout, readOnly: opt.ReadOnly}
	if s.now == nil {
		s.now = time.Now
	}
	if s.busy <= 0 {
		s.busy = 5 * time.Second
	}
	if s.user == "" {
		s.user = osUser()
	}
	db, err := sql.Open(driverName, dsn(path, int(s.busy/time.Millisecond), opt.ReadOnly))
	if err != nil {
		return nil, fmt.Errorf("database %s: %w", name, err)
	}
	s.db = db
	if err := s.setUp(ctx, opt.migrateTo, opt.KeepSchema); err != nil {
		db.Close()
		return nil, fmt.Errorf("database %s: %w", name, s.explain(err))
	}
	return s, nil
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

// setUp checks the schema as SQLite reports it and, for writing, checks
// the file's soundness, switches to WAL and migrates. keepSchema lets a
// read-only store open an older schema as it is (for Backup).
func (s *Store) setUp(ctx context.Context, stopAt int, keepSchema bool) error {
	v, err := schemaVersion(ctx, s.db)
	if err != nil {
		return err
	}
	if v > SchemaVersion {
		return fmt.Errorf("it was written by a newer version of polypledger (schema %d; this program knows up to %d); it was left untouched", v, SchemaVersion)
	}
	if v > 0 {
		id, err := applicationIDOf(ctx, s.db)
		if err != nil {
			return err
		}
		if id != applicationID {
			return errors.New("it is a SQLite database of another program, not a polypledger database; it was left untouched")
		}
	} else {
		var n int
		if err := s.db.QueryRowContext(ctx, "SELECT count(*) FROM sqlite_master").Scan(&n); err != nil {
			return err
		}
		if n > 0 {
			return errors.New("it is a SQLite database of another program, not a polypledger database; it was left untouched")
		}
	}
	if s.readOnly {
		if v < SchemaVersion && !keepSchema {
			return fmt.Errorf("it has schema %d and must be upgraded to %d; open it once for writing", v, SchemaVersion)
		}
		return nil
	}
	if v > 0 {
		if err := quickCheck(ctx, s.db); err != nil {
			return err
		}
	}
	if err := useWAL(ctx, s.db); err != nil {
		return err
	}
	return s.migrate(ctx, v, stopAt)
}

// migrate applies the migrations after version from, each in its own
// transaction together with the new version number. Each transaction reads
// the version again, so that two programs opening an old database at once
// do not both apply a step: the second finds it done.
func (s *Store) migrate(ctx context.Context, from, stopAt int) error {
	ms, err := migrations()
	if err != nil {
		return err
	}
	for _, m := range ms {
		if m.version <= from || (stopAt > 0 && m.version > stopAt) {
			continue
		}
		err := s.inTx(ctx, func(tx *sql.Tx) error {
			if v, err := schemaVersion(ctx, tx); err != nil || v >= m.version {
				return err
			}
			if _, err := tx.ExecContext(ctx, m.sql); err != nil {
				return fmt.Errorf("migration %s: %w", m.name, err)
			}
			return setSchemaVersion(ctx, tx, m.version)
		})
		if err != nil {
			return err
		}
	}
	return nil
}

// inTx runs fn in a write transaction and commits when it returns nil.
func (s *Store) inTx(ctx context.Context, fn func(tx *sql.Tx) error) error {
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	defer func() {
		if r := recover(); r != nil {
			tx.Rollback() // never leave the write lock held
			panic(r)
		}
	}()
	if err := fn(tx); err != nil {
		tx.Rollback()
		return err
	}
	return tx.Commit()
}

// Close closes the database, folding the write-ahead log into the file.
func (s *Store) Close() error {
	if s.db == nil {
		return nil
	}
	if s.rdb != nil {
		s.rdb.Close()
	}
	if !s.readOnly {
		checkpoint(context.Background(), s.db) // best effort; the WAL is valid either way
	}
	err := s.db.Close()
	s.db = nil
	return err
}

// Path returns the database file's absolute path.
func (s *Store) Path() string { return s.path }

// Version returns the schema version of the open database.
func (s *Store) Version(ctx context.Context) (int, error) { return schemaVersion(ctx, s.db) }

// today is the current civil date by the store's clock.
func (s *Store) today() time.Time { return logbook.Today(s.now()) }

// ErrBusy is returned (wrapped) when another program held the database lock
// for longer than the busy timeout; nothing was stored.
var ErrBusy = errors.New("the database is busy")

// explain turns driver errors into messages a unit lead can act on; every
// driver error reaching a user passes through here.
func (s *Store) explain(err error) error {
	switch {
	case err == nil:
		return nil
	case isBusy(err):
		return fmt.Errorf("%w: another program is writing to it and did not finish within %s; nothing was stored — try again when it has finished", ErrBusy, s.busy)
	case isFull(err):
		return fmt.Errorf("the disk is full; nothing was stored and the database is as it was — free some space and try again: %v", err)
	case isReadOnly(err):
		return fmt.Errorf("it cannot be written (read-only file or folder, or no permission); nothing was stored: %v", err)
	case isCorrupt(err):
		return fmt.Errorf("it is damaged or not a database; restore it from a backup: %v", err)
	}
	return err
}
