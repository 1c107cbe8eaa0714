package store

// Tests of what a careless user or a hostile file can do to a database,
// each through the real program where processes are involved: programs
// racing to create one database, a damaged database offered to writers and
// to backup, another program's database with its write-ahead log, an empty
// file, a backup of an older database, writers killed half-way, a file
// that never ends, and a unit key others can read.

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"

	"polypledger/internal/safefile"
)

// rawSQLLeak matches driver messages that must never reach a user.
var rawSQLLeak = regexp.MustCompile(`(?i)already exists \(1\)|SQL logic error|no such table|database is locked|sqlite`)

// noTemporaries fails if a temporary file of this program is left in dir.
func noTemporaries(t testing.TB, dir string) {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if safefile.IsTemp(e.Name()) {
			t.Errorf("temporary file %s left in %s", e.Name(), dir)
		}
	}
}

// TestProcessesCreatingOneDatabase starts several real processes at once,
// importing into one database that does not exist yet: three good files
// and one with a bad last row. Every good import must succeed and keep all
// its rows — the refused one must delete nothing — with no raw SQL message,
// and the database must pass check. Repeated over several rounds, so that
// the processes meet at different moments of creation.
func TestProcessesCreatingOneDatabase(t *testing.T) {
	sqliteOnly("a new file made whole under a temporary name; on a server, TestServerEightImportingProcesses races to create a unit")
	dir, home := processTest(t)
	const n = 1500
	good := map[string]string{}
	for i, prefix := range []string{"GA", "GB", "GC"} {
		good[prefix] = writeFile(t, dir, prefix+".csv", proceduresCSV(t, inventedCases(t, n, prefix, uint64(40+i))))
	}
	badCases := inventedCases(t, n, "BAD", 44)
	badCases[n-1].Age = 7 // refused: under 18
	bad := writeFile(t, dir, "bad.csv", proceduresCSV(t, badCases))
	cliBinary(t)
	env := []string{"POLYPLEDGER_BUSY_TIMEOUT=2m"}
	for round := range 6 {
		db := filepath.Join(dir, fmt.Sprintf("round%d", round), "unit.db")
		os.Mkdir(filepath.Dir(db), 0o700)
		files := map[string]string{"bad": bad}
		for k, v := range good {
			files[k] = v
		}
		results := importAtOnce(t, home, env, db, files)
		for name, r := range results {
			if rawSQLLeak.MatchString(r.stderr) {
				t.Errorf("round %d, %s: a raw driver message reached the user: %s", round, name, r.stderr)
			}
			if name == "bad" {
				if r.code != exitBadInput || !strings.Contains(r.stderr, fmt.Sprintf("bad.csv:%d: age: 7 is outside 18–110", n+1)) {
					t.Errorf("round %d: the bad file: exit %d, %s", round, r.code, r.stderr)
				}
				continue
			}
			if r.code != 0 {
				t.Errorf("round %d, %s: exit %d: %s", round, name, r.code, r.stderr)
			}
		}
		for prefix := range good {
			if got := countWithPrefix(t, db, prefix); got != n {
				t.Errorf("round %d: file %s: %d of %d procedures in the database", round, prefix, got, n)
			}
		}
		if got := countWithPrefix(t, db, "BAD"); got != 0 {
			t.Errorf("round %d: %d rows of the refused file were stored", round, got)
		}
		mustCheck(t, db)
		noTemporaries(t, filepath.Dir(db))
	}
}

// corruptRootPage overwrites the page header of the lesions table's
// root page, as a disk error would.
func corruptRootPage(t *testing.T, path string) {
	t.Helper()
	db := rawSQL(t, path)
	var root, pageSize int64
	if err := db.QueryRow("SELECT rootpage FROM sqlite_master WHERE name = 'lesions'").Scan(&root); err != nil {
		t.Fatal(err)
	}
	if err := db.QueryRow("PRAGMA page_size").Scan(&pageSize); err != nil {
		t.Fatal(err)
	}
	db.Close()
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.WriteAt(bytes.Repeat([]byte{0xA5}, 12), (root-1)*pageSize); err != nil {
		t.Fatal(err)
	}
}

// TestDamagedDatabaseRefusedByWriters damages a database's bytes: check
// says so, and import and backup refuse it — the import writes nothing, the
// backup makes no file — rather than write to it or copy it as sound.
func TestDamagedDatabaseRefusedByWriters(t *testing.T) {
	sqliteOnly("a damaged page of a file")
	dir, home := processTest(t)
	db := filepath.Join(dir, "unit.db")
	populatedDB(t, db, 600)
	corruptRootPage(t, db)
	hash := hashFile(t, db)
	csvPath := writeFile(t, home, "more.csv", proceduresCSV(t, inventedCases(t, 20, "M", 3)))
	out := filepath.Join(home, "backup.db")

	if r := runCLI(t, home, nil, "check", "--db", db); r.code != exitBadInput || !strings.Contains(r.stderr, "damaged") {
		t.Errorf("check of the damaged database: exit %d, %s", r.code, r.stderr)
	}
	r := runCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath)
	if r.code != exitBadInput || !strings.Contains(r.stderr, "damaged") || !strings.Contains(r.stderr, "nothing was written") {
		t.Errorf("import into the damaged database: exit %d, %s", r.code, r.stderr)
	}
	r = runCLI(t, home, nil, "backup", "--db", db, "--out", out)
	if r.code != exitBadInput || !strings.Contains(r.stderr, "damaged") || strings.Contains(r.stdout, "backed up") {
		t.Errorf("backup of the damaged database: exit %d, %s%s", r.code, r.stdout, r.stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a backup of the damaged database was made")
	}
	if hashFile(t, db) != hash {
		t.Error("the damaged database was written to")
	}
	noTemporaries(t, home)
	noTemporaries(t, dir)
}

// foreignWALDatabase makes another program's database in write-ahead-log
// mode as that program leaves it when it stops without a checkpoint: the
// main file holds only the header, the table and its row are in the -wal
// file, and there is no -shm.
func foreignWALDatabase(t *testing.T, dir string) string {
	t.Helper()
	work := t.TempDir()
	src := filepath.Join(work, "notes.db")
	db := rawSQL(t, src)
	db.SetMaxOpenConns(1)
	for _, q := range []string{
		"PRAGMA journal_mode=WAL", "PRAGMA wal_autocheckpoint=0",
		"CREATE TABLE notes (id INTEGER PRIMARY KEY, body TEXT)", "INSERT INTO notes (body) VALUES ('shopping')",
	} {
		if _, err := db.Exec(q); err != nil {
			t.Fatal(err)
		}
	}
	// Copy while the program still has it open: its log is not folded in.
	path := filepath.Join(dir, "notes.db")
	copyFile(t, src, path)
	copyFile(t, src+"-wal", path+"-wal")
	db.Close()
	if fi, err := os.Stat(path + "-wal"); err != nil || fi.Size() == 0 {
		t.Fatalf("the foreign database has no write-ahead log to protect: %v", err)
	}
	return path
}

// TestForeignDatabasesLeftUntouched offers every command files that are
// not polypledger databases — another program's database whose data is
// still in its write-ahead log, an empty file, another program's plain
// database — and checks that each is refused, saying what it is, with the
// files and their folder byte for byte as they were: no checkpoint, no
// -wal or -shm made, nothing migrated, no backup made.
func TestForeignDatabasesLeftUntouched(t *testing.T) {
	sqliteOnly("another program's SQLite files and their logs")
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	home := t.TempDir()
	csvPath := writeFile(t, home, "p.csv", proceduresCSV(t, inventedCases(t, 5, "I", 2)))
	for _, tc := range []struct {
		name string
		make func(t *testing.T, dir string) string
		want string
	}{
		{"another program's database with its log", foreignWALDatabase, "another program"},
		{"an empty file", func(t *testing.T, dir string) string {
			return writeFile(t, dir, "unit.db", nil)
		}, "empty file (0 bytes)"},
		{"another program's database", func(t *testing.T, dir string) string {
			path := filepath.Join(dir, "notes.db")
			db := rawSQL(t, path)
			defer db.Close()
			if _, err := db.Exec("CREATE TABLE notes (id INTEGER PRIMARY KEY, body TEXT)"); err != nil {
				t.Fatal(err)
			}
			return path
		}, "another program"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			path := tc.make(t, dir)
			listing := dirListing(t, dir)
			hashes := map[string]string{}
			for _, suf := range []string{"", "-wal", "-shm"} {
				hashes[suf] = hashFile(t, path+suf)
			}
			out := filepath.Join(home, "out-"+strings.ReplaceAll(tc.name, " ", "-"))
			for _, args := range [][]string{
				{"import", "--db", path, "--kind", "procedures", csvPath},
				{"check", "--db", path},
				{"metrics", "--db", path, "--from", "2020-01-01", "--to", "2025-12-31"},
				{"interval", "--db", path},
				{"export", "--db", path, "--kind", "procedures", "--out", out + ".csv"},
				{"report", "--db", path, "--from", "2020-01-01", "--to", "2025-12-31", "--out", out + ".pdf"},
				{"backup", "--db", path, "--out", out + ".db"},
			} {
				r := runCLI(t, home, nil, args...)
				if r.code != exitBadInput || !strings.Contains(r.stderr, tc.want) {
					t.Errorf("%s: exit %d, %q; want exit %d saying %q", args[0], r.code, r.stderr, exitBadInput, tc.want)
				}
			}
			for suf, h := range hashes {
				if got := hashFile(t, path+suf); got != h {
					t.Errorf("%s%s changed (now %s)", filepath.Base(path), suf, got)
				}
			}
			if l := dirListing(t, dir); l != listing {
				t.Errorf("the folder changed:\nbefore:\n%safter:\n%s", listing, l)
			}
			for _, ext := range []string{".csv", ".pdf", ".db"} {
				if _, err := os.Stat(out + ext); err == nil {
					t.Errorf("an output %s was made from it", filepath.Base(out+ext))
				}
			}
		})
	}
}

// TestBackupChangesNothingInItsSource backs up a database of an older
// schema: the backup is made (with that schema, sound), and the source is
// byte for byte as it was — not migrated. While the backup runs, no file in
// its folder is ever readable by others, even with a permissive umask.
func TestBackupChangesNothingInItsSource(t *testing.T) {
	sqliteOnly("a file's bytes and SQLite's online copy")
	dir, home := processTest(t)
	src := filepath.Join(dir, "old.db")
	old := openTest(t, src, Options{migrateTo: 1})
	cases := inventedCases(t, 20000, "B", 9)
	for _, f := range []struct {
		kind Kind
		data []byte
	}{{Procedures, proceduresCSV(t, cases)}, {Lesions, lesionsCSV(t, cases)}} {
		if _, err := old.Import(context.Background(), f.kind, string(f.kind)+".csv", bytes.NewReader(f.data), ImportOptions{}); err != nil {
			t.Fatal(err)
		}
	}
	if err := old.Close(); err != nil {
		t.Fatal(err)
	}
	hash := hashFile(t, src)

	out := filepath.Join(dir, "backups", "old-backup.db")
	os.Mkdir(filepath.Dir(out), 0o755)
	defer syscall.Umask(syscall.Umask(0o022))
	cmd := cliCommand(t, home, nil, "backup", "--db", src, "--out", out)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	seen := 0
	for running := true; running; {
		select {
		case err := <-done:
			running = false
			if err != nil {
				t.Fatalf("backup failed: %v: %s", err, stderr.String())
			}
		default:
		}
		entries, _ := os.ReadDir(filepath.Dir(out))
		for _, e := range entries {
			fi, err := e.Info()
			if err != nil {
				continue
			}
			seen++
			if fi.Mode().Perm()&0o077 != 0 {
				t.Fatalf("%s exists with mode %v while the backup runs: others can read it", e.Name(), fi.Mode().Perm())
			}
		}
		time.Sleep(time.Millisecond)
	}
	if seen == 0 {
		t.Log("no file was seen while the backup ran (it was too quick to watch)")
	}
	if hashFile(t, src) != hash {
		t.Error("the backup changed its source")
	}
	for _, p := range []string{src, out} {
		s := openTest(t, p, Options{ReadOnly: true, KeepSchema: true})
		v, err := s.Version(context.Background())
		s.Close()
		if err != nil || v != 1 {
			t.Errorf("%s: schema %d, %v; want 1, as the source was", filepath.Base(p), v, err)
		}
	}
	b := openTest(t, out, Options{ReadOnly: true, KeepSchema: true})
	defer b.Close()
	if got := storeCounts(t, b); got.procedures != len(cases) {
		t.Errorf("the backup holds %d procedures, want %d", got.procedures, len(cases))
	}
	noTemporaries(t, filepath.Dir(out))
}

// TestKilledWritersLeaveNoTemporaryBehind kills export and backup while
// they write their file: the target is not there (no half file), and the
// next run of the same command removes what the killed one left and
// succeeds.
func TestKilledWritersLeaveNoTemporaryBehind(t *testing.T) {
	sqliteOnly("temporary files beside a database file")
	dir, home := processTest(t)
	db := filepath.Join(dir, "unit.db")
	populatedDB(t, db, 30000)
	for _, tc := range []struct {
		name string
		args func(out string) []string
	}{
		{"export", func(out string) []string { return []string{"export", "--db", db, "--kind", "procedures", "--out", out} }},
		{"backup", func(out string) []string { return []string{"backup", "--db", db, "--out", out} }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			outDir := filepath.Join(dir, tc.name)
			os.Mkdir(outDir, 0o700)
			out := filepath.Join(outDir, "out.file")
			killed := false
			for try := 0; try < 20 && !killed; try++ {
				cmd := cliCommand(t, home, nil, tc.args(out)...)
				if err := cmd.Start(); err != nil {
					t.Fatal(err)
				}
				done := make(chan struct{})
				go func() { cmd.Wait(); close(done) }()
				// Kill as soon as the temporary file is there.
			watch:
				for {
					select {
					case <-done:
						break watch
					default:
					}
					if tempIn(outDir) != "" {
						cmd.Process.Signal(syscall.SIGKILL)
						<-done
						break
					}
					time.Sleep(200 * time.Microsecond)
				}
				ws, _ := cmd.ProcessState.Sys().(syscall.WaitStatus)
				killed = ws.Signaled() && tempIn(outDir) != ""
				os.Remove(out) // a run that finished first: try again
			}
			if !killed {
				t.Skip("the command always finished before it could be killed")
			}
			if _, err := os.Stat(out); err == nil {
				t.Fatal("a killed writer left the target file")
			}
			left := tempIn(outDir)
			if r := runCLI(t, home, nil, tc.args(out)...); r.code != 0 {
				t.Fatalf("the next run: exit %d: %s", r.code, r.stderr)
			}
			if _, err := os.Stat(filepath.Join(outDir, left)); err == nil {
				t.Errorf("the next run left the killed run's temporary %s", left)
			}
			noTemporaries(t, outDir)
		})
	}
}

// tempIn returns the name of a file in dir other than the output itself
// (out.file): a temporary one; or "".
func tempIn(dir string) string {
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if e.Name() != "out.file" {
			return e.Name()
		}
	}
	return ""
}

// TestImportOfAnEndlessFile imports /dev/zero, a file that never ends:
// the command stops with a message naming the line, exit 1, in bounded
// memory, and creates no database.
func TestImportOfAnEndlessFile(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	if _, err := os.Stat("/dev/zero"); err != nil {
		t.Skip("no /dev/zero here")
	}
	dir := t.TempDir()
	home := filepath.Join(dir, "home")
	os.Mkdir(home, 0o700)
	db := filepath.Join(dir, "unit.db")
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute) // a guard against a hang, not a speed target
	defer cancel()
	cmd := cliCommand(t, home, nil, "import", "--db", db, "--kind", "procedures", "/dev/zero")
	cmd = exec.CommandContext(ctx, cmd.Path, cmd.Args[1:]...)
	cmd.Env, cmd.Dir = cliCommand(t, home, nil).Env, home
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	err := cmd.Run()
	if ctx.Err() != nil {
		t.Fatal("import /dev/zero did not stop")
	}
	if code := cmd.ProcessState.ExitCode(); code != exitBadInput {
		t.Errorf("exit %d (%v), want %d; stderr: %.500s", code, err, exitBadInput, stderr.String())
	}
	if want := "/dev/zero:1: row: is longer than 65536 bytes"; !strings.HasPrefix(stderr.String(), want) {
		t.Errorf("stderr %.300q, want it to start %q", stderr.String(), want)
	}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok && ru.Maxrss > 300<<10 { // kilobytes on Linux
		t.Errorf("the import used %d MiB of memory", ru.Maxrss>>10)
	}
	if _, err := os.Stat(db); err == nil {
		t.Error("a refused import into a new database left a database")
	}
}

// TestNoHospitalNumberInMessages imports files whose values are hospital
// numbers where they do not belong — a file without its header row, and a
// header with a hospital number among its names — through the command:
// the refusal names lines and columns but shows no hospital number.
func TestNoHospitalNumberInMessages(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary; skipped with -short")
	}
	dir := filepath.Join(t.TempDir(), "home")
	os.Mkdir(dir, 0o700)
	db := filepath.Join(dir, "unit.db")
	data := proceduresCSV(t, inventedCases(t, 5, "H", 3))
	headerless := data[bytes.IndexByte(data, '\n')+1:]
	shifted := bytes.Replace(data, []byte("\n"), []byte(",RXH7654321\n"), 1)
	for name, file := range map[string][]byte{"headerless.csv": headerless, "shifted.csv": shifted} {
		if hospitalNumberPattern.Find(file) == nil {
			t.Fatalf("%s holds no hospital number: the test would prove nothing", name)
		}
		r := runCLI(t, dir, nil, "import", "--db", db, "--kind", "procedures", writeFile(t, dir, name, file))
		if r.code != exitBadInput || !strings.Contains(r.stderr, name+":1: ") {
			t.Errorf("%s: exit %d, %s", name, r.code, r.stderr)
		}
		noHospitalNumbers(t, "the refusal of "+name, []byte(r.stdout+r.stderr))
	}
}

// TestKeyOpenToOthersIsWarnedAbout gives the unit key a folder and a file
// that other users can open: the command still works and warns, saying how
// to make them owner-only.
func TestKeyOpenToOthersIsWarnedAbout(t *testing.T) {
	dir, home := processTest(t)
	csvPath := writeFile(t, dir, "p.csv", proceduresCSV(t, inventedCases(t, 5, "K", 3)))
	db := filepath.Join(dir, "unit.db")
	r := runCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath)
	if r.code != 0 || strings.Contains(r.stderr, "warning") {
		t.Fatalf("import with an owner-only key: exit %d, %s", r.code, r.stderr)
	}
	os.Chmod(home, 0o777)
	os.Chmod(filepath.Join(home, KeyFileName), 0o644)
	defer os.Chmod(home, 0o700)
	csvPath = writeFile(t, dir, "q.csv", proceduresCSV(t, inventedCases(t, 5, "L", 4)))
	r = runCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath)
	if r.code != 0 {
		t.Fatalf("import with an open key: exit %d, %s", r.code, r.stderr)
	}
	for _, want := range []string{"folder " + home + " (mode 0777)", "chmod 700 '" + home + "'", "(mode 0644)", "chmod 600 '" + filepath.Join(home, KeyFileName) + "'"} {
		if !strings.Contains(r.stderr, want) {
			t.Errorf("the warning does not say %q:\n%s", want, r.stderr)
		}
	}
}
