package main

// Command-line tests: most call run directly with their own output streams;
// a few run this test binary as the real program (TestMain turns it into
// polypledger when POLYPLEDGER_TEST_AS_CLI is set) so that the process exit
// codes themselves are checked.

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"polypledger/store"
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
	const importUsage = "usage: polypledger import --db PATH --kind procedures|lesions|histology|--recipe R.toml [--sheet NAME] [--update] [--check] FILE.csv|FILE.xlsx"
	const metricsUsage = "usage: polypledger metrics --db PATH --from DATE --to DATE [--standard ID] [--operator ID] [--format json|table]"
	tests := []struct {
		name string
		args []string
		msg  string // the first line of stderr
		use  string // the usage line that follows
	}{
		{"import with no arguments", []string{"import"}, "polypledger import: --db is required", importUsage},
		{"export with no arguments", []string{"export"}, "polypledger export: --db is required",
			"usage: polypledger export --db PATH --kind procedures|lesions|histology|all --out FILE.csv|FILE.xlsx [--force]"},
		{"demo with no arguments", []string{"demo"}, "polypledger demo: --db is required", "usage: polypledger demo --db PATH [--procedures N] [--seed S]"},
		{"check with no arguments", []string{"check"}, "polypledger check: --db is required", "usage: polypledger check --db PATH"},
		{"backup with no arguments", []string{"backup"}, "polypledger backup: --db is required", "usage: polypledger backup --db PATH --out FILE [--force]"},
		{"metrics with no arguments", []string{"metrics"}, "polypledger metrics: --db is required", metricsUsage},
		{"interval with no arguments", []string{"interval"}, "polypledger interval: --db is required",
			"usage: polypledger interval --db PATH [--procedure ID] [--guideline G] [--format json|text]"},
		{"missing --db", []string{"export", "--kind", "procedures", "--out", filepath.Join(dir, "x.csv")}, "polypledger export: --db is required",
			"usage: polypledger export --db PATH --kind procedures|lesions|histology|all --out FILE.csv|FILE.xlsx [--force]"},
		{"bad --kind", []string{"import", "--db", db, "--kind", "patients", csvFile},
			`polypledger import: --kind: kind "patients" is not procedures, lesions or histology`, importUsage},
		{"no --kind", []string{"import", "--db", db, csvFile},
			`polypledger import: --kind is required for a CSV file of ours (procedures, lesions or histology); another system's file needs --recipe`, importUsage},
		{"no file to import", []string{"import", "--db", db, "--kind", "procedures"}, "polypledger import: name one CSV or .xlsx file to import", importUsage},
		{"two files to import", []string{"import", "--db", db, "--kind", "procedures", csvFile, csvFile}, "polypledger import: name one CSV or .xlsx file to import", importUsage},
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
	if code != exitOK || stdout != "polypledger dev (database schema 4)\n" {
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
		if name != "version" && name != "recipe" && !strings.Contains(got, "--db PATH") && !strings.Contains(got, "--from PATH") {
			t.Errorf("commandUsage(%q) = %q, want its synopsis", name, got)
		}
	}
	if got := commandUsage("recipe"); got != "usage: polypledger recipe draft FILE.csv|FILE.xlsx [--sheet NAME] [--out R.toml] [--force]" {
		t.Errorf("commandUsage(recipe) = %q", got)
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
	must(a+": ok (schema 4, 700 procedures)", "check", "--db", a)

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
	must(b+": ok (schema 4, 700 procedures)", "check", "--db", b)
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
	must(backup+": ok (schema 4, 700 procedures)", "check", "--db", backup)
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

// runProcess runs the real program (this test binary acting as
// polypledger) with the config folder home and returns its exit code and
// outputs.
func runProcess(t *testing.T, home string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "POLYPLEDGER_TEST_AS_CLI=1", "POLYPLEDGER_HOME="+home)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatalf("%v: %v", args, err)
	}
	return code, out.String(), errb.String()
}

// TestImportProblemsStartWithTheFileName runs the real program on files
// with problems of every sort and checks that every line it prints on
// standard error has the form FILE:… — no line carries the program's own
// prefix — so that an editor or a script can take each one to its line.
func TestImportProblemsStartWithTheFileName(t *testing.T) {
	dir := unitHome(t)
	home := filepath.Join(dir, "home")
	os.Mkdir(home, 0o700)
	db := filepath.Join(dir, "unit.db")
	header := strings.Join(store.Columns(store.Procedures), ",")
	row := func(id, age string) string {
		return id + ",2025-03-01,E01,,,,," + age + ",F,screening,outpatient,none,caecum,,yes,480,3,3,3,yes,2,50,,no,1,no,none,"
	}
	var many strings.Builder
	many.WriteString(header + "\n")
	for i := range 150 {
		many.WriteString(row(fmt.Sprintf("P%d", i), "200") + "\n")
	}
	files := map[string]string{
		"many.csv":       many.String(),
		"header.csv":     header + ",colour\n" + row("P1", "17") + ",blue\n",
		"headerless.csv": row("P1", "60") + "\n",
		"empty.csv":      "",
		"latin1.csv":     header + "\n" + strings.Replace(row("P1", "60"), "E01", "M\xfcller", 1) + "\n",
	}
	for name, text := range files {
		path := writeFile(t, filepath.Join(dir, name), text)
		code, stdout, stderr := runProcess(t, home, "import", "--db", db, "--kind", "procedures", path)
		if code != exitBad || stdout != "" {
			t.Errorf("%s: exit %d, stdout %q", name, code, stdout)
		}
		lines := strings.Split(strings.TrimSuffix(stderr, "\n"), "\n")
		if len(lines) < 2 {
			t.Errorf("%s: stderr %q has no problem and summary", name, stderr)
		}
		for _, l := range lines {
			if !strings.HasPrefix(l, path+":") {
				t.Errorf("%s: the line %q does not start with the file name", name, l)
			}
		}
	}
	if _, err := os.Stat(db); !errors.Is(err, os.ErrNotExist) {
		t.Error("a refused import into a new database left a database behind")
	}
}

// demoUnit makes a small demo database for the command tests.
func demoUnit(t *testing.T, path string) {
	t.Helper()
	if code, _, stderr := cli(t, "demo", "--db", path, "--procedures", "300", "--seed", "5"); code != exitOK {
		t.Fatalf("demo: exit %d: %s", code, stderr)
	}
}

// TestOutputsNeverReplaceUnasked: export, report and backup leave an
// existing file alone unless --force is given, and never replace the
// database they read (by any name), its journals, or another database,
// even with --force.
func TestOutputsNeverReplaceUnasked(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	other := filepath.Join(dir, "other.db")
	demoUnit(t, db)
	demoUnit(t, other)
	dbBytes, otherBytes := readFile(t, db), readFile(t, other)
	notes := writeFile(t, filepath.Join(dir, "notes.txt"), "somebody's notes\n")
	period := []string{"--from", "2020-01-01", "--to", "2030-12-31"}
	commands := map[string][]string{
		"export": {"export", "--db", db, "--kind", "procedures"},
		"report": append([]string{"report", "--db", db}, period...),
		"backup": {"backup", "--db", db},
	}
	for name, base := range commands {
		for _, tc := range []struct {
			out   string
			force bool
			want  string
		}{
			{notes, false, "notes.txt already exists; choose another name, or give --force to replace it"},
			{db, false, "is the database itself"},
			{db, true, "is the database itself"},
			{filepath.Join(dir, ".", "sub", "..", "unit.db"), true, "is the database itself"},
			{db + "-wal", true, "belongs to the database"},
			{other, true, "is a database; it is never replaced"},
		} {
			args := append(append([]string(nil), base...), "--out", tc.out)
			if tc.force {
				args = append(args, "--force")
			}
			code, _, stderr := cli(t, args...)
			if code != exitBad || !strings.Contains(stderr, tc.want) {
				t.Errorf("%s --out %s (force %v): exit %d, %q; want exit 1 saying %q", name, tc.out, tc.force, code, stderr, tc.want)
			}
		}
		if readFile(t, notes) != "somebody's notes\n" {
			t.Fatalf("%s replaced a file without --force", name)
		}
	}
	if readFile(t, db) != dbBytes || readFile(t, other) != otherBytes {
		t.Fatal("a database was changed by a refused output")
	}
	if _, err := os.Stat(db + "-wal"); err == nil && readFile(t, db+"-wal") != "" {
		t.Error("the database's write-ahead log was written to")
	}
	// With --force an ordinary file is replaced, whole.
	if code, _, stderr := cli(t, "export", "--db", db, "--kind", "lesions", "--out", notes, "--force"); code != exitOK {
		t.Fatalf("export --force over a text file: exit %d: %s", code, stderr)
	}
	if !strings.HasPrefix(readFile(t, notes), "procedure_id,lesion_no,") {
		t.Error("export --force did not replace the file with the export")
	}
	if code, stdout, _ := cli(t, "check", "--db", db); code != exitOK || !strings.Contains(stdout, "ok") {
		t.Errorf("check after the refused outputs: exit %d, %s", code, stdout)
	}
}

// TestCommandsSayWhatTheyDid: export and report say what they wrote, where
// and how much; check counts its problems in words and names the record;
// a trainee logbook of an endoscopist is refused; interval text reads in
// words (its JSON keeps the codes); the metrics table gives units.
func TestCommandsSayWhatTheyDid(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	demoUnit(t, db)

	out := filepath.Join(dir, "procedures.csv")
	code, stdout, stderr := cli(t, "export", "--db", db, "--kind", "procedures", "--out", out)
	rows := strings.Count(readFile(t, out), "\n") - 1
	if want := fmt.Sprintf("wrote %s: %d procedures\n", out, rows); code != exitOK || stdout != want || rows != 300 || stderr != "" {
		t.Errorf("export: exit %d, %q, want %q (%d rows); stderr %q", code, stdout, want, rows, stderr)
	}
	code, _, stderr = cli(t, "export", "--db", db, "--kind", "histology", "--out", "-")
	if code != exitOK || !regexp.MustCompile(`^wrote \d+ histology results to standard output\n$`).MatchString(stderr) {
		t.Errorf("export to standard output: exit %d, stderr %q", code, stderr)
	}

	pdf := filepath.Join(dir, "unit.pdf")
	code, stdout, stderr = cli(t, "report", "--db", db, "--from", "2024-01-01", "--to", "2025-12-31", "--out", pdf)
	pages := strings.Count(readFile(t, pdf), "/Type /Page\n")
	if pdfinfo, err := exec.LookPath("pdfinfo"); err == nil {
		// Counted by another reader of PDF files where there is one.
		info, err := exec.Command(pdfinfo, pdf).Output()
		if m := regexp.MustCompile(`(?m)^Pages:\s+(\d+)$`).FindSubmatch(info); err != nil || m == nil {
			t.Errorf("pdfinfo cannot read the report: %v", err)
		} else {
			fmt.Sscan(string(m[1]), &pages)
		}
	}
	if want := fmt.Sprintf("wrote %s: unit audit report, 2024-01-01 to 2025-12-31, %d pages\n", pdf, pages); code != exitOK || stdout != want || pages < 3 {
		t.Errorf("report: exit %d, %q, want %q; %s", code, stdout, want, stderr)
	}
	for _, tc := range []struct{ flag, id, want string }{
		{"--trainee", "E06", "--trainee E06: E06 is on the roster as an endoscopist, not a trainee; nothing was written (trainees on the roster: T01, T02)"},
		{"--operator", "T01", "--operator T01: T01 is on the roster as a trainee, not an endoscopist; nothing was written"},
		{"--trainee", "T99", "--trainee T99 is not on the unit's roster; nothing was written (trainees on the roster: T01, T02)"},
	} {
		target := filepath.Join(dir, tc.id+".pdf")
		code, _, stderr = cli(t, "report", "--db", db, "--from", "2024-01-01", "--to", "2025-12-31", tc.flag, tc.id, "--out", target)
		if code != exitBad || !strings.Contains(stderr, tc.want) {
			t.Errorf("report %s %s: exit %d, %q; want %q", tc.flag, tc.id, code, stderr, tc.want)
		}
		if _, err := os.Stat(target); err == nil {
			t.Errorf("report %s %s wrote a file", tc.flag, tc.id)
		}
	}

	code, stdout, _ = cli(t, "interval", "--db", db, "--format", "text")
	if code != exitOK || !strings.Contains(stdout, ": 3 years\n") && !strings.Contains(stdout, ": 10 years\n") {
		t.Errorf("interval text: exit %d, no interval in words in:\n%.400s", code, stdout)
	}
	if m := regexp.MustCompile(`(?m)^\S+: (2-6m|3-6m|6m|1y|3y|3-5y|5-10y|7-10y|10y|screening|repeat|outside|pending)$`).FindString(stdout); m != "" {
		t.Errorf("interval text prints a code: %q", m)
	}
	if _, stdout, _ = cli(t, "interval", "--db", db, "--format", "json"); !strings.Contains(stdout, `"interval": "`) || strings.Contains(stdout, "years") {
		t.Errorf("interval json does not keep the codes:\n%.300s", stdout)
	}
	_, stdout, _ = cli(t, "metrics", "--db", db, "--from", "2020-01-01", "--to", "2030-12-31", "--format", "table")
	for _, line := range strings.Split(stdout, "\n") {
		if strings.HasPrefix(line, "sedation_") && strings.Contains(line, "median") && !regexp.MustCompile(`\d (mg|µg)\s`).MatchString(line) && !strings.Contains(line, "–") {
			t.Errorf("a median without its unit: %q", line)
		}
	}

	// One planted problem: "1 problem", naming the procedure it is in.
	raw, err := sql.Open("sqlite", "file:"+db)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := raw.Exec("UPDATE procedures SET age = 200 WHERE id = 'LK0000007'"); err != nil {
		t.Fatal(err)
	}
	raw.Close()
	code, _, stderr = cli(t, "check", "--db", db)
	if want := "polypledger check: " + db + " has 1 problem:\nprocedure LK0000007: age: 200 is outside 18–110\n"; code != exitBad || stderr != want {
		t.Errorf("check: exit %d, %q, want %q", code, stderr, want)
	}
}
