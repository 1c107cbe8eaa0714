package store

import (
	"context"
	"database/sql"
	"strconv"
	"strings"
)

// A unit lives either in an embedded SQLite file (sqlite.go) or on a
// PostgreSQL server (postgres.go). Everything else in this package is
// shared: it speaks portable SQL with "?" placeholders through database/sql,
// and the backend supplies what differs — connecting, the schema version,
// its own statements for each migration step, integrity checks, the full
// streaming read, bulk writes and the meaning of the driver's errors.
type backend interface {
	// numbered reports whether "?" placeholders must be rewritten as "$1",
	// "$2", … (see rebind).
	numbered() bool
	// version reads the schema version (0 for a database with no
	// polypledger tables yet).
	version(ctx context.Context, q querier) (int, error)
	// vet refuses a database that is not a polypledger one (another
	// program's tables) and returns its schema version.
	vet(ctx context.Context, q querier) (int, error)
	// setVersion records the schema version inside a migration's
	// transaction.
	setVersion(ctx context.Context, tx *txn, v int) error
	// steps holds, by schema version, the statements this backend runs
	// after that step's portable migration file.
	steps() map[int]string
	// lockWrites makes a write transaction wait for any other writer's
	// to end, so that writers queue behind each other on both backends.
	lockWrites(ctx context.Context, tx *txn) error
	// prepareWrite checks a database about to be written (SQLite's quick
	// check) and sets it up for writing (SQLite's write-ahead log).
	prepareWrite(ctx context.Context, s *Store, version int) error
	// integrity returns the backend's own findings for Check.
	integrity(ctx context.Context, s *Store) ([]string, error)
	// guarded reports whether the change log's append-only guards are in
	// place.
	guarded(ctx context.Context, q querier) (bool, error)
	// streamCases opens the full read of the selected cases: two ordered
	// row sources, procedures and lesions, read from one snapshot.
	streamCases(ctx context.Context, s *Store, f CaseFilter) (procs, lesions rowSource, done func(), err error)
	// bulk returns a writer of many rows of one table inside tx.
	bulk(ctx context.Context, tx *txn, table string, columns []string) (bulkWriter, error)
	// bulkUpdate returns a writer that sets the columns set of many rows
	// of one table inside tx, each row found by its key columns: a row's
	// values are its new values, then its key's (as for updateSQL).
	bulkUpdate(ctx context.Context, tx *txn, table string, set, key []string) (bulkWriter, error)
	// planEach returns what goes before a query's arguments to have the
	// query planned for the values it is given each time it runs, rather
	// than prepared once with a plan for any values (nil: the backend needs
	// nothing for that).
	planEach() []any
	// listSample returns one statement that reads the case list's sample
	// (see sampleEvery): seed selects the first key, step the keys after
	// the key s.k, s.id in order; it yields each sampled key and its
	// number from 0. "" where the backend keeps no sample.
	listSample(seed, step string, every int) string
	// classify says what kind of failure a driver error is.
	classify(err error) failure
	// close releases what the backend holds for s (SQLite folds its
	// write-ahead log back into the file).
	close(s *Store)
}

// failure is the kind of a driver error, which explain turns into a
// sentence a unit lead can act on.
type failure int

const (
	failOther      failure = iota
	failBusy               // another program held the write lock too long
	failFull               // the disk is full
	failReadOnly           // the file or folder cannot be written
	failDenied             // the server role may not do this
	failCorrupt            // the database is damaged
	failLost               // the connection to the server was lost
	failConflict           // another program changed the same rows at once
	failReadOnlyTx         // the store was opened for reading only
)

// rowSource is one stream of rows: each row holds the record's stored
// values in column order, separated by sep, an empty value standing for
// NULL (the store never keeps empty strings). With copyText, a row is in
// the text format of PostgreSQL's COPY: \N is NULL and a backslash starts
// an escape. A row is valid until the next one.
type rowSource struct {
	each     func(yield func(row []byte) error) error
	sep      byte
	copyText bool
}

// bulkWriter stores many rows of one table in a transaction: one prepared
// statement on SQLite, COPY (or, for an update, one statement for many
// rows) on PostgreSQL. Rows are written when flush is
// called (or earlier), and flush must be called before the transaction
// commits; rows of a table that others refer to are flushed first.
type bulkWriter interface {
	write(ctx context.Context, values []any) error
	flush(ctx context.Context) error
	close() error
}

// querier is what both the pool and a transaction offer.
type querier interface {
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error)
}

// dbh is the store's pool of connections. Queries are written with "?"
// placeholders and rewritten here, in one place, for a backend that
// numbers them. While a new server database is being filled (Create), the
// handle is bound to that one transaction, so that everything the store
// reads and writes sees the unfinished work and none of it is visible to
// anyone else until it commits.
type dbh struct {
	pool     *sql.DB
	numbered bool
	bound    *txn
}

func (d *dbh) q(query string) string { return rebind(query, d.numbered) }

// QueryRowContext runs a query expected to return at most one row.
func (d *dbh) QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row {
	if d.bound != nil {
		return d.bound.QueryRowContext(ctx, query, args...)
	}
	return d.pool.QueryRowContext(ctx, d.q(query), args...)
}

// QueryContext runs a query.
func (d *dbh) QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error) {
	if d.bound != nil {
		return d.bound.QueryContext(ctx, query, args...)
	}
	return d.pool.QueryContext(ctx, d.q(query), args...)
}

// ExecContext runs a statement.
func (d *dbh) ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error) {
	if d.bound != nil {
		return d.bound.ExecContext(ctx, query, args...)
	}
	return d.pool.ExecContext(ctx, d.q(query), args...)
}

// begin starts a transaction on a connection of its own, which the
// backend's bulk writer and stream may use directly.
func (d *dbh) begin(ctx context.Context, opt *sql.TxOptions) (*txn, error) {
	conn, err := d.pool.Conn(ctx)
	if err != nil {
		return nil, err
	}
	tx, err := conn.BeginTx(ctx, opt)
	if err != nil {
		conn.Close()
		return nil, err
	}
	return &txn{tx: tx, conn: conn, numbered: d.numbered}, nil
}

// txn is one transaction and the connection it runs on.
type txn struct {
	tx       *sql.Tx
	conn     *sql.Conn
	numbered bool
	// kept, when set, holds statements prepared once on pool and used
	// in each transaction (preparedStmts); a file store's write
	// transactions set it.
	kept *preparedStmts
	pool *sql.DB
	// stmts are the kept statements this transaction has run, by text.
	stmts map[string]*sql.Stmt
}

func (t *txn) q(query string) string { return rebind(query, t.numbered) }

// keptStmt returns, when kept is set, the statement kept for a query that
// has arguments, so that one run for every row of an import (a lesion
// looked up, a histology result stored, a change-log entry) is parsed once
// per store rather than once per row: the text of a statement with
// arguments is fixed, its values travel apart. It returns nil for a query
// to be run as it is: without kept (a server plans each), without
// arguments (schema steps, which may hold several statements), or when
// preparing fails (running it then says why).
func (t *txn) keptStmt(ctx context.Context, query string, args []any) *sql.Stmt {
	if t.kept == nil || len(args) == 0 {
		return nil
	}
	if st, ok := t.stmts[query]; ok {
		return st
	}
	st, err := t.PrepareContext(ctx, query)
	if err != nil {
		return nil
	}
	if t.stmts == nil {
		t.stmts = map[string]*sql.Stmt{}
	}
	t.stmts[query] = st
	return st
}

// QueryRowContext runs a query expected to return at most one row.
func (t *txn) QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row {
	if st := t.keptStmt(ctx, query, args); st != nil {
		return st.QueryRowContext(ctx, args...)
	}
	return t.tx.QueryRowContext(ctx, t.q(query), args...)
}

// QueryContext runs a query.
func (t *txn) QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error) {
	if st := t.keptStmt(ctx, query, args); st != nil {
		return st.QueryContext(ctx, args...)
	}
	return t.tx.QueryContext(ctx, t.q(query), args...)
}

// ExecContext runs a statement.
func (t *txn) ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error) {
	if st := t.keptStmt(ctx, query, args); st != nil {
		return st.ExecContext(ctx, args...)
	}
	return t.tx.ExecContext(ctx, t.q(query), args...)
}

// PrepareContext prepares a statement for repeated use in the transaction.
func (t *txn) PrepareContext(ctx context.Context, query string) (*sql.Stmt, error) {
	if t.kept != nil {
		parent, err := t.kept.get(ctx, t.pool, t.q(query))
		if err != nil {
			return nil, err
		}
		return t.tx.StmtContext(ctx, parent), nil
	}
	return t.tx.PrepareContext(ctx, t.q(query))
}

// commit commits and returns the connection to the pool.
func (t *txn) commit() error {
	err := t.tx.Commit()
	t.conn.Close()
	return err
}

// rollback rolls back (if the transaction is still open) and returns the
// connection to the pool.
func (t *txn) rollback() {
	t.tx.Rollback()
	t.conn.Close()
}

// rebind rewrites "?" placeholders as "$1", "$2", … when numbered is set,
// leaving quoted text and identifiers alone.
func rebind(query string, numbered bool) string {
	if !numbered || !strings.Contains(query, "?") {
		return query
	}
	var b strings.Builder
	b.Grow(len(query) + 16)
	n := 0
	var quote byte
	for i := 0; i < len(query); i++ {
		c := query[i]
		switch {
		case quote != 0:
			if c == quote {
				quote = 0
			}
		case c == '\'' || c == '"':
			quote = c
		case c == '?':
			n++
			b.WriteByte('$')
			b.WriteString(strconv.Itoa(n))
			continue
		}
		b.WriteByte(c)
	}
	return b.String()
}

// stmtWriter is the bulk writer of a backend that inserts row by row: one
// prepared INSERT, run for each row as it comes.
type stmtWriter struct {
	st *sql.Stmt
}

func newStmtWriter(ctx context.Context, tx *txn, table string, columns []string) (*stmtWriter, error) {
	return prepareWriter(ctx, tx, "INSERT INTO "+table+" ("+strings.Join(columns, ", ")+") VALUES ("+placeholders(len(columns))+")")
}

// newStmtUpdater is the bulk updater of a backend that updates row by row:
// one prepared updateSQL, run for each row as it comes.
func newStmtUpdater(ctx context.Context, tx *txn, table string, set, key []string) (*stmtWriter, error) {
	return prepareWriter(ctx, tx, updateSQL(table, set, key))
}

func prepareWriter(ctx context.Context, tx *txn, query string) (*stmtWriter, error) {
	st, err := tx.PrepareContext(ctx, query)
	if err != nil {
		return nil, err
	}
	return &stmtWriter{st: st}, nil
}

// updateSQL sets the columns set of the row of table found by the columns
// key: its arguments are the new values, then the key's.
func updateSQL(table string, set, key []string) string {
	sets := make([]string, len(set))
	for i, c := range set {
		sets[i] = c + " = ?"
	}
	where := make([]string, len(key))
	for i, c := range key {
		where[i] = c + " = ?"
	}
	return "UPDATE " + table + " SET " + strings.Join(sets, ", ") + " WHERE " + strings.Join(where, " AND ")
}

func (w *stmtWriter) write(ctx context.Context, values []any) error {
	_, err := w.st.ExecContext(ctx, values...)
	return err
}

func (w *stmtWriter) flush(context.Context) error { return nil }

func (w *stmtWriter) close() error { return w.st.Close() }
