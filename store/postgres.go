//go:build !nopostgres

package store

// Everything specific to PostgreSQL lives in this file: connecting through
// pgx and saying in one sentence why a connection failed, the schema
// version kept in the polypledger table, PostgreSQL's own statements of
// each migration step (byte-wise text comparison, identity columns, the
// change log's guards), the write lock (an advisory lock, so that writers
// queue as they do on a SQLite file), the integrity findings, the full read
// through COPY on two connections sharing one snapshot, bulk writes through
// COPY, and the meaning of the server's error codes. sqlite.go is its
// counterpart for a file.

import (
	"bytes"
	"context"
	"crypto/x509"
	"database/sql"
	"database/sql/driver"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/url"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/stdlib"

	"polypledger/logbook"
)

// pgBackend is a unit in a database on a PostgreSQL server.
type pgBackend struct {
	cfg *pgx.ConnConfig
	// server and role name the connection in messages.
	server, database, role string
}

// writeLockKey is the advisory lock every write transaction takes, so that
// writers queue behind each other as they do on a SQLite file ("PlPg").
const writeLockKey = applicationID

// connectTimeout bounds a connection attempt when the URL sets none.
const connectTimeout = 10 * time.Second

// connectPostgres connects to the server named by rawURL and returns a
// store on it, without looking at its tables yet.
func connectPostgres(ctx context.Context, rawURL string, opt Options) (*Store, error) {
	cfg, err := pgx.ParseConfig(rawURL)
	if err != nil {
		return nil, fmt.Errorf("the database address is not a PostgreSQL URL this program can read (%s); its form is postgres://ROLE@HOST/DATABASE?sslmode=verify-full", urlProblem(err, rawURL))
	}
	be := &pgBackend{cfg: cfg, database: cfg.Database, role: cfg.User}
	be.server = serverName(cfg)
	s := newStore(be, opt)
	s.location = Describe(rawURL)
	if cfg.ConnectTimeout == 0 {
		cfg.ConnectTimeout = connectTimeout
	}
	rp := cfg.RuntimeParams
	if rp["application_name"] == "" {
		rp["application_name"] = "polypledger"
	}
	// A writer waits this long for another's lock, then gives up (ErrBusy).
	rp["lock_timeout"] = strconv.FormatInt(s.busy.Milliseconds(), 10)
	// Literals inlined into COPY statements rely on it.
	rp["standard_conforming_strings"] = "on"
	// The full read is two plain index scans: compiling them (JIT) costs
	// time and gains nothing.
	rp["jit"] = "off"
	if opt.ReadOnly {
		rp["default_transaction_read_only"] = "on"
	}
	db := stdlib.OpenDB(*cfg)
	db.SetMaxOpenConns(8)
	db.SetMaxIdleConns(3)
	db.SetConnMaxIdleTime(5 * time.Minute)
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, be.connectError(err)
	}
	s.db = &dbh{pool: db, numbered: true}
	return s, nil
}

func openPostgres(ctx context.Context, rawURL string, opt Options) (*Store, error) {
	s, err := connectPostgres(ctx, rawURL, opt)
	if err != nil {
		return nil, err
	}
	fail := func(err error) (*Store, error) {
		s.Close()
		return nil, fmt.Errorf("%s: %w", s.location, s.explain(err))
	}
	v, err := s.be.vet(ctx, s.db)
	if err != nil {
		return fail(err)
	}
	if v == 0 {
		if opt.ReadOnly {
			return fail(errors.New("it holds no polypledger data yet (it has no tables); a unit is put there by polypledger init, import, demo or move"))
		}
		if err := s.createSchema(ctx, opt.migrateTo, nil); err != nil && !errors.Is(err, ErrExists) {
			return fail(err)
		}
	}
	if err := s.setUp(ctx, opt.migrateTo, opt.KeepSchema); err != nil {
		return fail(err)
	}
	if !opt.ReadOnly {
		var can bool
		err := s.db.QueryRowContext(ctx, `SELECT bool_and(has_table_privilege(t, p))
			FROM unnest(ARRAY['settings', 'roster', 'procedures', 'lesions', 'change_log']) t,
			     unnest(ARRAY['SELECT', 'INSERT', 'UPDATE', 'DELETE']) p
			WHERE NOT (t = 'change_log' AND p IN ('UPDATE', 'DELETE'))`).Scan(&can)
		if err != nil {
			return fail(err)
		}
		if !can {
			s.cannotWrite = deniedSentence(s)
		}
	}
	return s, nil
}

func createPostgres(ctx context.Context, rawURL string, opt Options, fill func(*Store) error) error {
	opt.ReadOnly = false
	s, err := connectPostgres(ctx, rawURL, opt)
	if err != nil {
		return err
	}
	defer s.Close()
	if err := s.createSchema(ctx, opt.migrateTo, fill); err != nil {
		if errors.Is(err, ErrExists) {
			return unitExists{s.location}
		}
		var ve *ValidationError
		var ie *ImportError
		if errors.As(err, &ve) || errors.As(err, &ie) {
			return err
		}
		return fmt.Errorf("%s: %w", s.location, s.explain(err))
	}
	return nil
}

// unitExists is Create's refusal of a server database that holds a unit
// already; it matches ErrExists.
type unitExists struct{ location string }

func (e unitExists) Error() string        { return e.location + " already holds a polypledger unit" }
func (e unitExists) Is(target error) bool { return target == ErrExists }

// createSchema makes the schema in a database holding no tables and runs
// fill, all in one transaction that commits only when both succeed; the
// store is bound to it meanwhile. A database that holds a polypledger
// schema already gives ErrExists.
func (s *Store) createSchema(ctx context.Context, stopAt int, fill func(*Store) error) (err error) {
	tx, err := s.db.begin(ctx, nil)
	if err != nil {
		return err
	}
	defer func() {
		s.db.bound = nil
		if r := recover(); r != nil {
			tx.rollback()
			panic(r)
		}
		if err != nil {
			tx.rollback()
		}
	}()
	// A unit already there is found without waiting for the write lock;
	// one being made by another program is found once it is made.
	for _, locked := range []bool{false, true} {
		if locked {
			if err := s.be.lockWrites(ctx, tx); err != nil {
				return err
			}
		}
		v, err := s.be.vet(ctx, tx)
		if err != nil {
			return err
		}
		if v > 0 {
			return ErrExists
		}
	}
	s.db.bound = tx
	if err := s.migrate(ctx, 0, stopAt); err != nil {
		return err
	}
	if fill != nil {
		if err := fill(s); err != nil {
			return err
		}
	}
	s.db.bound = nil
	if err := tx.commit(); err != nil {
		return commitError{err}
	}
	return nil
}

// Describe names a database location for messages and screens the way
// Store.Location does, without opening it: a file's path as given, or
// "database NAME on server HOST:PORT" for a server URL — never the URL
// itself, which may hold a password.
func Describe(location string) string {
	if !IsServerURL(location) {
		return location
	}
	cfg, err := pgx.ParseConfig(location)
	if err != nil {
		return "a database on a server (its URL cannot be read)"
	}
	return fmt.Sprintf("database %s on %s", cfg.Database, serverName(cfg))
}

// serverName names the server for messages: host and port, or the local
// socket folder.
func serverName(cfg *pgx.ConnConfig) string {
	if strings.HasPrefix(cfg.Host, "/") {
		return "the server on this computer (socket folder " + cfg.Host + ")"
	}
	return "server " + net.JoinHostPort(cfg.Host, strconv.Itoa(int(cfg.Port)))
}

// urlProblem says what is wrong with a URL pgx refused, without its
// password.
func urlProblem(err error, rawURL string) string {
	msg := err.Error()
	if i := strings.Index(msg, "`: "); i >= 0 {
		msg = msg[i+3:]
	}
	if u, perr := url.Parse(rawURL); perr == nil && u.User != nil {
		if pw, ok := u.User.Password(); ok && pw != "" {
			msg = strings.ReplaceAll(msg, pw, "xxxxx")
		}
	}
	return msg
}

// connectError turns a failed connection into one sentence naming the
// server, the database or the role, and what to do — never the password.
func (b *pgBackend) connectError(err error) error {
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch pe.Code {
		case "28P01":
			if b.cfg.Password == "" {
				return fmt.Errorf("%s asks for the password of role %s and none was found: keep it in your password file (~/.pgpass, mode 0600), not in the URL", capital(b.server), b.role)
			}
			return fmt.Errorf("%s refused the password of role %s: check the password kept for it in your password file (~/.pgpass, or the file PGPASSFILE names)", capital(b.server), b.role)
		case "28000":
			return fmt.Errorf("%s does not let role %s connect to database %s from this computer (no such role, or not allowed here): ask the unit's IT person", capital(b.server), b.role, b.database)
		case "3D000":
			return fmt.Errorf("%s has no database %s: check the name, or ask the unit's IT person to create it (README, \"Setting up a unit server\")", capital(b.server), b.database)
		case "53300":
			return fmt.Errorf("%s has no connection free (too many clients): try again in a moment", b.server)
		case "57P03":
			return fmt.Errorf("%s is starting up or shutting down: try again in a moment", capital(b.server))
		}
		return fmt.Errorf("%s refused the connection of role %s to database %s: %s", capital(b.server), b.role, b.database, pe.Message)
	}
	var ua x509.UnknownAuthorityError
	var he x509.HostnameError
	var ci x509.CertificateInvalidError
	switch {
	case errors.As(err, &ua), errors.As(err, &ci):
		return fmt.Errorf("the certificate of %s could not be verified (%s): install the unit's root certificate as ~/.postgresql/root.crt, or name it with sslrootcert= in the URL", b.server, certProblem(err))
	case errors.As(err, &he):
		return fmt.Errorf("the certificate of %s is not made out to that host name: use the name the certificate carries in the URL", b.server)
	case strings.Contains(err.Error(), "server refused TLS connection"):
		return fmt.Errorf("%s does not offer encrypted (TLS) connections, which the URL's sslmode asks for: ask the unit's IT person to turn TLS on", capital(b.server))
	case strings.Contains(err.Error(), "password") && b.cfg.Password == "":
		return fmt.Errorf("%s asks for the password of role %s and none was found: keep it in your password file (~/.pgpass, mode 0600), not in the URL", capital(b.server), b.role)
	}
	if reason := netReason(err); reason != "" {
		return fmt.Errorf("cannot reach %s (%s): check that the server is running and that the address is right", b.server, reason)
	}
	return fmt.Errorf("cannot connect to database %s on %s as role %s", b.database, b.server, b.role)
}

func capital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func certProblem(err error) string {
	var ci x509.CertificateInvalidError
	if errors.As(err, &ci) && ci.Reason == x509.Expired {
		return "it has expired"
	}
	return "it is not signed by a certificate this computer trusts"
}

// netReason says why a network connection failed, or "" when err is not
// a network failure.
func netReason(err error) string {
	var dns *net.DNSError
	var errno syscall.Errno
	var ne net.Error
	switch {
	case errors.As(err, &dns):
		return "no such host"
	case errors.Is(err, context.DeadlineExceeded):
		return "no answer in time"
	case errors.As(err, &errno):
		switch errno {
		case syscall.ECONNREFUSED:
			return "connection refused: nothing listens there"
		case syscall.ENOENT:
			return "no server socket there"
		case syscall.EHOSTUNREACH, syscall.ENETUNREACH:
			return "the host cannot be reached from here"
		case syscall.ECONNRESET, syscall.EPIPE:
			return "the server closed the connection"
		}
		return errno.Error()
	case errors.As(err, &ne) && ne.Timeout():
		return "no answer in time"
	case errors.As(err, &ne):
		return "network error"
	}
	return ""
}

// deniedSentence says that the store's role may only read.
func deniedSentence(s *Store) string {
	if b, ok := s.be.(*pgBackend); ok {
		return fmt.Sprintf("you are connected to %s as role %s, which may only read this unit's database", s.location, b.role)
	}
	return "this database may only be read"
}

// lostReason says in a few words why the connection to the server ended.
func lostReason(err error) string {
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch pe.Code {
		case "57P01":
			return "the server was shut down, or an administrator ended the connection"
		case "57P02":
			return "the server restarted after a failure"
		case "57P03":
			return "the server is starting up or shutting down"
		}
	}
	if r := netReason(err); r != "" {
		return r
	}
	return "the server stopped answering"
}

func (*pgBackend) numbered() bool { return true }

// version reads the schema version from the polypledger table (0 when
// there is none).
func (*pgBackend) version(ctx context.Context, q querier) (int, error) {
	var ours bool
	if err := q.QueryRowContext(ctx, "SELECT EXISTS (SELECT 1 FROM pg_catalog.pg_tables WHERE schemaname = current_schema() AND tablename = 'polypledger')").Scan(&ours); err != nil || !ours {
		return 0, err
	}
	var v int
	err := q.QueryRowContext(ctx, "SELECT schema_version FROM polypledger").Scan(&v)
	return v, err
}

// vet refuses a database holding tables but no polypledger schema. Both
// are read from one snapshot of the catalog, so that a unit another
// program is making at that moment is seen whole or not at all.
func (b *pgBackend) vet(ctx context.Context, q querier) (int, error) {
	var ours bool
	var tables int
	err := q.QueryRowContext(ctx, "SELECT count(*) FILTER (WHERE tablename = 'polypledger') > 0, count(*) FROM pg_catalog.pg_tables WHERE schemaname = current_schema()").Scan(&ours, &tables)
	if err != nil {
		return 0, err
	}
	if !ours {
		if tables > 0 {
			return 0, fmt.Errorf("it holds %d %s of another program, not a polypledger unit; it was left untouched", tables, plural(tables, "table", "tables"))
		}
		return 0, nil
	}
	return b.version(ctx, q)
}

func (*pgBackend) setVersion(ctx context.Context, tx *txn, v int) error {
	_, err := tx.ExecContext(ctx, "UPDATE polypledger SET schema_version = ?", v)
	return err
}

// steps are PostgreSQL's own statements of each migration step.
func (*pgBackend) steps() map[int]string {
	return map[int]string{
		1: `
-- The mark of a polypledger database, with its schema version.
CREATE TABLE polypledger (
    schema_version integer NOT NULL,
    only_row       boolean PRIMARY KEY DEFAULT true CHECK (only_row)
);
INSERT INTO polypledger (schema_version) VALUES (0);

-- Text compares byte by byte, as in SQLite, whatever the database's
-- collation: ids sort the same on both backends.
DO $$
DECLARE c record;
BEGIN
    FOR c IN SELECT table_name, column_name FROM information_schema.columns
             WHERE table_schema = current_schema() AND data_type = 'text'
               AND table_name IN ('settings', 'roster', 'procedures', 'lesions', 'change_log')
    LOOP
        EXECUTE format('ALTER TABLE %I ALTER COLUMN %I TYPE text COLLATE "C"', c.table_name, c.column_name);
    END LOOP;
END $$;

-- Doses in double precision (REAL is single precision here).
ALTER TABLE procedures
    ALTER COLUMN midazolam_mg TYPE double precision,
    ALTER COLUMN fentanyl_ug TYPE double precision,
    ALTER COLUMN pethidine_mg TYPE double precision;

-- The change log numbers its own entries (SQLite's INTEGER PRIMARY KEY).
ALTER TABLE change_log ALTER COLUMN id TYPE bigint;
ALTER TABLE change_log ALTER COLUMN id ADD GENERATED BY DEFAULT AS IDENTITY;

-- The order procedures were stored in (SQLite's rowid): the full read and
-- the case list follow it.
ALTER TABLE procedures ADD COLUMN rowid bigint GENERATED ALWAYS AS IDENTITY;
CREATE UNIQUE INDEX procedures_by_rowid ON procedures (rowid);

-- Each lesion carries its procedure's place in that order, so that the
-- full read takes lesions in order from an index instead of joining and
-- sorting the two largest tables (SQLite walks the join in rowid order).
ALTER TABLE lesions ADD COLUMN procedure_rowid bigint;
CREATE FUNCTION lesions_in_stored_order() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    SELECT rowid INTO NEW.procedure_rowid FROM procedures WHERE id = NEW.procedure_id;
    RETURN NEW;
END $$;
CREATE TRIGGER lesions_in_stored_order BEFORE INSERT OR UPDATE OF procedure_id ON lesions
    FOR EACH ROW EXECUTE FUNCTION lesions_in_stored_order();
CREATE INDEX lesions_by_procedure_rowid ON lesions (procedure_rowid, lesion_no);
`,
		2: `
CREATE FUNCTION change_log_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'the change log is append-only';
END $$;

CREATE TRIGGER change_log_no_update BEFORE UPDATE ON change_log
    FOR EACH ROW EXECUTE FUNCTION change_log_append_only();
CREATE TRIGGER change_log_no_delete BEFORE DELETE ON change_log
    FOR EACH ROW EXECUTE FUNCTION change_log_append_only();
CREATE TRIGGER change_log_no_truncate BEFORE TRUNCATE ON change_log
    FOR EACH STATEMENT EXECUTE FUNCTION change_log_append_only();
`,
		3: `
-- The case list sorts a value not recorded before every value, as SQLite
-- does; these indexes keep NULL first so that they serve that order both
-- ways.
DROP INDEX procedures_by_age;
DROP INDEX procedures_by_indication;
DROP INDEX procedures_by_extent;
CREATE INDEX procedures_by_age ON procedures (age NULLS FIRST, id);
CREATE INDEX procedures_by_indication ON procedures (indication NULLS FIRST, id);
CREATE INDEX procedures_by_extent ON procedures (extent NULLS FIRST, id);
`,
	}
}

// lockWrites takes the unit's write lock for the transaction, waiting up
// to the busy timeout (lock_timeout) for another writer to finish.
func (*pgBackend) lockWrites(ctx context.Context, tx *txn) error {
	_, err := tx.ExecContext(ctx, "SELECT pg_advisory_xact_lock(?)", int64(writeLockKey))
	return err
}

// prepareWrite has nothing to do: the server keeps its files sound itself.
func (*pgBackend) prepareWrite(context.Context, *Store, int) error { return nil }

// integrity finds rows whose references are missing, constraints not in
// force and guards turned off — what a server database could show after
// someone worked on it by hand.
func (*pgBackend) integrity(ctx context.Context, s *Store) ([]string, error) {
	var out []string
	for _, c := range []struct{ sql, format string }{
		{"SELECT l.procedure_id || '#' || l.lesion_no FROM lesions l WHERE NOT EXISTS (SELECT 1 FROM procedures p WHERE p.id = l.procedure_id) ORDER BY 1 LIMIT 100",
			"foreign key: lesion %s points to a missing procedure"},
		{"SELECT p.id FROM procedures p WHERE NOT EXISTS (SELECT 1 FROM roster r WHERE r.id = p.operator_id) OR (p.trainee_id IS NOT NULL AND NOT EXISTS (SELECT 1 FROM roster r WHERE r.id = p.trainee_id)) ORDER BY 1 LIMIT 100",
			"foreign key: procedure %s points to a missing roster entry"},
		{"SELECT conrelid::regclass::text || ' ' || conname FROM pg_catalog.pg_constraint WHERE conrelid IN ('roster'::regclass, 'procedures'::regclass, 'lesions'::regclass) AND NOT convalidated ORDER BY 1",
			"constraint %s is not in force (NOT VALID)"},
		{"SELECT t || ' on ' || r FROM (VALUES ('procedures', 'procedures_operator_id_fkey'), ('procedures', 'procedures_trainee_id_fkey'), ('lesions', 'lesions_procedure_id_fkey')) AS want (r, t) WHERE NOT EXISTS (SELECT 1 FROM pg_catalog.pg_constraint c WHERE c.conrelid = want.r::regclass AND c.conname = want.t) ORDER BY 1",
			"constraint %s is missing"},
	} {
		rows, err := s.db.QueryContext(ctx, c.sql)
		if err != nil {
			return nil, err
		}
		for rows.Next() {
			var v string
			if err := rows.Scan(&v); err != nil {
				rows.Close()
				return nil, err
			}
			out = append(out, fmt.Sprintf(c.format, v))
		}
		rows.Close()
		if err := rows.Err(); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// guarded reports whether the three change-log triggers are there and
// enabled.
func (*pgBackend) guarded(ctx context.Context, q querier) (bool, error) {
	var n int
	err := q.QueryRowContext(ctx, "SELECT count(*) FROM pg_catalog.pg_trigger WHERE tgrelid = 'change_log'::regclass AND NOT tgisinternal AND tgname LIKE 'change_log_no_%' AND tgenabled <> 'D'").Scan(&n)
	return n == 3, err
}

// streamCases reads procedures and lesions with COPY … TO STDOUT on two
// connections whose read transactions share one exported snapshot, so
// that both streams see exactly the same state.
func (*pgBackend) streamCases(ctx context.Context, s *Store, f CaseFilter) (procs, lesions rowSource, done func(), err error) {
	if s.db.bound != nil {
		return rowSource{}, rowSource{}, nil, errors.New("a full read cannot run inside the transaction that creates the database")
	}
	opt := &sql.TxOptions{Isolation: sql.LevelRepeatableRead, ReadOnly: true}
	a, err := s.db.begin(ctx, opt)
	if err != nil {
		return rowSource{}, rowSource{}, nil, err
	}
	var snap string
	if err := a.QueryRowContext(ctx, "SELECT pg_export_snapshot()").Scan(&snap); err != nil {
		a.rollback()
		return rowSource{}, rowSource{}, nil, err
	}
	b, err := s.db.begin(ctx, opt)
	if err != nil {
		a.rollback()
		return rowSource{}, rowSource{}, nil, err
	}
	if _, err := b.ExecContext(ctx, "SET TRANSACTION SNAPSHOT "+quoteLiteral(snap)); err != nil {
		a.rollback()
		b.rollback()
		return rowSource{}, rowSource{}, nil, err
	}
	if f, err = widestDates(ctx, a, f); err != nil {
		a.rollback()
		b.rollback()
		return rowSource{}, rowSource{}, nil, err
	}
	where, args := f.where("p.")
	where = inlineArgs(where, args)
	procSQL := "SELECT " + prefixed("p.", columnNames(procedureColumns)) + " FROM procedures p" + where + " ORDER BY p.rowid"
	// A lesion without its procedure (only a hand-made one can be: see
	// Check) has no place in the order, and is left out as SQLite's join
	// leaves it out.
	lesionSQL := "SELECT " + prefixed("l.", columnNames(lesionStoredColumns)) + " FROM lesions l WHERE l.procedure_rowid IS NOT NULL"
	if where != "" {
		lesionSQL += " AND l.procedure_rowid IN (SELECT p.rowid FROM procedures p" + where + ")"
	}
	lesionSQL += " ORDER BY l.procedure_rowid, l.lesion_no"
	done = func() {
		a.rollback()
		b.rollback()
	}
	return copyRows(ctx, a, procSQL), copyRows(ctx, b, lesionSQL), done, nil
}

// widestDates drops from a filter of dates alone the ends that select
// nothing less than every procedure, so that a read of the whole logbook
// takes lesions straight from their index.
func widestDates(ctx context.Context, tx *txn, f CaseFilter) (CaseFilter, error) {
	if f.OperatorID != "" || f.TraineeID != "" || f.From.IsZero() && f.To.IsZero() {
		return f, nil
	}
	var first, last sql.NullString
	if err := tx.QueryRowContext(ctx, "SELECT min(performed_on), max(performed_on) FROM procedures").Scan(&first, &last); err != nil {
		return f, err
	}
	if !first.Valid {
		return f, nil
	}
	if !f.From.IsZero() && logbook.FormatDate(f.From) <= first.String {
		f.From = time.Time{}
	}
	if !f.To.IsZero() && logbook.FormatDate(f.To) >= last.String {
		f.To = time.Time{}
	}
	return f, nil
}

// prefixed returns the columns, each behind alias, joined by commas.
func prefixed(alias string, columns []string) string {
	out := make([]string, len(columns))
	for i, c := range columns {
		out[i] = alias + c
	}
	return strings.Join(out, ", ")
}

// quoteLiteral quotes text as an SQL string literal (standard conforming
// strings: only the quote is doubled).
func quoteLiteral(s string) string {
	return "'" + strings.ReplaceAll(strings.ReplaceAll(s, "\x00", ""), "'", "''") + "'"
}

// inlineArgs puts text arguments in place of "?" placeholders, for COPY,
// which takes none.
func inlineArgs(query string, args []any) string {
	var b strings.Builder
	i := 0
	for _, c := range []byte(query) {
		if c == '?' && i < len(args) {
			b.WriteString(quoteLiteral(fmt.Sprint(args[i])))
			i++
			continue
		}
		b.WriteByte(c)
	}
	return b.String()
}

// copyRows runs COPY (query) TO STDOUT in tx and yields each row.
func copyRows(ctx context.Context, tx *txn, query string) rowSource {
	return rowSource{sep: '\t', copyText: true, each: func(yield func([]byte) error) error {
		return tx.conn.Raw(func(dc any) error {
			c, ok := dc.(*stdlib.Conn)
			if !ok {
				return fmt.Errorf("unexpected driver connection %T", dc)
			}
			w := &copyReader{yield: yield}
			_, err := c.Conn().PgConn().CopyTo(ctx, w, "COPY ("+query+") TO STDOUT")
			if w.err != nil {
				return w.err
			}
			if err == nil && len(w.pending) > 0 {
				err = errors.New("COPY ended in the middle of a row")
			}
			return err
		})
	}}
}

// copyReader takes the text of COPY … TO STDOUT as the server sends it and
// yields each row without its line end.
type copyReader struct {
	yield   func([]byte) error
	pending []byte // an unfinished row
	err     error
}

func (r *copyReader) Write(p []byte) (int, error) {
	n := len(p)
	for len(p) > 0 {
		i := bytes.IndexByte(p, '\n')
		if i < 0 {
			r.pending = append(r.pending, p...)
			break
		}
		line := p[:i]
		if len(r.pending) > 0 {
			r.pending = append(r.pending, line...)
			line = r.pending
		}
		p = p[i+1:]
		if err := r.yield(line); err != nil {
			r.err = err
			return 0, err
		}
		r.pending = r.pending[:0]
	}
	return n, nil
}

// copyWriter is the bulk writer on a server: rows are encoded in COPY's
// text format and sent with COPY … FROM STDIN on the transaction's
// connection when flushed.
type copyWriter struct {
	tx   *txn
	stmt string
	buf  []byte
}

func (*pgBackend) bulk(_ context.Context, tx *txn, table string, columns []string) (bulkWriter, error) {
	return &copyWriter{tx: tx, stmt: "COPY " + table + " (" + strings.Join(columns, ", ") + ") FROM STDIN"}, nil
}

// recordsetUpdater is the bulk updater on a server: the rows gathered are
// sent as one JSON array, a parameter of one UPDATE when flushed — one
// round trip for a batch of an import. jsonb_populate_recordset reads the
// array as rows of the table's own type, so each value takes its column's
// type (a parameter alone in a VALUES list would be read as text).
type recordsetUpdater struct {
	tx      *txn
	stmt    string
	columns []string // set, then key: the names of a row's values
	rows    []map[string]any
}

func (*pgBackend) bulkUpdate(_ context.Context, tx *txn, table string, set, key []string) (bulkWriter, error) {
	sets := make([]string, len(set))
	for i, c := range set {
		sets[i] = c + " = v." + c
	}
	match := make([]string, len(key))
	for i, c := range key {
		match[i] = "t." + c + " = v." + c
	}
	return &recordsetUpdater{
		tx: tx,
		stmt: "UPDATE " + table + " AS t SET " + strings.Join(sets, ", ") +
			" FROM jsonb_populate_recordset(NULL::" + table + ", ?::jsonb) AS v WHERE " + strings.Join(match, " AND "),
		columns: append(slices.Clone(set), key...),
	}, nil
}

// maxUpdateRows bounds the rows of one UPDATE.
const maxUpdateRows = importBatch

func (w *recordsetUpdater) write(ctx context.Context, values []any) error {
	row := make(map[string]any, len(w.columns))
	for i, c := range w.columns {
		row[c] = values[i]
	}
	w.rows = append(w.rows, row)
	if len(w.rows) == maxUpdateRows {
		return w.flush(ctx)
	}
	return nil
}

func (w *recordsetUpdater) flush(ctx context.Context) error {
	if len(w.rows) == 0 {
		return nil
	}
	rows, err := json.Marshal(w.rows)
	clear(w.rows)
	w.rows = w.rows[:0]
	if err != nil {
		return err
	}
	_, err = w.tx.ExecContext(ctx, w.stmt, string(rows))
	return err
}

func (w *recordsetUpdater) close() error { return nil }

// planEach runs a query as an unnamed statement, planned for its values.
// A statement the driver has prepared is planned once for any values after
// a few runs; an import's check of hundreds of ids at once would keep the
// plan made while its tables were small (a scan comparing each row with
// every id) as they grow within its transaction.
func (*pgBackend) planEach() []any { return []any{pgx.QueryExecModeExec} }

// listSample reads the whole sample in one recursive statement: each step
// an index range from the key before, without a round trip.
func (*pgBackend) listSample(seed, step string, every int) string {
	return "WITH RECURSIVE s(k, id, n) AS (SELECT f.*, 0 FROM (" + seed + ") f UNION ALL SELECT x.k, x.id, s.n + 1 FROM s, LATERAL (" +
		step + " OFFSET " + strconv.Itoa(every-1) + " LIMIT 1) x(k, id)) SELECT k, id, n FROM s ORDER BY n"
}

func (w *copyWriter) write(_ context.Context, values []any) error {
	for i, v := range values {
		if i > 0 {
			w.buf = append(w.buf, '\t')
		}
		w.buf = appendCopyValue(w.buf, v)
	}
	w.buf = append(w.buf, '\n')
	return nil
}

func (w *copyWriter) flush(ctx context.Context) error {
	if len(w.buf) == 0 {
		return nil
	}
	err := w.tx.conn.Raw(func(dc any) error {
		c, ok := dc.(*stdlib.Conn)
		if !ok {
			return fmt.Errorf("unexpected driver connection %T", dc)
		}
		_, err := c.Conn().PgConn().CopyFrom(ctx, bytes.NewReader(w.buf), w.stmt)
		return err
	})
	w.buf = w.buf[:0]
	return err
}

func (w *copyWriter) close() error { return nil }

// appendCopyValue appends one value in COPY's text format.
func appendCopyValue(b []byte, v any) []byte {
	var s string
	switch v := v.(type) {
	case nil:
		return append(b, `\N`...)
	case string:
		s = v
	case int:
		return strconv.AppendInt(b, int64(v), 10)
	case int64:
		return strconv.AppendInt(b, v, 10)
	case float64:
		return strconv.AppendFloat(b, v, 'g', -1, 64)
	default:
		s = fmt.Sprint(v)
	}
	for i := 0; i < len(s); i++ {
		switch c := s[i]; c {
		case '\\':
			b = append(b, '\\', '\\')
		case '\t':
			b = append(b, '\\', 't')
		case '\n':
			b = append(b, '\\', 'n')
		case '\r':
			b = append(b, '\\', 'r')
		default:
			b = append(b, c)
		}
	}
	return b
}

// classify reads the server's error codes (SQLSTATE) and the ways a
// connection ends.
func (*pgBackend) classify(err error) failure {
	if errors.Is(err, errReadOnlyStore) {
		return failReadOnlyTx
	}
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch {
		case pe.Code == "55P03": // lock_not_available: lock_timeout passed
			return failBusy
		case pe.Code == "53100": // disk_full
			return failFull
		case pe.Code == "42501": // insufficient_privilege
			return failDenied
		case pe.Code == "25006": // read_only_sql_transaction
			return failReadOnlyTx
		case pe.Code == "XX001", pe.Code == "XX002": // data_corrupted, index_corrupted
			return failCorrupt
		case pe.Code == "40001", pe.Code == "40P01": // serialization_failure, deadlock_detected
			return failConflict
		case strings.HasPrefix(pe.Code, "57P"), strings.HasPrefix(pe.Code, "08"):
			return failLost
		}
		return failOther
	}
	var ce *pgconn.ConnectError
	switch {
	case errors.As(err, &ce),
		errors.Is(err, driver.ErrBadConn), errors.Is(err, sql.ErrConnDone),
		errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, net.ErrClosed),
		netReason(err) != "" && !errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, context.Canceled),
		strings.Contains(err.Error(), "conn closed"):
		return failLost
	case errors.Is(err, sql.ErrTxDone):
		// The transaction's connection died under it.
		return failLost
	}
	return failOther
}

func (*pgBackend) close(*Store) {}
