package store

// The reliability suite: the guarantees of docs/data-safety.md, each with a
// test that fails if the guarantee breaks. This file holds the helpers the
// suite shares (the polypledger binary built once per test binary, invented
// CSV files, hashing and counting) and the tests of damaged or foreign
// databases, safe exports, privacy and backups. Crash tests are in
// crash_test.go, two-writer tests in concurrency_test.go and fuzz targets in
// fuzz_test.go.

import (
	"bytes"
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"polypledger/demo"
	"polypledger/logbook"
)

// --- the binary, built once per test binary ---

var cli struct {
	once sync.Once
	path string
	err  error
}

// cliBinary builds the polypledger command once per test binary and returns
// its path. It lives at a fixed place under the temporary folder, rebuilt
// (to a temporary name, then renamed) on every run, so that it is never stale
// and never accumulates.
func cliBinary(t testing.TB) string {
	t.Helper()
	cli.once.Do(func() {
		goCmd, err := exec.LookPath("go")
		if err != nil {
			goCmd = filepath.Join(runtime.GOROOT(), "bin", "go")
		}
		dir := filepath.Join(os.TempDir(), fmt.Sprintf("polypledger-reliability-%d", os.Getuid()))
		if err := os.MkdirAll(dir, 0o700); err != nil {
			cli.err = err
			return
		}
		tmp := filepath.Join(dir, fmt.Sprintf("polypledger.%d.partial", os.Getpid()))
		out, err := exec.Command(goCmd, "build", "-o", tmp, "polypledger").CombinedOutput()
		if err != nil {
			os.Remove(tmp)
			cli.err = fmt.Errorf("go build polypledger: %v\n%s", err, out)
			return
		}
		cli.path = filepath.Join(dir, fmt.Sprintf("polypledger.%d", os.Getpid()))
		cli.err = os.Rename(tmp, cli.path)
		// Remove binaries of earlier runs whose process is gone.
		old, _ := filepath.Glob(filepath.Join(dir, "polypledger.*"))
		for _, o := range old {
			var pid int
			if _, err := fmt.Sscanf(filepath.Ext(o), ".%d", &pid); err == nil && pid != os.Getpid() {
				if syscall.Kill(pid, 0) != nil {
					os.Remove(o)
				}
			}
		}
	})
	if cli.err != nil {
		t.Fatalf("building the polypledger binary: %v", cli.err)
	}
	return cli.path
}

// cliRun is one finished run of the binary.
type cliRun struct {
	stdout, stderr string
	code           int
}

// cliCommand prepares a run of the binary with POLYPLEDGER_HOME set to home
// (the unit key lives there) and extra environment variables.
func cliCommand(t testing.TB, home string, extraEnv []string, args ...string) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(cliBinary(t), args...)
	env := []string{"POLYPLEDGER_HOME=" + home, "HOME=" + home, "PATH=" + os.Getenv("PATH")}
	cmd.Env = append(env, extraEnv...)
	cmd.Dir = home
	return cmd
}

// runCLI runs the binary to the end and returns what it printed and its
// exit code.
func runCLI(t testing.TB, home string, extraEnv []string, args ...string) cliRun {
	t.Helper()
	cmd := cliCommand(t, home, extraEnv, args...)
	var out, errOut bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errOut
	err := cmd.Run()
	r := cliRun{stdout: out.String(), stderr: errOut.String()}
	var ee *exec.ExitError
	switch {
	case err == nil:
	case errors.As(err, &ee):
		r.code = ee.ExitCode()
	default:
		t.Fatalf("running polypledger %v: %v", args, err)
	}
	return r
}

// --- invented records ---

// pastEnd is the last date of invented procedures: well before any clock
// these tests run under, so that no date is refused as in the future.
var pastEnd = time.Date(2025, 6, 30, 0, 0, 0, 0, time.UTC)

// hospitalNumber is the invented hospital number of patient i, in a
// recognisable form that the privacy tests look for in raw bytes.
func hospitalNumber(i int) string { return fmt.Sprintf("RXH%07d", 1000000+i) }

// inventedCases returns n invented demo cases (demo data, not real
// patients), their ids prefixed with prefix so that several files do not
// collide.
func inventedCases(t testing.TB, n int, prefix string, seed uint64) []logbook.Case {
	t.Helper()
	var cases []logbook.Case
	err := demo.Generate(demo.Options{Procedures: n, Seed: seed, End: pastEnd, Key: []byte("invented demo key")}, func(c *logbook.Case) error {
		cp := logbook.Case{Procedure: c.Procedure, Lesions: append([]logbook.Lesion(nil), c.Lesions...)}
		cp.ID = prefix + cp.ID
		for i := range cp.Lesions {
			cp.Lesions[i].ProcedureID = cp.ID
		}
		cases = append(cases, cp)
		return nil
	})
	if err != nil {
		t.Fatalf("inventing cases: %v", err)
	}
	return cases
}

// proceduresCSV writes the cases as procedures.csv, each patient_ref being
// an invented hospital number (hospitalNumber of the case's index).
func proceduresCSV(t testing.TB, cases []logbook.Case) []byte {
	t.Helper()
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(names(procedureColumns))
	ref := -1
	for i, c := range procedureColumns {
		if c.name == "patient_ref" {
			ref = i
		}
	}
	for i := range cases {
		row := csvRow(procedureColumns, &cases[i].Procedure)
		row[ref] = hospitalNumber(i)
		w.Write(row)
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// lesionsCSV writes the cases' lesions as lesions.csv.
func lesionsCSV(t testing.TB, cases []logbook.Case) []byte {
	t.Helper()
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(names(lesionColumns))
	for i := range cases {
		for j := range cases[i].Lesions {
			w.Write(csvRow(lesionColumns, &cases[i].Lesions[j]))
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// writeFile writes data to dir/name and returns the path.
func writeFile(t testing.TB, dir, name string, data []byte) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, data, 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}

// --- inspecting databases ---

// testKey is the unit key of in-process stores in these tests.
var testKey = []byte("reliability test unit key, 32 b.")

// openTest opens (creating) a database in-process with the test key.
func openTest(t testing.TB, path string, opt Options) *Store {
	t.Helper()
	if opt.Key == nil {
		opt.Key = testKey
	}
	s, err := Open(context.Background(), path, opt)
	if err != nil {
		t.Fatalf("open %s: %v", path, err)
	}
	return s
}

// dbCounts is how many rows a database holds.
type dbCounts struct{ procedures, lesions, changes int }

// countsOf opens the database read-only and counts its rows.
func countsOf(t testing.TB, path string) dbCounts {
	t.Helper()
	s, err := Open(context.Background(), path, Options{ReadOnly: true})
	if err != nil {
		t.Fatalf("open %s read-only: %v", path, err)
	}
	defer s.Close()
	var c dbCounts
	for _, q := range []struct {
		sql string
		n   *int
	}{
		{"SELECT count(*) FROM procedures", &c.procedures},
		{"SELECT count(*) FROM lesions", &c.lesions},
		{"SELECT count(*) FROM change_log", &c.changes},
	} {
		if err := s.db.QueryRow(q.sql).Scan(q.n); err != nil {
			t.Fatalf("%s: %v", q.sql, err)
		}
	}
	return c
}

// mustCheck runs Check in-process and fails on any finding.
func mustCheck(t testing.TB, path string) {
	t.Helper()
	s, err := Open(context.Background(), path, Options{ReadOnly: true})
	if err != nil {
		t.Fatalf("open %s for check: %v", path, err)
	}
	defer s.Close()
	findings, err := s.Check(context.Background())
	if err != nil {
		t.Fatalf("check %s: %v", path, err)
	}
	if len(findings) > 0 {
		t.Fatalf("check %s found %d problems:\n%s", path, len(findings), strings.Join(findings, "\n"))
	}
}

// hashFile returns the SHA-256 of a file's bytes ("missing" when absent).
func hashFile(t testing.TB, path string) string {
	t.Helper()
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return "missing"
	}
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		t.Fatal(err)
	}
	return hex.EncodeToString(h.Sum(nil))
}

// rawSQL opens a SQLite file with the driver directly, bypassing Open's
// checks, to build foreign or doctored files.
func rawSQL(t testing.TB, path string) *sql.DB {
	t.Helper()
	db, err := sql.Open(driverName, "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	return db
}
