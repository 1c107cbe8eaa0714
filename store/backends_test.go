package store

// The table of backends the store's tests run on: every test that is not
// about SQLite files runs once per backend, as subtests "sqlite" and
// "postgres", through EachBackend. The PostgreSQL cluster is private to
// this test binary (internal/pgtest: initdb and pg_ctl on a Unix socket in
// a temporary folder), started on first use and stopped by TestMain; each
// test gets a fresh database. Where no server binaries are installed the
// postgres subtests skip, saying why — unless POLYPLEDGER_TEST_POSTGRES is
// "require" (CI sets it), when they fail instead.

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"polypledger/internal/pgtest"
)

func TestMain(m *testing.M) {
	code := m.Run()
	if pg.cluster != nil {
		pg.cluster.Stop()
	}
	os.Exit(code)
}

// pg is the test binary's PostgreSQL cluster, started on first use.
var pg struct {
	once    sync.Once
	cluster *pgtest.Cluster
	err     error
}

// testCluster returns the running cluster, or skips (fails, when required)
// where none can be started.
func testCluster(t testing.TB) *pgtest.Cluster {
	t.Helper()
	pg.once.Do(func() {
		pg.cluster, pg.err = pgtest.Start(pgtest.Options{})
	})
	if pg.err != nil {
		if errors.Is(pg.err, pgtest.ErrNoServer) && os.Getenv("POLYPLEDGER_TEST_POSTGRES") != "require" {
			t.Skip(pg.err)
		}
		t.Fatalf("starting the test PostgreSQL cluster: %v", pg.err)
	}
	return pg.cluster
}

// TestBackend is one kind of database the store's tests run on.
type TestBackend struct {
	// Name is "sqlite" or "postgres", the subtest's name.
	Name string
}

// Backends are the store's two backends.
var Backends = []TestBackend{{Name: "sqlite"}, {Name: "postgres"}}

// Server reports whether the backend is the PostgreSQL server.
func (b TestBackend) Server() bool { return b.Name == "postgres" }

// NewDB returns the location of a new database that does not exist yet
// (a file in a fresh temporary folder) or holds nothing (a fresh database
// on the test cluster, which the test's cleanup leaves for the cluster's
// removal).
func (b TestBackend) NewDB(t testing.TB) string {
	t.Helper()
	if !b.Server() {
		return filepath.Join(t.TempDir(), "unit.db")
	}
	c := testCluster(t)
	name, err := c.NewDatabase(context.Background(), t.Name())
	if err != nil {
		t.Fatal(err)
	}
	return c.URL(name, "")
}

// Exec runs statements on the database at loc with a bare connection that
// enforces no foreign key and fires no trigger, for planting what the
// program itself would refuse.
func (b TestBackend) Exec(t testing.TB, loc string, stmts ...string) {
	t.Helper()
	ctx := context.Background()
	if !b.Server() {
		db, err := sql.Open(driverName, "file:"+loc)
		if err != nil {
			t.Fatal(err)
		}
		defer db.Close()
		for _, q := range stmts {
			if _, err := db.ExecContext(ctx, q); err != nil {
				t.Fatalf("%s: %v", q, err)
			}
		}
		return
	}
	name := serverDatabase(t, loc)
	c := testCluster(t)
	all := append([]string{"SET session_replication_role = replica"}, stmts...)
	if err := c.Exec(ctx, name, all...); err != nil {
		t.Fatal(err)
	}
}

// serverDatabase returns the database name in a test cluster URL.
func serverDatabase(t testing.TB, loc string) string {
	t.Helper()
	rest, ok := strings.CutPrefix(loc, "postgres://")
	if !ok {
		t.Fatalf("%s is not a server URL", loc)
	}
	_, path, _ := strings.Cut(rest, "/")
	name, _, _ := strings.Cut(path, "?")
	return name
}

// EachBackend runs test once for each backend, as subtests named after
// them.
func EachBackend(t *testing.T, test func(t *testing.T, b TestBackend)) {
	t.Helper()
	for _, b := range Backends {
		t.Run(b.Name, func(t *testing.T) {
			if b.Server() {
				testCluster(t)
			}
			test(t, b)
		})
	}
}

// Fingerprint sums up everything the database at loc holds — a file's
// bytes; a server database's objects and every row of every table — so
// that a test can show it was left exactly as it was ("missing" for a file
// that does not exist).
func (b TestBackend) Fingerprint(t testing.TB, loc string) string {
	t.Helper()
	if !b.Server() {
		return hashFile(t, loc)
	}
	ctx := context.Background()
	db, err := sql.Open("pgx", loc)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var objects string
	if err := db.QueryRowContext(ctx, `SELECT coalesce(string_agg(c.relkind::text || ' ' || c.relname, ', ' ORDER BY c.relname), '')
		FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = current_schema()`).Scan(&objects); err != nil {
		t.Fatal(err)
	}
	rows, err := db.QueryContext(ctx, "SELECT tablename FROM pg_tables WHERE schemaname = current_schema() ORDER BY 1")
	if err != nil {
		t.Fatal(err)
	}
	var tables []string
	for rows.Next() {
		var name string
		rows.Scan(&name)
		tables = append(tables, name)
	}
	rows.Close()
	sum := objects
	for _, name := range tables {
		var h string
		q := fmt.Sprintf("SELECT coalesce(md5(string_agg(t::text, '|' ORDER BY t::text)), '') FROM %q t", name)
		if err := db.QueryRowContext(ctx, q).Scan(&h); err != nil {
			t.Fatal(err)
		}
		sum += "; " + name + " " + h
	}
	return sum
}

// Tables counts the tables in the database at loc (0 for a file that does
// not exist).
func (b TestBackend) Tables(t testing.TB, loc string) int {
	t.Helper()
	if !b.Server() {
		if _, err := os.Stat(loc); err != nil {
			return 0
		}
		db, err := sql.Open(driverName, "file:"+loc+"?mode=ro")
		if err != nil {
			t.Fatal(err)
		}
		defer db.Close()
		var n int
		if err := db.QueryRow("SELECT count(*) FROM sqlite_master WHERE type = 'table'").Scan(&n); err != nil {
			t.Fatal(err)
		}
		return n
	}
	db, err := sql.Open("pgx", loc)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var n int
	if err := db.QueryRow("SELECT count(*) FROM pg_tables WHERE schemaname = current_schema()").Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

// sqliteOnly documents, at the top of a test, why it runs on SQLite files
// only; it does nothing.
func sqliteOnly(string) {}
