package store

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// crashRows is the size of the file the crash tests import: large enough
// that an import takes a second or more on the CI machine, with a
// progress line (one per ProgressEvery rows) to kill at.
const crashRows = ProgressEvery + ProgressEvery/5

// copyFile copies src to dst (mode 0600).
func copyFile(t testing.TB, src, dst string) {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, b, 0o600); err != nil {
		t.Fatal(err)
	}
}

// killPoint says when to kill an import: after a delay from its start, or
// a delay after it has printed the progress line for a number of rows.
type killPoint struct {
	name      string
	after     time.Duration
	afterRows int
}

// TestImportKilledLeavesNothingOrEverything imports one procedures file
// with the real binary and kills it with SIGKILL at many points: before it
// opens the database, during parsing, at each progress line, around the
// commit and during the final checkpoint. Each time the database must hold
// none or all of the file's rows, with the change log to match, and pass
// both the in-process Check and the `check` command.
func TestImportKilledLeavesNothingOrEverything(t *testing.T) {
	EachBackend(t, testImportKilledLeavesNothingOrEverything)
}

func testImportKilledLeavesNothingOrEverything(t *testing.T, b TestBackend) {
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir := t.TempDir()
	home := filepath.Join(dir, "home")
	if err := os.Mkdir(home, 0o700); err != nil {
		t.Fatal(err)
	}
	cases := inventedCases(t, crashRows, "K", 7)
	csvPath := writeFile(t, dir, "procedures.csv", proceduresCSV(t, cases))

	// A migrated, empty database for every run: a copy of one file, or a
	// new database on the server.
	pristine := filepath.Join(dir, "pristine.db")
	openTest(t, pristine, Options{}).Close()
	fresh := func(name string) string {
		if b.Server() {
			db := b.NewDB(t)
			openTest(t, db, Options{}).Close()
			return db
		}
		db := filepath.Join(dir, name)
		copyFile(t, pristine, db)
		return db
	}

	// One uninterrupted import: the reference for "everything", and how long
	// an import takes here, so that the kill points scale with the machine.
	full := fresh("full.db")
	start := time.Now()
	r := runCLI(t, home, nil, "import", "--db", full, "--kind", "procedures", csvPath)
	took := time.Since(start)
	if r.code != 0 {
		t.Fatalf("uninterrupted import failed (exit %d): %s", r.code, r.stderr)
	}
	all := countsOf(t, full)
	if all.procedures != crashRows {
		t.Fatalf("uninterrupted import stored %d procedures, want %d", all.procedures, crashRows)
	}
	t.Logf("an uninterrupted import of %d rows took %s", crashRows, took)

	points := []killPoint{
		{name: "50ms", after: 50 * time.Millisecond},
		{name: "150ms", after: 150 * time.Millisecond},
		{name: "400ms", after: 400 * time.Millisecond},
	}
	// From the progress line at ProgressEvery rows the last rows are read,
	// then the commit and the checkpoint follow: kill at steps through them.
	for _, d := range []time.Duration{0, 100 * time.Millisecond, 250 * time.Millisecond, 500 * time.Millisecond, time.Second} {
		points = append(points, killPoint{name: fmt.Sprintf("%s after %d rows", d, ProgressEvery), afterRows: ProgressEvery, after: d})
	}
	for _, pct := range []int{50, 90, 110} {
		points = append(points, killPoint{name: fmt.Sprintf("%d%% of the import time", pct), after: took * time.Duration(pct) / 100})
	}

	var interrupted, completed int
	for i, kp := range points {
		t.Run(kp.name, func(t *testing.T) {
			db := fresh(fmt.Sprintf("run%02d.db", i))
			killed := importAndKill(t, home, db, csvPath, kp)
			got := countsOf(t, db)
			switch got.procedures {
			case 0:
				if got.changes != 0 || got.lesions != 0 {
					t.Fatalf("no procedures but %d change-log rows and %d lesions: a partial import", got.changes, got.lesions)
				}
				interrupted++
			case crashRows:
				if got != all {
					t.Fatalf("all procedures but counts %+v, want %+v as after an uninterrupted import", got, all)
				}
				completed++
			default:
				t.Fatalf("killed import (%s) left %d of %d procedures: a partial import", kp.name, got.procedures, crashRows)
			}
			mustCheck(t, db)
			if c := runCLI(t, home, nil, "check", "--db", db); c.code != 0 {
				t.Fatalf("check after the kill failed (exit %d): %s%s", c.code, c.stdout, c.stderr)
			}
			t.Logf("killed=%v, procedures after: %d", killed, got.procedures)
		})
	}
	// The test is only worth its name if some kills landed mid-import.
	if interrupted == 0 {
		t.Errorf("no kill interrupted an import (%d completed); the file is too small for this machine", completed)
	}
}

// importAndKill starts an import of csvPath into db and kills it with
// SIGKILL at the kill point. It reports whether the process was killed (as
// opposed to having finished first).
func importAndKill(t *testing.T, home, db, csvPath string, kp killPoint) bool {
	t.Helper()
	cmd := cliCommand(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath)
	stderr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stdout = io.Discard
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	progress := make(chan int, 8)
	go func() {
		defer close(progress)
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
			var rows int
			line := sc.Text()
			if i := strings.Index(line, ": "); i >= 0 {
				if _, err := fmt.Sscanf(line[i+2:], "%d rows read", &rows); err == nil {
					progress <- rows
				}
			}
		}
	}()
	if kp.afterRows > 0 {
		deadline := time.After(60 * time.Second)
	wait:
		for {
			select {
			case rows, ok := <-progress:
				if !ok || rows >= kp.afterRows {
					break wait
				}
			case <-deadline:
				t.Errorf("no progress line for %d rows within a minute", kp.afterRows)
				break wait
			}
		}
	}
	time.Sleep(kp.after)
	cmd.Process.Signal(syscall.SIGKILL) // may have finished already: then this fails harmlessly
	for range progress {
	}
	cmd.Wait()
	ws, _ := cmd.ProcessState.Sys().(syscall.WaitStatus)
	return ws.Signaled() && ws.Signal() == syscall.SIGKILL
}

// TestImportKilledIntoNewDatabase kills an import into a database file that
// did not exist yet, early (while it is being created and migrated) and
// late. A new database is built whole before it appears, so what is left
// is either no file or the database with every row, which passes Check —
// never an empty or half-made file; and the next import into the same
// place removes what the killed one left under its temporary name.
func TestImportKilledIntoNewDatabase(t *testing.T) {
	sqliteOnly("a new file made whole under a temporary name")
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir := t.TempDir()
	home := filepath.Join(dir, "home")
	os.Mkdir(home, 0o700)
	cases := inventedCases(t, ProgressEvery, "N", 3)
	csvPath := writeFile(t, dir, "procedures.csv", proceduresCSV(t, cases))
	var absent, whole int
	var points []killPoint
	for _, d := range []time.Duration{20 * time.Millisecond, 60 * time.Millisecond, 120 * time.Millisecond, 250 * time.Millisecond, 500 * time.Millisecond} {
		points = append(points, killPoint{name: d.String(), after: d})
	}
	// After the last rows are read: the commit, the checkpoint and the
	// database being put in place.
	for _, d := range []time.Duration{0, 100 * time.Millisecond, 300 * time.Millisecond, 3 * time.Second} {
		points = append(points, killPoint{name: fmt.Sprintf("%s after the last rows", d), afterRows: ProgressEvery, after: d})
	}
	for i, kp := range points {
		d := kp.name
		place := filepath.Join(dir, fmt.Sprintf("new%d", i))
		os.Mkdir(place, 0o700)
		db := filepath.Join(place, "unit.db")
		importAndKill(t, home, db, csvPath, kp)
		if _, err := os.Stat(db); os.IsNotExist(err) {
			absent++
			// The next import cleans up and creates the database.
			if r := runCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath); r.code != 0 {
				t.Fatalf("import after a kill at %s: exit %d: %s", d, r.code, r.stderr)
			}
			noTemporaries(t, place)
		} else {
			whole++
		}
		if got := countsOf(t, db); got.procedures != len(cases) {
			t.Fatalf("after a kill at %s: %d of %d procedures", d, got.procedures, len(cases))
		}
		mustCheck(t, db)
	}
	t.Logf("%d kills left no database, %d a whole one", absent, whole)
}
