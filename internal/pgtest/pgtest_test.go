package pgtest

import (
	"context"
	"errors"
	"os"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"
)

// TestClusterLifecycle starts a private cluster, creates a database, writes
// and reads a row, stops the server like a crash and starts it again, and
// checks that the committed row survived and the folder is gone after Stop.
func TestClusterLifecycle(t *testing.T) {
	c, err := Start(Options{Settings: []string{"log_statement = 'all'"}})
	if errors.Is(err, ErrNoServer) {
		t.Skip(err)
	}
	if err != nil {
		t.Fatal(err)
	}
	dir := c.Dir
	defer func() {
		c.Stop()
		if _, err := os.Stat(dir); !os.IsNotExist(err) {
			t.Errorf("cluster folder %s left behind after Stop", dir)
		}
	}()
	ctx := context.Background()
	db, err := c.NewDatabase(ctx, "Life Cycle!")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(db, "life_cycle_") {
		t.Errorf("database name %q does not start with the sanitised prefix", db)
	}
	if err := c.Exec(ctx, db, "CREATE TABLE t (v text)", "INSERT INTO t VALUES ('kept-row-marker')"); err != nil {
		t.Fatal(err)
	}
	if err := c.StopServer(); err != nil {
		t.Fatal(err)
	}
	if _, err := pgx.Connect(ctx, c.URL(db, "")); err == nil {
		t.Fatal("connected to a stopped server")
	}
	if err := c.StartServer(); err != nil {
		t.Fatal(err)
	}
	conn, err := pgx.Connect(ctx, c.URL(db, ""))
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	var v string
	if err := conn.QueryRow(ctx, "SELECT v FROM t").Scan(&v); err != nil || v != "kept-row-marker" {
		t.Fatalf("after restart: %q, %v", v, err)
	}
	log, err := os.ReadFile(c.LogFile())
	if err != nil || !strings.Contains(string(log), "kept-row-marker") {
		t.Errorf("log_statement = 'all' did not reach the server log (%v)", err)
	}
	if os.Geteuid() == 0 && c.Superuser == "root" {
		t.Error("the server runs as root")
	}
}
