package store

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// countWithPrefix counts the procedures whose id starts with prefix.
func countWithPrefix(t testing.TB, path, prefix string) int {
	t.Helper()
	s, err := Open(context.Background(), path, Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var n int
	if err := s.db.QueryRowContext(context.Background(), "SELECT count(*) FROM procedures WHERE id LIKE ? || '%'", prefix).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

// TestTwoImportingProcesses runs two imports of different files into one
// database at the same moment, as two real processes. Writers queue on the
// lock (transactions take it at BEGIN), so both succeed and every row of
// both files is there, with no corruption.
func TestTwoImportingProcesses(t *testing.T) {
	sqliteOnly("on a server, TestServerEightImportingProcesses runs eight")
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir := t.TempDir()
	home := filepath.Join(dir, "home")
	os.Mkdir(home, 0o700)
	const n = 4000
	files := map[string]string{}
	for _, prefix := range []string{"A", "B"} {
		cases := inventedCases(t, n, prefix, uint64(len(prefix)+int(prefix[0])))
		files[prefix] = writeFile(t, dir, prefix+".csv", proceduresCSV(t, cases))
	}
	db := filepath.Join(dir, "unit.db")
	openTest(t, db, Options{}).Close()
	cliBinary(t) // build before the clock matters

	// A generous lock wait, so that a slow shared machine does not turn
	// queueing into a refusal; the refusal is tested below.
	env := []string{"POLYPLEDGER_BUSY_TIMEOUT=2m"}
	results := importAtOnce(t, home, env, db, files)
	for prefix, r := range results {
		if r.code != 0 {
			t.Errorf("import of %s failed (exit %d): %s", prefix, r.code, r.stderr)
		}
		if got := countWithPrefix(t, db, prefix); got != n {
			t.Errorf("file %s: %d of %d procedures stored", prefix, got, n)
		}
	}
	if got := countsOf(t, db).procedures; got != 2*n {
		t.Errorf("%d procedures in all, want %d", got, 2*n)
	}
	mustCheck(t, db)
}

// importAtOnce starts one import process per file (named by its key) into
// db at the same moment and returns how each ended.
func importAtOnce(t *testing.T, home string, env []string, db string, files map[string]string) map[string]cliRun {
	t.Helper()
	var wg sync.WaitGroup
	var mu sync.Mutex
	results := map[string]cliRun{}
	for name, file := range files {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r := runCLI(t, home, env, "import", "--db", db, "--kind", "procedures", file)
			mu.Lock()
			results[name] = r
			mu.Unlock()
		}()
	}
	wg.Wait()
	return results
}

// processTest skips a test that runs the binary under -short, and returns
// a fresh folder and, inside it, a configuration folder (owner-only) for
// the program.
func processTest(t *testing.T) (dir, home string) {
	t.Helper()
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir = t.TempDir()
	home = filepath.Join(dir, "home")
	if err := os.Mkdir(home, 0o700); err != nil {
		t.Fatal(err)
	}
	return dir, home
}

// holdWriteLock opens a second connection to path and holds a write
// transaction open until the returned function is called.
func holdWriteLock(t *testing.T, path string) (release func()) {
	t.Helper()
	holder := openTest(t, path, Options{})
	ctx := context.Background()
	tx, err := holder.db.begin(ctx, nil) // BEGIN IMMEDIATE on SQLite: takes the write lock now
	if err != nil {
		t.Fatal(err)
	}
	if err := holder.be.lockWrites(ctx, tx); err != nil { // the write lock on a server
		t.Fatal(err)
	}
	if _, err := tx.ExecContext(ctx, "INSERT INTO settings (key, value) VALUES ('lock-holder', 'x')"); err != nil {
		t.Fatal(err)
	}
	var once sync.Once
	release = func() {
		once.Do(func() {
			tx.rollback()
			holder.Close()
		})
	}
	t.Cleanup(release)
	return release
}

// TestBusyWriterStoresNothing holds a write transaction open on one
// connection while another store, with a short busy timeout, imports: the
// import must give up after about its timeout with ErrBusy's message and
// store nothing; once the lock is released the same import succeeds.
func TestBusyWriterStoresNothing(t *testing.T) {
	EachBackend(t, testBusyWriterStoresNothing)
}

func testBusyWriterStoresNothing(t *testing.T, b TestBackend) {
	db := b.NewDB(t)
	openTest(t, db, Options{}).Close()
	cases := inventedCases(t, 50, "W", 11)
	data := proceduresCSV(t, cases)
	before := countsOf(t, db)

	release := holdWriteLock(t, db)
	const timeout = 300 * time.Millisecond
	s := openTest(t, db, Options{BusyTimeout: timeout})
	defer s.Close()
	start := time.Now()
	_, err := s.Import(context.Background(), Procedures, "waiting.csv", bytes.NewReader(data), ImportOptions{})
	waited := time.Since(start)
	if !errors.Is(err, ErrBusy) {
		t.Fatalf("import while another holds the lock: got %v, want ErrBusy", err)
	}
	for _, want := range []string{"busy", "nothing was stored"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("message %q does not say %q", err, want)
		}
	}
	if waited < timeout {
		t.Errorf("gave up after %s, before its busy timeout of %s", waited, timeout)
	}
	if waited > 10*timeout {
		t.Errorf("gave up after %s: its busy timeout of %s was not honoured", waited, timeout)
	}
	release()
	if got := countsOf(t, db); got != before {
		t.Fatalf("a refused import changed the database: %+v, was %+v", got, before)
	}
	res, err := s.Import(context.Background(), Procedures, "waiting.csv", bytes.NewReader(data), ImportOptions{})
	if err != nil {
		t.Fatalf("the same import after the lock was released: %v", err)
	}
	if res.Inserted != len(cases) {
		t.Fatalf("inserted %d, want %d", res.Inserted, len(cases))
	}
	mustCheck(t, db)
}

// TestBusyCommandSaysSo is the same through the command line: a process
// whose busy timeout (POLYPLEDGER_BUSY_TIMEOUT) passes while a write
// transaction is held exits 1 with ErrBusy's message and stores nothing.
func TestBusyCommandSaysSo(t *testing.T) {
	EachBackend(t, testBusyCommandSaysSo)
}

func testBusyCommandSaysSo(t *testing.T, b TestBackend) {
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir := t.TempDir()
	home := filepath.Join(dir, "home")
	os.Mkdir(home, 0o700)
	db := b.NewDB(t)
	openTest(t, db, Options{}).Close()
	csvPath := writeFile(t, dir, "p.csv", proceduresCSV(t, inventedCases(t, 50, "C", 5)))
	before := countsOf(t, db)
	dbHash := b.Fingerprint(t, db)

	release := holdWriteLock(t, db)
	r := runCLI(t, home, []string{"POLYPLEDGER_BUSY_TIMEOUT=250ms"}, "import", "--db", db, "--kind", "procedures", csvPath)
	release()
	if r.code != exitBadInput {
		t.Fatalf("exit %d, want %d; stderr: %s", r.code, exitBadInput, r.stderr)
	}
	if !strings.Contains(r.stderr, ErrBusy.Error()) || !strings.Contains(r.stderr, "nothing was stored") {
		t.Errorf("stderr does not carry ErrBusy's message: %q", r.stderr)
	}
	if got := countsOf(t, db); got != before {
		t.Fatalf("a refused import changed the database: %+v, was %+v", got, before)
	}
	if h := b.Fingerprint(t, db); h != dbHash {
		t.Errorf("the database changed although nothing was stored")
	}

	// A malformed timeout is refused plainly rather than ignored.
	r = runCLI(t, home, []string{"POLYPLEDGER_BUSY_TIMEOUT=soon"}, "import", "--db", db, "--kind", "procedures", csvPath)
	if r.code == 0 || !strings.Contains(r.stderr, "POLYPLEDGER_BUSY_TIMEOUT") {
		t.Errorf("a malformed POLYPLEDGER_BUSY_TIMEOUT was not refused: exit %d, %q", r.code, r.stderr)
	}
}

// exitBadInput is the command's exit code for bad input or a refused
// operation (architecture.md, "Command line contract").
const exitBadInput = 1
