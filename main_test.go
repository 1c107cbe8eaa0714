package main

// Command-line tests: most call run directly with their own output streams;
// a few run this test binary as the real program (TestMain turns it into
// polypledger when POLYPLEDGER_TEST_AS_CLI is set) so that the process exit
// codes themselves are checked.

import (
	"bytes"
	"context"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func TestMain(m *testing.M) {
	if os.Getenv("POLYPLEDGER_TEST_AS_CLI") == "1" {
		main() // exits with the program's own code
	}
	os.Exit(m.Run())
}

// cli runs the command line in-process with a fresh config folder (so the
// unit key is created in a temporary place) and returns the exit code and
// both outputs.
func cli(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(context.Background(), args, &env{stdout: &out, stderr: &errb})
	return code, out.String(), errb.String()
}

// unitHome points the config folder at a temporary directory for the test.
func unitHome(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	t.Setenv("POLYPLEDGER_HOME", filepath.Join(dir, "home"))
	return dir
}

func writeFile(t *testing.T, path, text string) string {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o600); err != nil {
		t.Fatal(err)
	}
	return path
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestUsageErrors(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	csvFile := writeFile(t, filepath.Join(dir, "p.csv"), "procedure_id\n")
	const importUsage = "usage: polypledger import --db PATH --kind procedures|lesions|histology [--update] FILE.csv"
	const metricsUsage = "usage: polypledger metrics --db PATH --from DATE --to DATE [--standard ID] [--operator ID] [--format json|table]"
	tests := []struct {
		name string
		args []string
		msg  string // the first line of stderr
		use  string // the usage line that follows
	}{
		{"import with no arguments", []string{"import"}, "polypledger import: --db is required", importUsage},
		{"export with no arguments", []string{"export"}, "polypledger export: --db is required",
			"usage: polypledger export --db PATH --kind procedures|lesions|histology --out FILE.csv [--force]"},
		{"demo with no arguments", []string{"demo"}, "polypledger demo: --db is required", "usage: polypledger demo --db PATH [--procedures N] [--seed S]"},
		{"check with no arguments", []string{"check"}, "polypledger check: --db is required", "usage: polypledger check --db PATH"},
		{"backup with no arguments", []string{"backup"}, "polypledger backup: --db is required", "usage: polypledger backup --db PATH --out FILE [--force]"},
		{"metrics with no arguments", []string{"metrics"}, "polypledger metrics: --db is required", metricsUsage},
		{"interval with no arguments", []string{"interval"}, "polypledger interval: --db is required",
			"usage: polypledger interval --db PATH [--procedure ID] [--guideline G] [--format json|text]"},
		{"missing --db", []string{"export", "--kind", "procedures", "--out", filepath.Join(dir, "x.csv")}, "polypledger export: --db is required",
			"usage: polypledger export --db PATH --kind procedures|lesions|histology --out FILE.csv [--force]"},
		{"bad --kind", []string{"import", "--db", db, "--kind", "patients", csvFile},
			`polypledger import: --kind: kind "patients" is not procedures, lesions or histology`, importUsage},
		{"no --kind", []string{"import", "--db", db, csvFile},
			`polypledger import: --kind: kind "" is not procedures, lesions or histology`, importUsage},
		{"no file to import", []string{"import", "--db", db, "--kind", "procedures"}, "polypledger import: name one CSV file to import", importUsage},
		{"two files to import", []string{"import", "--db", db, "--kind", "procedures", csvFile, csvFile}, "polypledger import: name one CSV file to import", importUsage},
		{"bad date", []string{"metrics", "--db", db, "--from", "2025-02-29", "--to", "2025-12-31"},
			`polypledger metrics: --from: "2025-02-29" is not a real calendar date (YYYY-MM-DD)`, metricsUsage},
		{"date not ISO", []string{"metrics", "--db", db, "--from", "2025-01-01", "--to", "31/12/2025"},
			`polypledger metrics: --to: "31/12/2025" is not a real calendar date (YYYY-MM-DD)`, metricsUsage},
		{"period backwards", []string{"metrics", "--db", db, "--from", "2025-12-31", "--to", "2025-01-01"},
			"polypledger metrics: --to 2025-01-01 is before --from 2025-12-31", metricsUsage},
		{"bad format", []string{"metrics", "--db", db, "--from", "2025-01-01", "--to", "2025-12-31", "--format", "xml"},
			"polypledger metrics: --format must be json or table", metricsUsage},
		{"stray argument", []string{"check", "--db", db, "extra"}, `polypledger check: unexpected argument "extra"`, "usage: polypledger check --db PATH"},
		{"demo size", []string{"demo", "--db", db, "--procedures", "0"}, "polypledger demo: --procedures must be between 1 and 20000000",
			"usage: polypledger demo --db PATH [--procedures N] [--seed S]"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, stdout, stderr := cli(t, tt.args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, exitUsage, stderr)
			}
			lines := strings.Split(strings.TrimSuffix(stderr, "\n"), "\n")
			if len(lines) != 2 || lines[0] != tt.msg || lines[1] != tt.use {
				t.Errorf("stderr\n%s\nwant\n%s\n%s", stderr, tt.msg, tt.use)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if _, err := os.Stat(db); !errors.Is(err, os.ErrNotExist) {
				t.Error("a usage error left a database behind")
			}
		})
	}
}

func TestUnknownCommandAndFlags(t *testing.T) {
	unitHome(t)
	code, _, stderr := cli(t, "bogus")
	if code != exitUsage || !strings.HasPrefix(stderr, "polypledger: unknown command \"bogus\"\n"+usageText) {
		t.Errorf("unknown command: exit %d, stderr:\n%s", code, stderr)
	}
	// An unknown flag: the flag package prints the usage with the flags;
	// it is not printed a second time.
	code, _, stderr = cli(t, "demo", "--colour", "blue")
	if code != exitUsage || !strings.Contains(stderr, "flag provided but not defined: -colour") ||
		strings.Count(stderr, "usage: polypledger demo --db PATH [--procedures N] [--seed S]") != 1 || !strings.Contains(stderr, "-seed") {
		t.Errorf("unknown flag: exit %d, stderr:\n%s", code, stderr)
	}
}

func TestHelp(t *testing.T) {
	unitHome(t)
	for _, args := range [][]string{{"-h"}, {"--help"}, {"help"}} {
		code, stdout, _ := cli(t, args...)
		if code != exitOK || strings.TrimSpace(stdout) != usageText {
			t.Errorf("%v: exit %d, stdout:\n%s", args, code, stdout)
		}
	}
	code, _, stderr := cli(t, "import", "-h")
	if code != exitOK || !strings.HasPrefix(stderr, "usage: polypledger import --db PATH") || !strings.Contains(stderr, "-update") {
		t.Errorf("import -h: exit %d, stderr:\n%s", code, stderr)
	}
	code, stdout, _ := cli(t, "version")
	if code != exitOK || stdout != "polypledger dev (database schema 3)\n" {
		t.Errorf("version: exit %d, %q", code, stdout)
	}
}

// TestCommandUsageCoversEveryCommand: each command has its own line in
// usageText, so every usage error can show one.
func TestCommandUsageCoversEveryCommand(t *testing.T) {
	for name := range commands {
		got := commandUsage(name)
		if !strings.HasPrefix(got, "usage: polypledger "+name) {
			t.Errorf("commandUsage(%q) = %q", name, got)
		}
		if name != "version" && !strings.Contains(got, "--db PATH") {
			t.Errorf("commandUsage(%q) = %q, want its synopsis", name, got)
		}
	}
	if got := commandUsage("version"); got != "usage: polypledger version" {
		t.Errorf("commandUsage(version) = %q", got)
	}
}

func TestBadInputExits1(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	header := "procedure_id,performed_on,operator_id,trainee_id,supervision,trainee_reached_caecum,patient_ref,age,sex,indication,setting,exclusion,extent,incomplete_reason,caecal_photo,withdrawal_seconds,bbps_right,bbps_transverse,bbps_left,retroversion,midazolam_mg,fentanyl_ug,pethidine_mg,propofol,comfort,detection_aid,adverse_event,recommended_interval"
	row := func(id, date, age string) string {
		return id + "," + date + ",E01,,,,," + age + ",F,screening,outpatient,none,caecum,,yes,480,3,3,3,yes,2,50,,no,1,no,none,"
	}
	bad := writeFile(t, filepath.Join(dir, "bad.csv"), strings.Join([]string{
		header, row("P1", "2025-03-01", "60"), row("P2", "2025-03-01", "17"), row("P3", "2025-03-02", "70"), row("P4", "2025-02-29", "55"),
	}, "\n")+"\n")
	notDB := writeFile(t, filepath.Join(dir, "notes.db"), strings.Repeat("not a database\n", 100))

	t.Run("import with two broken rows", func(t *testing.T) {
		code, stdout, stderr := cli(t, "import", "--db", db, "--kind", "procedures", bad)
		if code != exitBad {
			t.Errorf("exit %d, want %d", code, exitBad)
		}
		want := bad + ":3: age: 17 is outside 18–110\n" +
			bad + `:5: performed_on: "2025-02-29" is not a real calendar date (YYYY-MM-DD)` + "\n" +
			bad + ": nothing was imported (2 problems in 4 rows)\n"
		if stderr != want {
			t.Errorf("stderr\n%s\nwant\n%s", stderr, want)
		}
		if stdout != "" {
			t.Errorf("stdout %q", stdout)
		}
		if _, err := os.Stat(db); !errors.Is(err, os.ErrNotExist) {
			t.Error("a refused import into a new database left the database behind")
		}
	})
	tests := []struct {
		name string
		args []string
		want string // part of stderr
	}{
		{"check of a missing database", []string{"check", "--db", db}, "does not exist"},
		{"export of a missing database", []string{"export", "--db", db, "--kind", "procedures", "--out", filepath.Join(dir, "x.csv")}, "does not exist"},
		{"metrics of a file that is not a database", []string{"metrics", "--db", notDB, "--from", "2025-01-01", "--to", "2025-12-31"}, "is not a polypledger database"},
		{"import of a missing file", []string{"import", "--db", db, "--kind", "procedures", filepath.Join(dir, "missing.csv")}, "cannot open"},
		{"import into a file that is not a database", []string{"import", "--db", notDB, "--kind", "procedures", bad}, "is not a polypledger database"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, stderr := cli(t, tt.args...)
			if code != exitBad || !strings.Contains(stderr, tt.want) || strings.Contains(stderr, "usage:") {
				t.Errorf("exit %d (want %d), stderr:\n%s\nwant it to say %q without a usage line", code, exitBad, stderr, tt.want)
			}
		})
	}
	if readFile(t, notDB) != strings.Repeat("not a database\n", 100) {
		t.Error("the file that is not a database was changed")
	}
}

// TestDemoCheckExportImportRoundTrip: demo → check → export → import into a
// new database → export gives identical files.
func TestDemoCheckExportImportRoundTrip(t *testing.T) {
	dir := unitHome(t)
	a, b := filepath.Join(dir, "a.db"), filepath.Join(dir, "b.db")
	must := func(want string, args ...string) string {
		t.Helper()
		code, stdout, stderr := cli(t, args...)
		if code != exitOK {
			t.Fatalf("%v: exit %d\n%s", args, code, stderr)
		}
		if !strings.Contains(stdout, want) {
			t.Errorf("%v: stdout %q, want it to contain %q", args, stdout, want)
		}
		return stdout
	}
	must("created "+a+": Larkfield Endoscopy Unit (invented demo data), 700 procedures (invented data)", "demo", "--db", a, "--procedures", "700", "--seed", "11")
	must(a+": ok (schema 3, 700 procedures)", "check", "--db", a)

	kinds := []string{"procedures", "lesions", "histology"}
	for _, k := range kinds {
		must("", "export", "--db", a, "--kind", k, "--out", filepath.Join(dir, "a-"+k+".csv"))
	}
	out := must("created a new database "+b, "import", "--db", b, "--kind", "procedures", filepath.Join(dir, "a-procedures.csv"))
	for _, want := range []string{"imported 700 rows (700 new, 0 updated)", "added E01 to the roster as endoscopist", "added T01 to the roster as trainee"} {
		if !strings.Contains(out, want) {
			t.Errorf("import output %q lacks %q", out, want)
		}
	}
	must("", "import", "--db", b, "--kind", "lesions", filepath.Join(dir, "a-lesions.csv"))
	must("", "import", "--db", b, "--kind", "histology", filepath.Join(dir, "a-histology.csv"))
	must(b+": ok (schema 3, 700 procedures)", "check", "--db", b)
	for _, k := range kinds {
		must("", "export", "--db", b, "--kind", k, "--out", filepath.Join(dir, "b-"+k+".csv"))
		first, second := readFile(t, filepath.Join(dir, "a-"+k+".csv")), readFile(t, filepath.Join(dir, "b-"+k+".csv"))
		if first != second {
			t.Errorf("%s: the export of the re-imported database differs from the first export", k)
		}
		if strings.Count(first, "\n") < 100 {
			t.Errorf("%s export has only %d lines", k, strings.Count(first, "\n"))
		}
	}
	// The same file again is refused without --update and names the line.
	code, _, stderr := cli(t, "import", "--db", b, "--kind", "procedures", filepath.Join(dir, "a-procedures.csv"))
	if code != exitBad || !strings.Contains(stderr, filepath.Join(dir, "a-procedures.csv")+":2: procedure_id: ") || !strings.Contains(stderr, "--update") {
		t.Errorf("second import: exit %d, stderr starts %.300s", code, stderr)
	}
	// A backup is a database that passes check.
	backup := filepath.Join(dir, "backup.db")
	must("backed up", "backup", "--db", b, "--out", backup)
	must(backup+": ok (schema 3, 700 procedures)", "check", "--db", backup)
	// Export to standard output gives the same file.
	if got := must("", "export", "--db", b, "--kind", "lesions", "--out", "-"); got != readFile(t, filepath.Join(dir, "a-lesions.csv")) {
		t.Error("export to standard output differs from the exported file")
	}
}

// TestExitCodesOfTheProcess runs the real program (this test binary acting
// as polypledger) and checks the exit status the shell sees.
func TestExitCodesOfTheProcess(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "unit.db")
	bad := writeFile(t, filepath.Join(dir, "bad.csv"), "procedure_id,colour\nP1,blue\n")
	tests := []struct {
		args []string
		code int
	}{
		{[]string{"version"}, exitOK},
		{[]string{"import"}, exitUsage},
		{[]string{"nonsense"}, exitUsage},
		{[]string{"import", "--db", db, "--kind", "procedures", bad}, exitBad},
		{[]string{"demo", "--db", db, "--procedures", "50"}, exitOK},
		{[]string{"check", "--db", db}, exitOK},
	}
	for _, tt := range tests {
		cmd := exec.Command(os.Args[0], tt.args...)
		cmd.Env = append(os.Environ(), "POLYPLEDGER_TEST_AS_CLI=1", "POLYPLEDGER_HOME="+filepath.Join(dir, "home"))
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		err := cmd.Run()
		code := 0
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			code = ee.ExitCode()
		} else if err != nil {
			t.Fatalf("%v: %v", tt.args, err)
		}
		if code != tt.code {
			t.Errorf("polypledger %s: exit %d, want %d; stderr:\n%s", strings.Join(tt.args, " "), code, tt.code, stderr.String())
		}
	}
}
