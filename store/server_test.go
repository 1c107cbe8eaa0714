package store

// Tests of a unit on a PostgreSQL server that have no SQLite counterpart:
// several workstations' processes importing at once, the server stopped
// and connections killed in the middle of an import, connections that
// cannot be made (no server, a wrong password, no such database), the
// read-only audit role, and hospital numbers that must never reach the
// server. They run the real binary against the test binary's private
// cluster (or, where the server itself is stopped or must log every
// statement, a private cluster of their own).

import (
	"bufio"
	"bytes"
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"fmt"
	"math/big"
	"net"
	"net/url"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"polypledger/internal/pgtest"
	"polypledger/logbook"
)

// serverUnit makes a fresh database on cluster c holding an empty unit and
// returns its URL and name.
func serverUnit(t *testing.T, c *pgtest.Cluster) (loc, name string) {
	t.Helper()
	name, err := c.NewDatabase(context.Background(), t.Name())
	if err != nil {
		t.Fatal(err)
	}
	loc = c.URL(name, "")
	openTest(t, loc, Options{}).Close()
	return loc, name
}

// privateCluster starts a cluster of the test's own, stopped at its end.
func privateCluster(t *testing.T, opt pgtest.Options) *pgtest.Cluster {
	t.Helper()
	testCluster(t) // skips where no server can be started
	c, err := pgtest.Start(opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(c.Stop)
	return c
}

// TestServerEightImportingProcesses: eight processes import different
// files into one server database at the same moment — first into a
// database holding no unit yet, so that they also race to create it, then
// again into the unit they made. Writers queue, so every import succeeds
// and every row of every file is there; the change log holds one entry per
// row and names the workstation; check passes.
func TestServerEightImportingProcesses(t *testing.T) {
	dir, home := processTest(t)
	c := testCluster(t)
	name, err := c.NewDatabase(context.Background(), t.Name())
	if err != nil {
		t.Fatal(err)
	}
	db := c.URL(name, "")
	const n = 1500
	cliBinary(t)
	env := []string{"POLYPLEDGER_BUSY_TIMEOUT=3m"}
	total := 0
	for round, when := range []string{"into an empty database", "into the unit they made"} {
		files := map[string]string{}
		for i := range 8 {
			prefix := fmt.Sprintf("R%dW%d", round, i)
			files[prefix] = writeFile(t, dir, prefix+".csv", proceduresCSV(t, inventedCases(t, n, prefix, uint64(10*round+i+1))))
		}
		results := importAtOnce(t, home, env, db, files)
		for prefix, r := range results {
			if r.code != 0 {
				t.Errorf("%s: import of %s failed (exit %d): %s", when, prefix, r.code, r.stderr)
			}
			if got := countWithPrefix(t, db, prefix); got != n {
				t.Errorf("%s: file %s: %d of %d procedures stored", when, prefix, got, n)
			}
		}
		total += 8 * n
		got := countsOf(t, db)
		if got.procedures != total {
			t.Errorf("%s: %d procedures in all, want %d", when, got.procedures, total)
		}
		mustCheck(t, db)
	}
	s := openTest(t, db, Options{ReadOnly: true})
	defer s.Close()
	var entries, hosts int
	if err := s.db.QueryRowContext(context.Background(), "SELECT count(*), count(DISTINCT host) FROM change_log WHERE record LIKE 'procedure %'").Scan(&entries, &hosts); err != nil {
		t.Fatal(err)
	}
	if entries != total || hosts != 1 {
		t.Errorf("change log: %d procedure entries from %d workstations, want %d from this one", entries, hosts, total)
	}
	if h, _ := os.Hostname(); h != "" {
		log, _ := s.ChangeLog(context.Background(), 1)
		if len(log) != 1 || log[0].Host != h || log[0].User == "" {
			t.Errorf("newest change-log entry %+v does not name this workstation (%s) and its user", log, h)
		}
	}
}

// startCLI starts the binary and returns a channel of the lines it prints
// on standard error (closed when it exits), a function that kills it with
// SIGKILL, and the function that waits for its end (what it printed on
// standard error is in the cliRun; its code is -1 when it was killed).
func startCLI(t *testing.T, home string, env []string, args ...string) (lines <-chan string, kill func(), wait func() cliRun) {
	t.Helper()
	cmd := cliCommand(t, home, env, args...)
	stderr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stdout bytes.Buffer
	cmd.Stdout = &stdout
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	ch := make(chan string, 1024)
	var errText strings.Builder
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer close(ch)
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
			errText.WriteString(sc.Text() + "\n")
			select {
			case ch <- sc.Text():
			default: // nobody is listening any more
			}
		}
	}()
	kill = func() { cmd.Process.Signal(syscall.SIGKILL) }
	return ch, kill, func() cliRun {
		<-done
		cmd.Wait()
		return cliRun{stdout: stdout.String(), stderr: errText.String(), code: cmd.ProcessState.ExitCode()}
	}
}

// waitForLine waits until the process prints a line containing text.
func waitForLine(t *testing.T, lines <-chan string, text string) {
	t.Helper()
	deadline := time.After(2 * time.Minute)
	for {
		select {
		case l, ok := <-lines:
			if !ok {
				t.Fatalf("the process ended before it printed %q", text)
			}
			if strings.Contains(l, text) {
				return
			}
		case <-deadline:
			t.Fatalf("no line %q within two minutes", text)
		}
	}
}

// TestServerLostMidImport interrupts an import on the server half-way —
// by stopping the server (an immediate shutdown, like a crash or a power
// cut of the server), or by ending the import's connection from the server
// (pg_terminate_backend, as an administrator would). Nothing of that file
// is stored, the command exits 1 with one message saying that nothing was
// stored (no driver dump), and the database passes check once the server
// is back.
func TestServerLostMidImport(t *testing.T) {
	dir, home := processTest(t)
	rows := 5 * ProgressEvery
	csvPath := writeFile(t, dir, "big.csv", proceduresCSV(t, inventedCases(t, rows, "L", 17)))
	cliBinary(t)
	for _, how := range []string{"server stopped", "connection terminated"} {
		t.Run(how, func(t *testing.T) {
			c := privateCluster(t, pgtest.Options{})
			db, name := serverUnit(t, c)
			before := countsOf(t, db)
			lines, _, wait := startCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath)
			waitForLine(t, lines, fmt.Sprintf("%d rows read", ProgressEvery))
			switch how {
			case "server stopped":
				if err := c.StopServer(); err != nil {
					t.Fatal(err)
				}
			case "connection terminated":
				if err := c.Exec(context.Background(), "postgres",
					fmt.Sprintf("SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = '%s' AND pid <> pg_backend_pid()", name)); err != nil {
					t.Fatal(err)
				}
			}
			r := wait()
			if how == "server stopped" {
				if err := c.StartServer(); err != nil {
					t.Fatal(err)
				}
			}
			if r.code != exitBadInput {
				t.Fatalf("exit %d, want %d; stderr:\n%s", r.code, exitBadInput, r.stderr)
			}
			var said []string // beside the progress lines
			for _, l := range strings.Split(strings.TrimSpace(r.stderr), "\n") {
				if !strings.Contains(l, " rows read (") {
					said = append(said, l)
				}
			}
			msg := strings.Join(said, "\n")
			if len(said) != 1 || !strings.Contains(msg, "connection to the database server was lost") || !strings.Contains(msg, "nothing was stored") {
				t.Errorf("the message is not one line saying the connection was lost and nothing was stored:\n%s", msg)
			}
			for _, dump := range []string{"SQLSTATE", "pgconn", "failed to", "goroutine", "unexpected EOF"} {
				if strings.Contains(msg, dump) {
					t.Errorf("the message carries driver text %q:\n%s", dump, msg)
				}
			}
			if got := countsOf(t, db); got != before {
				t.Errorf("after the interrupted import: %+v, was %+v", got, before)
			}
			mustCheck(t, db)
		})
	}
}

// TestServerConnectionProblems: a server that cannot be reached, a
// password the server refuses, a password missing, a role or a database
// the server does not have — each is told in one sentence that names what
// is wrong, never the password and never the driver's own text; and a
// password kept in the password file (~/.pgpass) is used.
func TestServerConnectionProblems(t *testing.T) {
	dir, home := processTest(t)
	c := testCluster(t)
	ctx := context.Background()
	_, name := serverUnit(t, c)
	const password = "Corr3ct-horse-staple"
	if err := c.Exec(ctx, "postgres",
		"DO $$ BEGIN IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = 'pw_user') THEN CREATE ROLE pw_user LOGIN; END IF; END $$",
		"ALTER ROLE pw_user PASSWORD '"+password+"'",
		"GRANT CONNECT ON DATABASE "+name+" TO pw_user"); err != nil {
		t.Fatal(err)
	}
	if err := c.Exec(ctx, name, "GRANT SELECT ON ALL TABLES IN SCHEMA public TO pw_user"); err != nil {
		t.Fatal(err)
	}
	requirePassword(t, c, "pw_user")
	withPassword := func(pw string) string {
		return strings.Replace(c.URL(name, "pw_user"), "pw_user@", "pw_user:"+pw+"@", 1)
	}
	emptyDir := t.TempDir()
	cases := []struct {
		name, url string
		want      string
	}{
		{"no server there", "postgres://" + c.Superuser + "@/" + name + "?sslmode=disable&host=" + url.QueryEscape(emptyDir), "cannot reach the server on this computer"},
		{"nothing listening", "postgres://nobody:" + password + "@127.0.0.1:1/unit?sslmode=disable&connect_timeout=5", "cannot reach server 127.0.0.1:1 (connection refused"},
		{"wrong password", withPassword("wrong-" + password), "refused the password of role pw_user"},
		{"no password", c.URL(name, "pw_user"), "asks for the password of role pw_user and none was found"},
		{"no such role", c.URL(name, "nobody_here"), "does not let role nobody_here connect"},
		{"no such database", c.URL("no_such_unit", ""), "has no database no_such_unit"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			for _, cmd := range [][]string{
				{"check", "--db", tc.url},
				{"import", "--db", tc.url, "--kind", "procedures", writeFile(t, dir, "p.csv", proceduresCSV(t, inventedCases(t, 3, "X", 1)))},
			} {
				r := runCLI(t, home, nil, cmd...)
				msg := strings.TrimSpace(r.stderr)
				if r.code != exitBadInput || !strings.Contains(msg, tc.want) {
					t.Errorf("%s: exit %d, %q; want exit 1 saying %q", cmd[0], r.code, msg, tc.want)
				}
				if strings.Contains(msg, "\n") {
					t.Errorf("%s: more than one line:\n%s", cmd[0], msg)
				}
				for _, bad := range []string{password, "SQLSTATE", "failed to connect", "pgconn", "dial "} {
					if strings.Contains(msg, bad) {
						t.Errorf("%s: the message shows %q:\n%s", cmd[0], bad, msg)
					}
				}
			}
		})
	}
	// The right password from the password file: connects and reads.
	pgpass := filepath.Join(home, ".pgpass")
	if err := os.WriteFile(pgpass, []byte("*:*:*:pw_user:"+password+"\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	defer os.Remove(pgpass)
	if r := runCLI(t, home, nil, "check", "--db", c.URL(name, "pw_user")); r.code != 0 {
		t.Errorf("check with the password from ~/.pgpass: exit %d, %s", r.code, r.stderr)
	}
}

// requirePassword makes the cluster ask role for its password on the
// socket (every other role stays trusted) and reloads its configuration.
func requirePassword(t *testing.T, c *pgtest.Cluster, role string) {
	t.Helper()
	hba := filepath.Join(c.DataDir(), "pg_hba.conf")
	old, err := os.ReadFile(hba)
	if err != nil {
		t.Fatal(err)
	}
	line := "local all " + role + " scram-sha-256\n"
	if !bytes.Contains(old, []byte(line)) {
		if err := os.WriteFile(hba, append([]byte(line), old...), 0o600); err != nil {
			t.Fatal(err)
		}
	}
	if err := c.Exec(context.Background(), "postgres", "SELECT pg_reload_conf()"); err != nil {
		t.Fatal(err)
	}
	time.Sleep(200 * time.Millisecond) // the server rereads its files asynchronously
}

// Roles of a unit server as the README sets them up: the workstations'
// role owns the database and writes; the audit role may only read.
var (
	auditGrants = []string{
		"GRANT CONNECT ON DATABASE %[1]s TO %[3]s",
	}
	auditSchemaGrants = []string{
		"GRANT USAGE ON SCHEMA public TO %[3]s",
		"GRANT SELECT ON ALL TABLES IN SCHEMA public TO %[3]s",
		"ALTER DEFAULT PRIVILEGES FOR ROLE %[2]s IN SCHEMA public GRANT SELECT ON TABLES TO %[3]s",
	}
)

// TestServerReadOnlyAuditRole sets up the two roles of the README — a
// read-write role owning the unit's database and a read-only audit role —
// and runs every command as the audit role: metrics, report, interval,
// export, check and backup work; import, demo and init are refused with
// one sentence and store nothing, and so is a save in the app (a case,
// a result, the settings), whose store opens but says it cannot write.
func TestServerReadOnlyAuditRole(t *testing.T) {
	dir, home := processTest(t)
	c := testCluster(t)
	ctx := context.Background()
	name := strings.ToLower(strings.NewReplacer("/", "_", " ", "_").Replace(t.Name()))
	setup := []string{
		"DO $$ BEGIN IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = 'unit_rw') THEN CREATE ROLE unit_rw LOGIN; END IF; END $$",
		"DO $$ BEGIN IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = 'unit_audit') THEN CREATE ROLE unit_audit LOGIN; END IF; END $$",
		"CREATE DATABASE " + name + " OWNER unit_rw",
		"REVOKE ALL ON DATABASE " + name + " FROM PUBLIC",
		"GRANT CONNECT ON DATABASE " + name + " TO unit_rw",
	}
	for _, g := range auditGrants {
		setup = append(setup, fmt.Sprintf(g, name, "unit_rw", "unit_audit"))
	}
	if err := c.Exec(ctx, "postgres", setup...); err != nil {
		t.Fatal(err)
	}
	rw, audit := c.URL(name, "unit_rw"), c.URL(name, "unit_audit")
	// The workstations' role makes the unit, and the schema grants follow.
	if r := runCLI(t, home, nil, "init", "--db", rw); r.code != 0 {
		t.Fatalf("init as the read-write role: %s", r.stderr)
	}
	var grants []string
	for _, g := range auditSchemaGrants {
		grants = append(grants, fmt.Sprintf(g, name, "unit_rw", "unit_audit"))
	}
	if err := c.Exec(ctx, name, grants...); err != nil {
		t.Fatal(err)
	}
	cases := inventedCases(t, 300, "A", 5)
	pcsv := writeFile(t, dir, "p.csv", proceduresCSV(t, cases))
	lcsv := writeFile(t, dir, "l.csv", lesionsCSV(t, cases))
	for _, f := range []struct{ kind, path string }{{"procedures", pcsv}, {"lesions", lcsv}} {
		if r := runCLI(t, home, nil, "import", "--db", rw, "--kind", f.kind, f.path); r.code != 0 {
			t.Fatalf("import as the read-write role: %s", r.stderr)
		}
	}
	before := countsOf(t, rw)

	for _, cmd := range [][]string{
		{"metrics", "--db", audit, "--from", "2020-01-01", "--to", "2026-12-31", "--format", "json"},
		{"report", "--db", audit, "--from", "2020-01-01", "--to", "2026-12-31", "--out", filepath.Join(dir, "audit.pdf")},
		{"interval", "--db", audit, "--format", "json"},
		{"export", "--db", audit, "--kind", "procedures", "--out", filepath.Join(dir, "export.csv")},
		{"check", "--db", audit},
		{"backup", "--db", audit, "--out", filepath.Join(dir, "copy.db")},
	} {
		if r := runCLI(t, home, nil, cmd...); r.code != 0 {
			t.Errorf("%s as the audit role: exit %d, %s", cmd[0], r.code, r.stderr)
		}
	}
	more := writeFile(t, dir, "more.csv", proceduresCSV(t, inventedCases(t, 5, "Z", 6)))
	for _, cmd := range [][]string{
		{"import", "--db", audit, "--kind", "procedures", more},
		{"import", "--db", audit, "--kind", "procedures", "--update", pcsv},
		{"demo", "--db", audit, "--procedures", "10"},
		{"init", "--db", audit},
	} {
		r := runCLI(t, home, nil, cmd...)
		msg := strings.TrimSpace(r.stderr)
		if cmd[0] == "init" {
			// init only reports on a unit that is there, saying the role
			// may only read.
			if r.code != 0 || !strings.Contains(r.stdout, "as role unit_audit, which may only read") {
				t.Errorf("init as the audit role: exit %d, %q %q", r.code, r.stdout, msg)
			}
			continue
		}
		if r.code != exitBadInput || !strings.Contains(msg, "as role unit_audit, which may only read this unit's database") || strings.Contains(msg, "\n") {
			t.Errorf("%v as the audit role: exit %d, want one line saying the role may only read:\n%s", cmd[:3], r.code, msg)
		}
		if strings.Contains(msg, "SQLSTATE") || strings.Contains(msg, "permission denied") {
			t.Errorf("%s: driver text in %q", cmd[0], msg)
		}
	}
	// The app's saves, through a store opened for writing as the app does.
	s := openTest(t, audit, Options{})
	defer s.Close()
	if ok, why := s.Writable(); ok || !strings.Contains(why, "unit_audit") {
		t.Errorf("Writable() = %v, %q; want false naming the role", ok, why)
	}
	c0 := cases[0]
	c0.ID = "APP1"
	c0.Lesions = append([]logbook.Lesion(nil), c0.Lesions...)
	for i := range c0.Lesions {
		c0.Lesions[i].ProcedureID = "APP1"
	}
	for what, err := range map[string]error{
		"a new case":     s.SaveCase(ctx, c0, true),
		"settings":       s.SaveSettings(ctx, Settings{UnitName: "Changed", DiscardMinCases: 30}),
		"a roster entry": s.SaveRosterEntry(ctx, utRoster[0]),
		"a deletion":     s.DeleteCase(ctx, cases[1].ID),
	} {
		if err == nil || !strings.Contains(err.Error(), "which may only read") || !strings.Contains(err.Error(), "nothing was stored") {
			t.Errorf("saving %s as the audit role: %v", what, err)
		}
	}
	if _, err := s.Pseudonymise("RXH0000001"); err == nil {
		t.Error("the audit role pseudonymised a hospital number (which records the key's fingerprint on first use)")
	}
	if got := countsOf(t, rw); got != before {
		t.Errorf("the audit role changed the unit: %+v, was %+v", got, before)
	}
}

// TestServerNeverSeesHospitalNumbers imports hospital numbers through the
// command line and types one in as the app does, into a server that logs
// every statement with its parameters (log_statement = all), then stops
// the server and reads every file of its data folder and its log: no
// hospital number is anywhere, in any case of letters, while the
// pseudonyms made on the workstation are (which shows the search would
// find them).
func TestServerNeverSeesHospitalNumbers(t *testing.T) {
	dir, home := processTest(t)
	c := privateCluster(t, pgtest.Options{Settings: []string{"log_statement = 'all'", "log_min_duration_statement = 0"}})
	db, _ := serverUnit(t, c)
	cases := inventedCases(t, 400, "H", 23)
	csvPath := writeFile(t, dir, "p.csv", proceduresCSV(t, cases))
	if r := runCLI(t, home, nil, "import", "--db", db, "--kind", "procedures", csvPath); r.code != 0 {
		t.Fatalf("import: %s", r.stderr)
	}
	typed := "RXH7654321"
	s := openTest(t, db, Options{})
	c0 := cases[0]
	c0.ID = "TYPED1"
	c0.Lesions = append([]logbook.Lesion(nil), c0.Lesions...)
	for i := range c0.Lesions {
		c0.Lesions[i].ProcedureID = "TYPED1"
	}
	psn, err := s.Pseudonymise(typed)
	if err != nil {
		t.Fatal(err)
	}
	c0.PatientKey = psn
	if err := s.SaveCase(context.Background(), c0, true); err != nil {
		t.Fatal(err)
	}
	s.Close()
	if err := c.Exec(context.Background(), "postgres", "CHECKPOINT"); err != nil {
		t.Fatal(err)
	}
	if err := c.StopServer(); err != nil {
		t.Fatal(err)
	}
	defer c.StartServer()

	refs := []string{typed}
	for i := range cases {
		refs = append(refs, hospitalNumber(i))
	}
	var found []string
	var sawPseudonym bool
	var files int
	psnHex := strings.TrimPrefix(psn, "psn:")
	scan := func(path string) {
		b, err := os.ReadFile(path)
		if err != nil {
			return // sockets, files the server removed meanwhile
		}
		files++
		low := bytes.ToLower(b)
		for _, r := range refs {
			if bytes.Contains(low, []byte(strings.ToLower(r))) {
				found = append(found, fmt.Sprintf("%s in %s", r, path))
			}
		}
		if bytes.Contains(b, []byte(psnHex)) {
			sawPseudonym = true
		}
	}
	filepath.Walk(c.DataDir(), func(path string, fi os.FileInfo, err error) error {
		if err == nil && fi.Mode().IsRegular() {
			scan(path)
		}
		return nil
	})
	scan(c.LogFile())
	logText, _ := os.ReadFile(c.LogFile())
	if !bytes.Contains(logText, []byte("INSERT INTO")) && !bytes.Contains(logText, []byte("COPY ")) {
		t.Fatalf("the server log holds no statements: log_statement = all did not take")
	}
	if len(found) > 0 {
		t.Errorf("hospital numbers reached the server (%d):\n%s", len(found), strings.Join(found[:min(len(found), 10)], "\n"))
	}
	if !sawPseudonym {
		t.Errorf("the typed patient's pseudonym was not found in any of %d files: the search proves nothing", files)
	}
	t.Logf("searched %d files of the data folder and the log", files)
}

// TestServerDumpAndRestore follows the README's backup and restore: a
// unit dumped with pg_dump (custom format) and restored with pg_restore
// into a new database owned by the workstations' role passes check and
// holds the same unit — records, settings, roster and change log — with
// its guards in force, and takes new cases after the restore.
func TestServerDumpAndRestore(t *testing.T) {
	dir, _ := processTest(t)
	c := testCluster(t)
	ctx := context.Background()
	src := Backends[1].NewDB(t)
	moveFixture(t, src)
	want := contentsOf(t, src)
	dump := filepath.Join(dir, "unit.dump")
	run := func(name string, args ...string) {
		t.Helper()
		out, err := exec.Command(filepath.Join(c.Bin, name), args...).CombinedOutput()
		if err != nil {
			t.Fatalf("%s: %v\n%s", name, err, out)
		}
	}
	run("pg_dump", "--format=custom", "--file="+dump, "--dbname="+src)
	if err := c.Exec(ctx, "postgres",
		"DO $$ BEGIN IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = 'unit_rw') THEN CREATE ROLE unit_rw LOGIN; END IF; END $$",
		"CREATE DATABASE restored_unit OWNER unit_rw"); err != nil {
		t.Fatal(err)
	}
	restored := c.URL("restored_unit", "unit_rw")
	run("pg_restore", "--no-owner", "--role=unit_rw", "--dbname="+c.URL("restored_unit", ""), dump)
	mustCheck(t, restored)
	got := contentsOf(t, restored)
	if !reflect.DeepEqual(got, want) {
		t.Error("the restored unit differs from the dumped one")
	}
	s := openTest(t, restored, Options{})
	defer s.Close()
	if _, err := s.db.ExecContext(ctx, "DELETE FROM change_log"); err == nil || !strings.Contains(err.Error(), "append-only") {
		t.Errorf("the restored change log is not guarded: %v", err)
	}
	if err := s.SaveCase(ctx, utCase("AFTER-RESTORE"), true); err != nil {
		t.Fatalf("a new case in the restored unit: %v", err)
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	mustCheck(t, restored)
}

// TestServerTLS runs a server that takes TCP connections with TLS, with a
// certificate made out to localhost by an authority of the test's own:
// with sslmode=verify-full and that authority's certificate the program
// connects and works; without it, or from a server without TLS, it is
// refused in one sentence saying why.
func TestServerTLS(t *testing.T) {
	dir, home := processTest(t)
	caPEM, certPEM, keyPEM := testCertificates(t)
	port := freePort(t)
	c := privateCluster(t, pgtest.Options{Port: port, Settings: []string{"listen_addresses = '127.0.0.1'"}})
	// TLS is turned on once the certificate files are in place, and the
	// server restarted.
	owner, err := user.Lookup(c.Superuser)
	if err != nil {
		t.Fatal(err)
	}
	uid, _ := strconv.Atoi(owner.Uid)
	gid, _ := strconv.Atoi(owner.Gid)
	for name, data := range map[string][]byte{"server.crt": certPEM, "server.key": keyPEM} {
		p := filepath.Join(c.DataDir(), name)
		if err := os.WriteFile(p, data, 0o600); err != nil {
			t.Fatal(err)
		}
		os.Chown(p, uid, gid)
	}
	conf, err := os.OpenFile(filepath.Join(c.DataDir(), "postgresql.conf"), os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	conf.WriteString("\nssl = on\nssl_cert_file = 'server.crt'\nssl_key_file = 'server.key'\n")
	conf.Close()
	if err := c.StopServer(); err != nil {
		t.Fatal(err)
	}
	if err := c.StartServer(); err != nil {
		t.Fatal(err)
	}
	name, err := c.NewDatabase(context.Background(), "tls")
	if err != nil {
		t.Fatal(err)
	}
	ca := writeFile(t, dir, "root.crt", caPEM)
	otherCA, _, _ := testCertificates(t)
	other := writeFile(t, dir, "other.crt", otherCA)
	tcp := func(query string) string {
		return fmt.Sprintf("postgres://%s@localhost:%d/%s?%s", c.Superuser, port, name, query)
	}
	if r := runCLI(t, home, nil, "init", "--db", tcp("sslmode=verify-full&sslrootcert="+ca)); r.code != 0 {
		t.Fatalf("init over TLS with the unit's authority: exit %d, %s", r.code, r.stderr)
	}
	for _, tc := range []struct {
		name, query, want string
	}{
		{"the right authority", "sslmode=verify-full&sslrootcert=" + ca, ""},
		{"another authority", "sslmode=verify-full&sslrootcert=" + other, "could not be verified"},
	} {
		r := runCLI(t, home, nil, "check", "--db", tcp(tc.query))
		msg := strings.TrimSpace(r.stderr)
		switch {
		case tc.want == "" && r.code != 0:
			t.Errorf("%s: exit %d, %s", tc.name, r.code, msg)
		case tc.want != "" && (r.code != exitBadInput || !strings.Contains(msg, tc.want) || strings.Contains(msg, "\n") || strings.Contains(msg, "x509")):
			t.Errorf("%s: exit %d, %q; want one sentence saying %q", tc.name, r.code, msg, tc.want)
		}
	}
	// A server without TLS, asked for it.
	plainPort := freePort(t)
	plain := privateCluster(t, pgtest.Options{Port: plainPort, Settings: []string{"listen_addresses = '127.0.0.1'"}})
	r := runCLI(t, home, nil, "check", "--db", fmt.Sprintf("postgres://%s@localhost:%d/postgres?sslmode=require", plain.Superuser, plainPort))
	if msg := strings.TrimSpace(r.stderr); r.code != exitBadInput || !strings.Contains(msg, "does not offer encrypted (TLS) connections") {
		t.Errorf("a server without TLS: exit %d, %q", r.code, msg)
	}
}

// freePort returns a TCP port on the loopback address that was free a
// moment ago.
func freePort(t *testing.T) int {
	t.Helper()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port
}

// testCertificates makes a certificate authority and a server certificate
// it signs for localhost, in PEM.
func testCertificates(t *testing.T) (caPEM, certPEM, keyPEM []byte) {
	t.Helper()
	caKey, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	now := time.Now()
	caTmpl := &x509.Certificate{
		SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "Invented Hospital Test Authority"},
		NotBefore: now.Add(-time.Hour), NotAfter: now.Add(24 * time.Hour),
		IsCA: true, BasicConstraintsValid: true, KeyUsage: x509.KeyUsageCertSign | x509.KeyUsageDigitalSignature,
	}
	caDER, err := x509.CreateCertificate(rand.Reader, caTmpl, caTmpl, &caKey.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	caCert, _ := x509.ParseCertificate(caDER)
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{
		SerialNumber: big.NewInt(2), Subject: pkix.Name{CommonName: "localhost"},
		NotBefore: now.Add(-time.Hour), NotAfter: now.Add(24 * time.Hour),
		DNSNames: []string{"localhost"}, KeyUsage: x509.KeyUsageDigitalSignature, ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth},
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, caCert, &key.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	keyDER, err := x509.MarshalPKCS8PrivateKey(key)
	if err != nil {
		t.Fatal(err)
	}
	return pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: caDER}),
		pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}),
		pem.EncodeToMemory(&pem.Block{Type: "PRIVATE KEY", Bytes: keyDER})
}
