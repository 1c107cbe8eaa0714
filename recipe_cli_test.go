package main

// Command-line tests of other systems' files and of workbooks: the shipped
// source shapes imported through their recipes and through drafted ones,
// import --check, and workbook export and import.

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// sources holds the shipped shapes of other systems' files.
const sources = "testdata/sources"

// mustRun runs the command line and fails the test unless it succeeds.
func mustRun(t *testing.T, args ...string) string {
	t.Helper()
	code, stdout, stderr := cli(t, args...)
	if code != exitOK {
		t.Fatalf("%s: exit %d\n%s%s", strings.Join(args, " "), code, stdout, stderr)
	}
	return stdout
}

// exports returns the CSV export of each kind of a database.
func exports(t *testing.T, db string) map[string]string {
	t.Helper()
	out := map[string]string{}
	for _, k := range []string{"procedures", "lesions", "histology"} {
		out[k] = mustRun(t, "export", "--db", db, "--kind", k, "--out", "-")
	}
	return out
}

// sameRecords fails the test where two databases' exports differ.
func sameRecords(t *testing.T, got, want string) {
	t.Helper()
	g, w := exports(t, got), exports(t, want)
	for _, k := range []string{"procedures", "lesions", "histology"} {
		if g[k] != w[k] {
			t.Errorf("%s differ:\n%s\nwant\n%s", k, g[k], w[k])
		}
	}
	if strings.Count(g["procedures"], "\n") < 3 {
		t.Errorf("only %d procedure lines stored", strings.Count(g["procedures"], "\n")-1)
	}
}

// shippedUnits import the shipped shapes through recipes (the steps, one
// after another into one database) and, into another database, the same
// records written in our own CSV dialect.
var shippedUnits = []struct {
	name  string
	steps []struct{ dir, data string } // recipe.toml and the data file of each folder
	ours  [][2]string                  // kind and our CSV file
}{
	{"wide", []struct{ dir, data string }{{"wide", "audit.xlsx"}},
		[][2]string{{"procedures", "wide/procedures.csv"}, {"lesions", "wide/lesions.csv"}}},
	{"room and lab", []struct{ dir, data string }{{"room", "room.csv"}, {"lab", "lab.csv"}},
		[][2]string{{"procedures", "room/procedures.csv"}, {"lesions", "room/lesions.csv"}, {"histology", "lab/histology.csv"}}},
}

// oursDB imports the shipped records written in our own dialect.
func oursDB(t *testing.T, dir string, ours [][2]string) string {
	t.Helper()
	db := filepath.Join(dir, "ours.db")
	for _, f := range ours {
		mustRun(t, "import", "--db", db, "--kind", f[0], filepath.Join(sources, f[1]))
	}
	return db
}

// TestShippedSourcesThroughRecipes imports each shipped shape through its
// recipe from the command line: the records stored are those of the same
// data written in our own CSV dialect. Checking first stores nothing and
// says what would be stored.
func TestShippedSourcesThroughRecipes(t *testing.T) {
	for _, u := range shippedUnits {
		t.Run(u.name, func(t *testing.T) {
			dir := unitHome(t)
			db := filepath.Join(dir, "unit.db")
			for _, s := range u.steps {
				data, rcp := filepath.Join(sources, s.dir, s.data), filepath.Join(sources, s.dir, "recipe.toml")
				out := mustRun(t, "import", "--db", db, "--recipe", rcp, "--check", data)
				if !strings.Contains(out, data+": checked ") || !strings.Contains(out, "nothing was stored") || !strings.Contains(out, "would store ") {
					t.Errorf("check output:\n%s", out)
				}
				out = mustRun(t, "import", "--db", db, "--recipe", rcp, data)
				if !strings.Contains(out, data+": imported ") {
					t.Errorf("import output:\n%s", out)
				}
			}
			sameRecords(t, db, oursDB(t, dir, u.ours))
		})
	}
}

// TestRecipeDraftCommand drafts a recipe for each shipped shape from the
// command line, refuses to write over it unasked, applies the edit a person
// makes to a line marked "# check:" (the laboratory's day order), and
// imports with it: the same records as our own CSV files.
func TestRecipeDraftCommand(t *testing.T) {
	edits := map[string][2]string{
		// No day in the laboratory's file is above 12: the person knows
		// the order (recipe/draft_test.go makes the same edit).
		"lab": {`# date_format = "DD/MM/YYYY"`, `date_format = "DD/MM/YYYY"`},
	}
	for _, u := range shippedUnits {
		t.Run(u.name, func(t *testing.T) {
			dir := unitHome(t)
			db := filepath.Join(dir, "unit.db")
			for _, s := range u.steps {
				data := filepath.Join(sources, s.dir, s.data)
				rcp := filepath.Join(dir, s.dir+".toml")
				shown := mustRun(t, "recipe", "draft", data)
				out := mustRun(t, "recipe", "draft", data, "--out", rcp)
				if !strings.HasPrefix(out, "wrote "+rcp+": a proposed recipe for "+data) {
					t.Errorf("draft --out said %q", out)
				}
				if readFile(t, rcp) != shown {
					t.Error("the draft written differs from the draft shown")
				}
				code, _, stderr := cli(t, "recipe", "draft", data, "--out", rcp)
				if code != exitBad || !strings.Contains(stderr, "already exists") || !strings.Contains(stderr, "--force") {
					t.Errorf("a second draft over the first: exit %d, %s", code, stderr)
				}
				mustRun(t, "recipe", "draft", data, "--out", rcp, "--force")
				if e, ok := edits[s.dir]; ok {
					text := readFile(t, rcp)
					if !strings.Contains(text, e[0]) {
						t.Fatalf("the draft lacks %q:\n%s", e[0], text)
					}
					writeFile(t, rcp, strings.Replace(text, e[0], e[1], 1))
				}
				mustRun(t, "import", "--db", db, "--recipe", rcp, data)
			}
			sameRecords(t, db, oursDB(t, dir, u.ours))
		})
	}
}

// TestRecipeImportProblems imports a file whose values the recipe does not
// all map: the command exits 1 and stores nothing, each problem names the
// file, line, source column, value and the recipe section to add it to,
// a patient reference never shows, and the columns the recipe does not read
// are listed once.
func TestRecipeImportProblems(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	rcp := writeFile(t, filepath.Join(dir, "r.toml"), `kind = "combined"
date_format = "DD/MM/YYYY"
[columns]
procedure_id = "Exam"
performed_on = "Date"
operator_id = "By"
patient_ref = "MRN"
age = "Age"
sex = "Sex"
indication = "Reason"
extent = "Reached"
segment = "Site"
size_mm = "Size"
[values.indication]
"Bowel screening" = "screening"
`)
	data := writeFile(t, filepath.Join(dir, "src.csv"), "Exam,Date,By,MRN,Age,Sex,Reason,Reached,Site,Size,Nurse\n"+
		"X1,05/03/2026,E01,ZZ900001,60,F,Bowel screening,caecum,rectum,6 mm,AB\n"+
		"X1,05/03/2026,E01,ZZ900001,60,F,Bowel screening,caecum,Sigmoid colon,4 mm,AB\n"+
		"X2,06/03/2026,E01,ZZ900002,17,F,Bowel scope,caecum,,,AB\n"+
		"X3,06/03/2026,E01,ZZ900003,71,M,Bowel scope,caecum,,,AB\n")
	for _, check := range []bool{false, true} {
		args := []string{"import", "--db", db, "--recipe", rcp, data}
		if check {
			args = append(args, "--check")
		}
		code, stdout, stderr := cli(t, args...)
		if code != exitBad {
			t.Errorf("%v: exit %d, want %d", args, code, exitBad)
		}
		want := []string{
			data + `:3: Site (segment): "Sigmoid colon" is not in the recipe: add it to [values.segment] (our codes: caecum, ascending, hepatic_flexure, transverse, splenic_flexure, descending, sigmoid, rectum)`,
			data + `:4: Reason (indication): "Bowel scope" is not in the recipe: add it to [values.indication] (our codes: screening, stool_test_positive, surveillance, diagnostic, therapeutic) (also on 1 more row)`,
		}
		last := data + ": nothing was imported (2 problems in 4 rows)"
		if check {
			last = data + ": checked, nothing stored (2 problems in 4 rows)"
		}
		if got := strings.Split(strings.TrimSpace(stderr), "\n"); !reflect.DeepEqual(got, append(want, last)) {
			t.Errorf("%v: stderr\n%s\nwant\n%s\n%s", args, stderr, strings.Join(want, "\n"), last)
		}
		if strings.Contains(stdout+stderr, "ZZ9") {
			t.Error("a patient reference was shown")
		}
		if n := strings.Count(stdout, "Nurse"); n != 1 || !strings.Contains(stdout, "1 column not in the recipe, not read: Nurse") {
			t.Errorf("the unread column is listed %d times:\n%s", n, stdout)
		}
		if _, err := os.Stat(db); !errors.Is(err, os.ErrNotExist) {
			t.Fatal("a refused import made the database")
		}
	}
	// The age rule is the store's: once the recipe maps every value, the
	// same file is refused for it, naming the source's column.
	writeFile(t, rcp, readFile(t, rcp)+"\"Bowel scope\" = \"screening\"\n[values.segment]\n\"Sigmoid colon\" = \"sigmoid\"\n")
	code, _, stderr := cli(t, "import", "--db", db, "--recipe", rcp, data)
	if want := data + ":4: Age: 17 is outside 18–110\n"; code != exitBad || !strings.HasPrefix(stderr, want) {
		t.Errorf("exit %d, stderr\n%s\nwant it to start\n%s", code, stderr, want)
	}
	// The recipe names the kind; another --kind is a usage error.
	code, _, stderr = cli(t, "import", "--db", db, "--recipe", rcp, "--kind", "procedures", data)
	if code != exitUsage || !strings.Contains(stderr, "is for kind combined") {
		t.Errorf("--kind against the recipe: exit %d, %s", code, stderr)
	}
}

// TestImportCheckChangesNothing checks files of every sort — our CSV, a
// workbook of ours, another system's file through a recipe; good and bad —
// against a unit: the database file is the same, byte for byte, afterwards,
// the command says what would be stored, and it exits 1 where there are
// problems. Checking for a database that does not exist makes none.
func TestImportCheckChangesNothing(t *testing.T) {
	dir := unitHome(t)
	db := filepath.Join(dir, "unit.db")
	demoUnit(t, db)
	procs := filepath.Join(dir, "procedures.csv")
	book := filepath.Join(dir, "unit.xlsx")
	mustRun(t, "export", "--db", db, "--kind", "procedures", "--out", procs)
	mustRun(t, "export", "--db", db, "--kind", "all", "--out", book)
	bad := writeFile(t, filepath.Join(dir, "bad.csv"), strings.Replace(readFile(t, procs), ",screening,", ",screen,", 1))
	before := readFile(t, db)
	room := filepath.Join(sources, "room")
	tests := []struct {
		name string
		args []string
		code int
		want []string // in stdout
	}{
		{"our CSV, already stored", []string{"--kind", "procedures", procs}, exitBad, []string{"checked 300 rows; nothing was stored", "300 procedures already in the logbook (refused without --update)"}},
		{"our CSV, to replace", []string{"--kind", "procedures", "--update", procs}, exitOK, []string{"would store 300 procedures (0 new, 300 replacing stored ones)"}},
		{"our CSV with a bad value", []string{"--kind", "procedures", "--update", bad}, exitBad, []string{"would store 299 procedures"}},
		{"a workbook of ours", []string{"--update", book}, exitOK, []string{"would store 300 procedures (0 new, 300 replacing stored ones)", "lesions (0 new"}},
		{"another system's file", []string{"--recipe", filepath.Join(room, "recipe.toml"), filepath.Join(room, "room.csv")}, exitOK,
			[]string{"would store 6 procedures", "would store 7 lesions", "would add to the roster: END-04 (endoscopist)"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, stdout, stderr := cli(t, append([]string{"import", "--db", db, "--check"}, tt.args...)...)
			if code != tt.code {
				t.Errorf("exit %d, want %d\n%s%s", code, tt.code, stdout, stderr)
			}
			for _, w := range tt.want {
				if !strings.Contains(stdout, w) {
					t.Errorf("stdout lacks %q:\n%s", w, stdout)
				}
			}
			if tt.code == exitBad && !strings.Contains(stderr, "checked, nothing stored (") {
				t.Errorf("stderr:\n%s", stderr)
			}
			if readFile(t, db) != before {
				t.Fatal("the database file changed")
			}
		})
	}
	for _, suffix := range []string{"-wal", "-shm", "-journal"} {
		if _, err := os.Stat(db + suffix); err == nil {
			t.Errorf("%s was left beside the database", db+suffix)
		}
	}
	fresh := filepath.Join(dir, "none.db")
	mustRun(t, "import", "--db", fresh, "--check", "--kind", "procedures", procs)
	if _, err := os.Stat(fresh); !errors.Is(err, os.ErrNotExist) {
		t.Error("checking for a database that does not exist made it")
	}
}

// TestWorkbookExportImport exports a unit as one workbook of every kind and
// as a workbook of one kind, and imports each into a new database: the same
// records. A refused workbook names the sheet and its row.
func TestWorkbookExportImport(t *testing.T) {
	dir := unitHome(t)
	a := filepath.Join(dir, "a.db")
	demoUnit(t, a)
	book := filepath.Join(dir, "unit.xlsx")
	out := mustRun(t, "export", "--db", a, "--kind", "all", "--out", book)
	if !strings.HasPrefix(out, "wrote "+book+": 300 procedures (sheet procedures), ") {
		t.Errorf("export said %q", out)
	}
	b := filepath.Join(dir, "b.db")
	mustRun(t, "import", "--db", b, book)
	sameRecords(t, b, a)

	c := filepath.Join(dir, "c.db")
	for _, k := range []string{"procedures", "lesions", "histology"} {
		one := filepath.Join(dir, k+".xlsx")
		mustRun(t, "export", "--db", a, "--kind", k, "--out", one)
		mustRun(t, "import", "--db", c, "--kind", k, one)
	}
	sameRecords(t, c, a)

	// Every sheet of the workbook again: refused, naming sheet and row.
	code, _, stderr := cli(t, "import", "--db", b, book)
	if code != exitBad || !strings.HasPrefix(stderr, book+"[procedures]:2: procedure_id: ") {
		t.Errorf("exit %d, stderr starts %.200s", code, stderr)
	}
	code, _, stderr = cli(t, "export", "--db", a, "--kind", "all", "--out", filepath.Join(dir, "all.csv"))
	if code != exitUsage || !strings.Contains(stderr, "--kind all writes a workbook") {
		t.Errorf("--kind all to CSV: exit %d, %s", code, stderr)
	}
	code, _, stderr = cli(t, "import", "--db", b, "--sheet", "procedures", "--kind", "procedures", filepath.Join(dir, "x.csv"))
	if code != exitUsage || !strings.Contains(stderr, "--sheet names a sheet of a workbook") {
		t.Errorf("--sheet with CSV: exit %d, %s", code, stderr)
	}
	if !bytes.HasPrefix([]byte(readFile(t, book)), []byte("PK")) {
		t.Error("the workbook is not a zip file")
	}
}
