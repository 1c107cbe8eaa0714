package store

// Everything specific to SQLite lives in this file: the driver and its
// connection string, pragmas, the file-header checks made before a file is
// opened, creating a new file whole, the schema version kept in
// user_version, the change log's guards as SQLite triggers, integrity
// checks, the streaming read and the online copy. postgres.go is its
// counterpart for a unit server.

import (
	"context"
	"database/sql"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"

	"polypledger/internal/safefile"
)

// applicationID marks a SQLite file as a polypledger database ("PlPg").
const applicationID = 0x506c5067

// sqliteHeader is the first 16 bytes of every SQLite 3 database file.
const sqliteHeader = "SQLite format 3\x00"

// dsn builds the connection string: WAL journal, foreign keys, a busy
// timeout, and write transactions that take the lock at BEGIN so that two
// writers queue instead of failing half-way.
func dsn(path string, busyMillis int, readOnly bool) string {
	q := url.Values{}
	q.Add("_pragma", "foreign_keys(1)")
	q.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", busyMillis))
	q.Add("_pragma", "synchronous(FULL)")
	if readOnly {
		q.Set("mode", "ro")
	} else {
		q.Set("_txlock", "immediate")
	}
	return "file:" + (&url.URL{Path: path}).EscapedPath() + "?" + q.Encode()
}

const driverName = "sqlite"

// sqliteBackend is a unit in a SQLite file.
type sqliteBackend struct {
	path string
	// rdb is the pool of read-only connections for streaming, opened on
	// first use.
	rdb     *sql.DB
	rdbErr  error
	rdbOnce sync.Once
}

func openSQLite(ctx context.Context, path string, opt Options) (*Store, error) {
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
		if err := createSQLite(ctx, path, opt, nil); err != nil && !errors.Is(err, ErrExists) {
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
	return openFile(ctx, abs, path, opt)
}

func createSQLite(ctx context.Context, path string, opt Options, fill func(*Store) error) error {
	abs, err := filepath.Abs(path)
	if err != nil {
		return fmt.Errorf("database %s: %w", path, err)
	}
	if _, err := os.Lstat(abs); err == nil {
		return fmt.Errorf("database %s: %w", path, ErrExists)
	}
	return buildFile(ctx, abs, path, opt, fill, false)
}

// buildFile makes a new database file under a temporary name beside abs,
// fills it, closes it (folding in its log) and puts it at abs: by a link
// that never replaces a file, or, with replace, by renaming over a file
// that is not a database (a backup's --force). name is what messages call
// it.
func buildFile(ctx context.Context, abs, path string, opt Options, fill func(*Store) error, replace bool) error {
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
	s, err := openFile(ctx, tmp, path, opt)
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
	if err := safefile.Place(tmp, abs, replace); err != nil {
		if errors.Is(err, ErrExists) {
			return fmt.Errorf("database %s: %w (another program created it meanwhile)", path, ErrExists)
		}
		return fmt.Errorf("cannot create database %s: %w", path, err)
	}
	return nil
}

// openFile opens a database file that is known to be sound enough to
// open: path is the file, name what messages call it.
func openFile(ctx context.Context, path, name string, opt Options) (*Store, error) {
	be := &sqliteBackend{path: path}
	s := newStore(be, opt)
	s.path, s.location = path, name
	db, err := sql.Open(driverName, dsn(path, int(s.busy/time.Millisecond), opt.ReadOnly))
	if err != nil {
		return nil, fmt.Errorf("database %s: %w", name, err)
	}
	s.db = &dbh{pool: db}
	if err := s.setUp(ctx, opt.migrateTo, opt.KeepSchema); err != nil {
		db.Close()
		return nil, fmt.Errorf("database %s: %w", name, s.explain(err))
	}
	return s, nil
}

func (*sqliteBackend) numbered() bool { return false }

// vet reads the schema version and refuses another program's database.
func (*sqliteBackend) vet(ctx context.Context, q querier) (int, error) {
	v, err := schemaVersion(ctx, q)
	if err != nil {
		return 0, err
	}
	if v > 0 {
		id, err := applicationIDOf(ctx, q)
		if err != nil {
			return 0, err
		}
		if id != applicationID {
			return 0, errors.New("it is a SQLite database of another program, not a polypledger database; it was left untouched")
		}
		return v, nil
	}
	var n int
	if err := q.QueryRowContext(ctx, "SELECT count(*) FROM sqlite_master").Scan(&n); err != nil {
		return 0, err
	}
	if n > 0 {
		return 0, errors.New("it is a SQLite database of another program, not a polypledger database; it was left untouched")
	}
	return 0, nil
}

func (*sqliteBackend) version(ctx context.Context, q querier) (int, error) {
	return schemaVersion(ctx, q)
}

func (*sqliteBackend) setVersion(ctx context.Context, tx *txn, v int) error {
	return setSchemaVersion(ctx, tx, v)
}

// steps are SQLite's own statements of each migration step: the change
// log's append-only guards (step 2) as triggers.
func (*sqliteBackend) steps() map[int]string {
	return map[int]string{2: `
CREATE TRIGGER change_log_no_update BEFORE UPDATE ON change_log
BEGIN
    SELECT RAISE(ABORT, 'the change log is append-only');
END;

CREATE TRIGGER change_log_no_delete BEFORE DELETE ON change_log
BEGIN
    SELECT RAISE(ABORT, 'the change log is append-only');
END;
`}
}

// lockWrites does nothing: write transactions begin IMMEDIATE (see dsn),
// which takes the lock at BEGIN.
func (*sqliteBackend) lockWrites(context.Context, *txn) error { return nil }

// prepareWrite refuses a database failing the quick check and switches it
// to write-ahead logging.
func (*sqliteBackend) prepareWrite(ctx context.Context, s *Store, version int) error {
	if version > 0 {
		if err := quickCheck(ctx, s.db); err != nil {
			return err
		}
	}
	return useWAL(ctx, s.db.pool)
}

func (*sqliteBackend) integrity(ctx context.Context, s *Store) ([]string, error) {
	return integrityFindings(ctx, s.db.pool)
}

func (*sqliteBackend) guarded(ctx context.Context, q querier) (bool, error) {
	var n int
	err := q.QueryRowContext(ctx, "SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'change_log_no_%'").Scan(&n)
	return n == 2, err
}

func (*sqliteBackend) bulk(ctx context.Context, tx *txn, table string, columns []string) (bulkWriter, error) {
	return newStmtWriter(ctx, tx, table, columns)
}

func (*sqliteBackend) bulkUpdate(ctx context.Context, tx *txn, table string, set, key []string) (bulkWriter, error) {
	return newStmtUpdater(ctx, tx, table, set, key)
}

// planEach needs nothing: SQLite looks up an IN list's values one by one
// in the index however the statement was prepared.
func (*sqliteBackend) planEach() []any { return nil }

// listSample gives no statement: SQLite walks an index to a page's offset
// in the process, faster than a sample would be read.
func (*sqliteBackend) listSample(string, string, int) string { return "" }

func (*sqliteBackend) classify(err error) failure {
	switch {
	case errors.Is(err, errReadOnlyStore):
		return failReadOnlyTx
	case isBusy(err):
		return failBusy
	case isFull(err):
		return failFull
	case isReadOnly(err):
		return failReadOnly
	case isCorrupt(err):
		return failCorrupt
	}
	return failOther
}

// close folds the write-ahead log back into the file.
func (b *sqliteBackend) close(s *Store) {
	if b.rdb != nil {
		b.rdb.Close()
	}
	if !s.readOnly {
		checkpoint(context.Background(), s.db.pool) // best effort; the WAL is valid either way
	}
}

// readPool returns the pool of read-only connections used for streaming,
// opened on first use.
func (b *sqliteBackend) readPool(busy time.Duration) (*sql.DB, error) {
	b.rdbOnce.Do(func() {
		b.rdb, b.rdbErr = sql.Open(driverName, dsn(b.path, int(busy.Milliseconds()), true))
	})
	return b.rdb, b.rdbErr
}

// streamCases reads procedures and lesions as two ordered streams on two
// read connections. Both read the same snapshot: each opens a read
// transaction and notes the newest change-log entry, and the pair is
// retried if a write landed between the two (every write the program makes
// adds a change-log entry, and writers take turns).
func (b *sqliteBackend) streamCases(ctx context.Context, s *Store, f CaseFilter) (procs, lesions rowSource, done func(), err error) {
	db, err := b.readPool(s.busy)
	if err != nil {
		return rowSource{}, rowSource{}, nil, err
	}
	ptx, ltx, err := pairedSnapshot(ctx, db)
	if err != nil {
		return rowSource{}, rowSource{}, nil, err
	}
	procSQL, lesionSQL, args := sqliteStreamQueries(f)
	done = func() {
		ptx.Rollback()
		ltx.Rollback()
	}
	return packedRows(ctx, ptx, procSQL, args), packedRows(ctx, ltx, lesionSQL, args), done, nil
}

// sqliteStreamQueries returns the procedure and lesion queries for a
// filter, both in the order the procedures were stored (and lesions by
// number), which needs no sort: a full pass over a large logbook then
// reads each table once, in file order. The date conditions are kept off
// the date index (the unary plus): filtering rows as they pass is cheaper
// than sorting an index range back into stored order.
func sqliteStreamQueries(f CaseFilter) (procSQL, lesionSQL string, args []any) {
	where, args := f.whereOpt("p.", "+")
	procSQL = "SELECT " + packedFields("p.", columnNames(procedureColumns)) +
		" FROM procedures p" + where + " ORDER BY p.rowid"
	lesionSQL = "SELECT " + packedFields("l.", columnNames(lesionStoredColumns)) +
		" FROM procedures p JOIN lesions l ON l.procedure_id = p.id" + where +
		" ORDER BY p.rowid, l.lesion_no"
	return procSQL, lesionSQL, args
}

// packedRows runs a query returning one packed value per row (see
// packedFields) and yields each.
func packedRows(ctx context.Context, tx *sql.Tx, query string, args []any) rowSource {
	return rowSource{sep: fieldSep, each: func(yield func([]byte) error) error {
		rows, err := tx.QueryContext(ctx, query, args...)
		if err != nil {
			return err
		}
		defer rows.Close()
		var raw sql.RawBytes
		for rows.Next() {
			if err := rows.Scan(&raw); err != nil {
				return err
			}
			if err := yield(raw); err != nil {
				return err
			}
		}
		return rows.Err()
	}}
}

// snapshotTx opens a read transaction on its own connection and returns it
// with the id of the newest change-log entry it sees.
func snapshotTx(ctx context.Context, db *sql.DB) (*sql.Tx, int64, error) {
	tx, err := db.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
	if err != nil {
		return nil, 0, err
	}
	var mark int64
	if err := tx.QueryRowContext(ctx, "SELECT coalesce(max(id), 0) FROM change_log").Scan(&mark); err != nil {
		tx.Rollback()
		return nil, 0, err
	}
	return tx, mark, nil
}

// snapshotRetries is how often the pair of streams is reopened when a write
// lands between them.
const snapshotRetries = 8

// pairedSnapshot opens two read transactions that see the same state.
func pairedSnapshot(ctx context.Context, db *sql.DB) (*sql.Tx, *sql.Tx, error) {
	for try := 0; try < snapshotRetries; try++ {
		a, ma, err := snapshotTx(ctx, db)
		if err != nil {
			return nil, nil, err
		}
		b, mb, err := snapshotTx(ctx, db)
		if err != nil {
			a.Rollback()
			return nil, nil, err
		}
		if ma == mb {
			return a, b, nil
		}
		a.Rollback()
		b.Rollback()
	}
	return nil, nil, errors.New("the database changed throughout the read; try again when imports have finished")
}

// packedFields returns an SQL expression joining the columns into one text
// value, fields separated by the unit separator (0x1F) and NULL written as
// the empty string by concat (the store never keeps empty strings, so the two cannot
// be confused). Reading one packed value per row instead of one value per
// column is what makes a full pass over a large logbook fast with this
// driver.
func packedFields(alias string, columns []string) string {
	parts := make([]string, len(columns))
	for i, c := range columns {
		parts[i] = alias + c
	}
	return "concat(" + strings.Join(parts, ", char(31), ") + ")"
}

// fieldSep separates the fields of a packed row.
const fieldSep = 0x1f

// fileHeader is what the file's first 100 bytes say about it.
type fileHeader struct {
	exists        bool
	empty         bool  // a zero-length file: SQLite treats it as a new database
	size          int64 // bytes on disk
	pageSize      int64
	pages         int64 // database size in pages, when the header's count is valid
	userVersion   int
	applicationID uint32
	// wal is set when a non-empty write-ahead log lies beside the file: the
	// file may then legitimately be shorter than its header says (a
	// checkpoint cut short), and SQLite completes it from the log.
	wal bool
}

// readHeader inspects a database file without opening it through SQLite, so
// that a foreign or damaged file is refused before anything writes to it.
func readHeader(path string) (fileHeader, error) {
	var h fileHeader
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return h, nil
	}
	if err != nil {
		return h, fmt.Errorf("cannot read %s: %w", path, err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return h, fmt.Errorf("cannot read %s: %w", path, err)
	}
	if st.IsDir() {
		return h, fmt.Errorf("%s is a folder, not a database file", path)
	}
	h.exists, h.size = true, st.Size()
	if w, err := os.Stat(path + "-wal"); err == nil && w.Size() > 0 {
		h.wal = true
	}
	if h.size == 0 {
		h.empty = true
		return h, nil
	}
	buf := make([]byte, 100)
	if _, err := io.ReadFull(f, buf); err != nil || string(buf[:16]) != sqliteHeader {
		return h, fmt.Errorf("%s is not a polypledger database (it is not a SQLite file); it was left untouched", path)
	}
	h.pageSize = int64(binary.BigEndian.Uint16(buf[16:18]))
	if h.pageSize == 1 {
		h.pageSize = 65536
	}
	changeCounter := binary.BigEndian.Uint32(buf[24:28])
	if validFor := binary.BigEndian.Uint32(buf[92:96]); validFor == changeCounter {
		h.pages = int64(binary.BigEndian.Uint32(buf[28:32]))
	}
	h.userVersion = int(int32(binary.BigEndian.Uint32(buf[60:64])))
	h.applicationID = binary.BigEndian.Uint32(buf[68:72])
	return h, nil
}

// vet refuses a file whose header shows it is truncated, foreign, or written
// by a newer schema than this program knows.
func (h fileHeader) vet(path string, known int) error {
	if !h.exists || h.empty {
		return nil
	}
	short := h.pages > 0 && h.size < h.pages*h.pageSize && !h.wal
	if h.pageSize < 512 || h.size < h.pageSize || h.size%h.pageSize != 0 || short {
		return fmt.Errorf("%s looks damaged or truncated (%d bytes where the header promises more); it was left untouched — restore it from a backup", path, h.size)
	}
	if h.applicationID != 0 && h.applicationID != applicationID {
		return fmt.Errorf("%s is a SQLite database of another program, not a polypledger database; it was left untouched", path)
	}
	if h.applicationID == 0 && h.userVersion != 0 {
		return fmt.Errorf("%s is a SQLite database of another program, not a polypledger database; it was left untouched", path)
	}
	if h.userVersion > known {
		return fmt.Errorf("%s was written by a newer version of polypledger (schema %d; this program knows up to %d); it was left untouched — use the newer program", path, h.userVersion, known)
	}
	return nil
}

// schemaVersion reads the schema version kept in user_version.
func schemaVersion(ctx context.Context, q querier) (int, error) {
	var v int
	err := q.QueryRowContext(ctx, "PRAGMA user_version").Scan(&v)
	return v, err
}

// setSchemaVersion records the schema version inside the migration's
// transaction, and stamps the application id.
func setSchemaVersion(ctx context.Context, tx *txn, v int) error {
	if _, err := tx.ExecContext(ctx, fmt.Sprintf("PRAGMA user_version = %d", v)); err != nil {
		return err
	}
	_, err := tx.ExecContext(ctx, fmt.Sprintf("PRAGMA application_id = %d", applicationID))
	return err
}

// applicationIDOf reads the database's application id.
func applicationIDOf(ctx context.Context, q querier) (uint32, error) {
	var v int64
	err := q.QueryRowContext(ctx, "PRAGMA application_id").Scan(&v)
	return uint32(v), err
}

// useWAL switches the database to write-ahead logging, which lets readers go
// on while one writer commits, and survives a crash at any point.
func useWAL(ctx context.Context, db *sql.DB) error {
	var mode string
	if err := db.QueryRowContext(ctx, "PRAGMA journal_mode=WAL").Scan(&mode); err != nil {
		return err
	}
	if !strings.EqualFold(mode, "wal") {
		return fmt.Errorf("journal mode is %s, not WAL", mode)
	}
	return nil
}

// integrityFindings runs SQLite's own integrity and foreign-key checks.
func integrityFindings(ctx context.Context, db *sql.DB) ([]string, error) {
	var out []string
	rows, err := db.QueryContext(ctx, "PRAGMA integrity_check")
	if err != nil {
		return nil, err
	}
	for rows.Next() {
		var s string
		if err := rows.Scan(&s); err != nil {
			rows.Close()
			return nil, err
		}
		if s != "ok" {
			out = append(out, "integrity: "+s)
		}
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, err
	}
	rows, err = db.QueryContext(ctx, "PRAGMA foreign_key_check")
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	for rows.Next() {
		var table, parent string
		var rowid sql.NullInt64
		var fk int
		if err := rows.Scan(&table, &rowid, &parent, &fk); err != nil {
			return nil, err
		}
		out = append(out, fmt.Sprintf("foreign key: a row of %s (rowid %d) points to a missing %s", table, rowid.Int64, parent))
	}
	return out, rows.Err()
}

// vacuumInto writes a consistent copy of the database to path (which must
// not exist) while other connections may be writing.
func vacuumInto(ctx context.Context, db *sql.DB, path string) error {
	_, err := db.ExecContext(ctx, "VACUUM INTO ?", path)
	return err
}

// checkpoint folds the write-ahead log back into the main file.
func checkpoint(ctx context.Context, db *sql.DB) error {
	_, err := db.ExecContext(ctx, "PRAGMA wal_checkpoint(TRUNCATE)")
	return err
}

// isBusy reports whether err is SQLite's "database is locked/busy".
func isBusy(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_BUSY || c == sqlite3.SQLITE_LOCKED
	}
	return false
}

// isFull reports whether err is SQLite's "database or disk is full".
func isFull(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		return se.Code()&0xff == sqlite3.SQLITE_FULL
	}
	return false
}

// isReadOnly reports whether err is SQLite's "attempt to write a readonly
// database" or a failure to open for writing.
func isReadOnly(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_READONLY || c == sqlite3.SQLITE_CANTOPEN || c == sqlite3.SQLITE_PERM
	}
	return false
}

// isCorrupt reports whether err says the file is damaged or not a database.
func isCorrupt(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_CORRUPT || c == sqlite3.SQLITE_NOTADB
	}
	return false
}

// IsDatabaseFile reports whether the file at path is a SQLite database
// (by its first 16 bytes), whoever's it is; outputs never replace one.
func IsDatabaseFile(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	buf := make([]byte, len(sqliteHeader))
	_, err = io.ReadFull(f, buf)
	return err == nil && string(buf) == sqliteHeader
}

// journalSuffixes are the files SQLite keeps beside a database.
var journalSuffixes = []string{"-wal", "-shm", "-journal"}

// JournalOf reports whether path names one of the files SQLite keeps
// beside a database (its write-ahead log, shared memory or rollback
// journal), and which database.
func JournalOf(path string) (db string, ok bool) {
	for _, suf := range journalSuffixes {
		if base, found := strings.CutSuffix(path, suf); found && base != "" {
			return base, true
		}
	}
	return "", false
}

// hasLog reports whether a non-empty write-ahead log lies beside path.
func hasLog(path string) bool {
	fi, err := os.Stat(path + "-wal")
	return err == nil && fi.Size() > 0
}

// tempDatabase makes an empty, owner-only temporary file beside path for a
// database to be built in (a new database, or a backup copy) and returns
// its name; the caller removes it, and its journals, if it is not placed.
func tempDatabase(path string) (string, error) {
	f, err := safefile.Create(path)
	if err != nil {
		return "", err
	}
	return f.Name(), f.Close()
}

// removeJournals removes the files SQLite keeps beside a database that is
// being thrown away.
func removeJournals(path string) {
	for _, suf := range journalSuffixes {
		os.Remove(path + suf)
	}
}

// examine looks at a SQLite file whose header does not mark it as a
// polypledger database — a blank SQLite file, another program's database,
// or one of ours whose first pages still lie in its write-ahead log —
// without any side effect: through SQLite's immutable mode, which makes no
// journal file and takes no lock, or, when a write-ahead log lies beside
// it, on a private copy of the file and its log. It refuses another
// program's database, and for reading a blank one; path is the file and
// name what messages call it.
func examine(ctx context.Context, path, name string, readOnly bool) error {
	uri := "file:" + (&url.URL{Path: path}).EscapedPath() + "?mode=ro&immutable=1"
	if hasLog(path) {
		dir, err := os.MkdirTemp("", "polypledger-examine-*")
		if err != nil {
			return fmt.Errorf("cannot examine %s: %w", name, err)
		}
		defer os.RemoveAll(dir)
		cp := filepath.Join(dir, "db")
		for _, suf := range []string{"", "-wal"} {
			if err := copyPrivate(path+suf, cp+suf); err != nil {
				return fmt.Errorf("cannot examine %s: %w", name, err)
			}
		}
		uri = "file:" + (&url.URL{Path: cp}).EscapedPath()
	}
	db, err := sql.Open(driverName, uri)
	if err != nil {
		return fmt.Errorf("cannot examine %s: %w", name, err)
	}
	defer db.Close()
	db.SetMaxOpenConns(1)
	var id int64
	var version, tables int
	err = db.QueryRowContext(ctx, "SELECT (SELECT application_id FROM pragma_application_id), (SELECT user_version FROM pragma_user_version), (SELECT count(*) FROM sqlite_master)").Scan(&id, &version, &tables)
	switch {
	case err != nil && isCorrupt(err):
		return fmt.Errorf("%s looks damaged or is not a polypledger database; it was left untouched — restore it from a backup: %v", name, err)
	case err != nil:
		return fmt.Errorf("cannot examine %s: %w", name, err)
	case uint32(id) == applicationID:
		return nil // ours: its header is in the log
	case id != 0 || version != 0 || tables > 0:
		return fmt.Errorf("%s is a SQLite database of another program, not a polypledger database; it was left untouched", name)
	case readOnly:
		return fmt.Errorf("%s is an empty SQLite database that holds no polypledger data yet; it was left untouched", name)
	}
	return nil
}

// copyPrivate copies a file's bytes to a new file readable by its owner
// only.
func copyPrivate(src, dst string) error {
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	out, err := os.OpenFile(dst, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return err
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}

// ErrDamaged is matched (errors.Is) by the error of a write or backup
// refused because the database fails SQLite's quick integrity check.
var ErrDamaged = errors.New("the database is damaged")

// quickCheck runs SQLite's quick integrity check, which reads every page
// (but does not match indexes to their tables), and refuses a database
// that fails it.
func quickCheck(ctx context.Context, q querier) error {
	rows, err := q.QueryContext(ctx, "PRAGMA quick_check(3)")
	if err != nil {
		if isCorrupt(err) {
			return fmt.Errorf("%w: %v; nothing was written to it — run polypledger check for the details, and restore it from a backup", ErrDamaged, err)
		}
		return err
	}
	defer rows.Close()
	var found []string
	for rows.Next() {
		var s string
		if err := rows.Scan(&s); err != nil {
			return err
		}
		if s != "ok" {
			found = append(found, s)
		}
	}
	if err := rows.Err(); err != nil {
		if isCorrupt(err) {
			return fmt.Errorf("%w: %v; nothing was written to it — run polypledger check for the details, and restore it from a backup", ErrDamaged, err)
		}
		return err
	}
	if len(found) > 0 {
		return fmt.Errorf("%w: it fails SQLite's quick integrity check (%s); nothing was written to it — run polypledger check for the details, and restore it from a backup", ErrDamaged, strings.Join(found, "; "))
	}
	return nil
}

// verifyCopy checks a backup copy on its own: SQLite's full integrity and
// foreign-key checks, the polypledger application id and the schema
// version of the database it was copied from.
func verifyCopy(ctx context.Context, path string, version int) error {
	db, err := sql.Open(driverName, "file:"+(&url.URL{Path: path}).EscapedPath()+"?mode=ro&immutable=1")
	if err != nil {
		return err
	}
	defer db.Close()
	findings, err := integrityFindings(ctx, db)
	if err != nil {
		return err
	}
	if len(findings) > 0 {
		return errors.New(strings.Join(findings, "; "))
	}
	id, err := applicationIDOf(ctx, db)
	if err != nil {
		return err
	}
	v, err := schemaVersion(ctx, db)
	if err != nil {
		return err
	}
	if id != applicationID || v != version {
		return fmt.Errorf("it has application id %#x and schema %d, not %#x and %d", id, v, applicationID, version)
	}
	return nil
}

// CheckOutput refuses to let a file written at out replace what it must
// not: the database at db (compared as files, so that another name for it
// is caught too) or one of its journals, any SQLite database or journal, a
// folder, and, unless replace is set, any file at all. Exports, reports and
// backups pass their target through it before they write.
func CheckOutput(out, db string, replace bool) error {
	if base, ok := JournalOf(out); ok && (IsDatabaseFile(base) || sameFile(base, db)) {
		return fmt.Errorf("%s belongs to the database %s; choose another name", out, base)
	}
	fi, err := os.Stat(out)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	switch {
	case fi.IsDir():
		return fmt.Errorf("%s is a folder; name a file", out)
	case db != "" && sameFile(out, db):
		return fmt.Errorf("%s is the database itself; choose another name", out)
	case IsDatabaseFile(out):
		return fmt.Errorf("%s is a database; it is never replaced — choose another name", out)
	case !replace:
		return existsError{out}
	}
	return nil
}

// existsError is an output that would replace an existing file; it
// matches ErrExists.
type existsError struct{ path string }

func (e existsError) Error() string        { return e.path + " already exists; choose another name" }
func (e existsError) Is(target error) bool { return target == ErrExists }

// sameFile reports whether two paths name the same existing file.
func sameFile(a, b string) bool {
	if a == "" || b == "" {
		return false
	}
	fa, err := os.Stat(a)
	if err != nil {
		return false
	}
	fb, err := os.Stat(b)
	return err == nil && os.SameFile(fa, fb)
}
