// Package storecheck holds the tests that join the recipe and sheet
// packages to the store: what a recipe produces is what the store accepts,
// a unit's exports survive a workbook, and the workbook's formula-safety
// rule is the CSV export's; a file mapped through a recipe is checked
// against a real store without changing it. They live apart so that
// the recipe package's own tests, and its fuzzing, do not link the
// database engine.
package storecheck_test

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"testing"
	"time"

	"polypledger/recipe"
	"polypledger/sheet"
	"polypledger/store"
	"polypledger/workspace"
)

const sources = "../../testdata/sources"

func readFile(t testing.TB, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// openUnit opens a new database with a fixed clock, after every date of the
// shipped sources.
func openUnit(t *testing.T) *store.Store {
	t.Helper()
	today := time.Date(2026, 11, 15, 9, 0, 0, 0, time.UTC)
	s, err := store.Open(context.Background(), filepath.Join(t.TempDir(), "unit.db"), store.Options{Key: []byte("invented unit key"), Now: func() time.Time { return today }, User: "test"})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

// TestShippedRecordsAreAccepted imports our CSV files of the shipped shapes
// into a real store: the room system's procedures and lesions, then the
// laboratory's results for those lesions; and the audit spreadsheet's.
func TestShippedRecordsAreAccepted(t *testing.T) {
	ctx := context.Background()
	for _, unit := range [][]struct {
		dir  string
		kind store.Kind
		file string
	}{
		{{"room", store.Procedures, "procedures.csv"}, {"room", store.Lesions, "lesions.csv"}, {"lab", store.Histology, "histology.csv"}},
		{{"wide", store.Procedures, "procedures.csv"}, {"wide", store.Lesions, "lesions.csv"}},
	} {
		s := openUnit(t)
		for _, f := range unit {
			path := filepath.Join(sources, f.dir, f.file)
			res, err := s.Import(ctx, f.kind, path, strings.NewReader(readFile(t, path)), store.ImportOptions{})
			if err != nil {
				t.Errorf("import %s: %v", path, err)
				continue
			}
			if res.Rows == 0 || res.Inserted+res.Updated != res.Rows {
				t.Errorf("import %s: %+v", path, res)
			}
		}
	}
}

// TestWorkbookExportRoundTrip exports a unit as one workbook, a sheet per
// kind, and reads it back: every sheet gives exactly the CSV export's rows.
func TestWorkbookExportRoundTrip(t *testing.T) {
	ctx := context.Background()
	s := openUnit(t)
	for _, f := range []struct {
		kind store.Kind
		path string
	}{
		{store.Procedures, "room/procedures.csv"}, {store.Lesions, "room/lesions.csv"}, {store.Histology, "lab/histology.csv"},
	} {
		path := filepath.Join(sources, f.path)
		if _, err := s.Import(ctx, f.kind, path, strings.NewReader(readFile(t, path)), store.ImportOptions{}); err != nil {
			t.Fatal(err)
		}
	}
	exports := map[recipe.Kind][][]string{}
	for _, k := range recipe.Kinds {
		var b bytes.Buffer
		if _, err := s.Export(ctx, k, &b); err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(&b).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		exports[k] = recs
	}
	var book bytes.Buffer
	if _, err := s.ExportWorkbook(ctx, recipe.Kinds, &book); err != nil {
		t.Fatal(err)
	}
	for _, k := range recipe.Kinds {
		tb, err := sheet.Open("unit.xlsx", bytes.NewReader(book.Bytes()), sheet.Options{Sheet: string(k)})
		if err != nil {
			t.Fatal(err)
		}
		got := [][]string{tb.Header()}
		for {
			row, err := tb.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatal(err)
			}
			got = append(got, row.Cells)
		}
		tb.Close()
		if !reflect.DeepEqual(got, exports[k]) {
			t.Errorf("%s: read back\n%q\nexported\n%q", k, got, exports[k])
		}
		if len(got) < 2 {
			t.Errorf("%s: no rows exported", k)
		}
	}
}

// TestFormulaLikeMatchesCSVExport keeps the workbook's rule and the CSV
// export's the same: the CSV export puts an apostrophe before exactly the
// cells that are formula-like once the apostrophes they begin with are set
// aside (one more apostrophe keeps a value that really begins with one).
func TestFormulaLikeMatchesCSVExport(t *testing.T) {
	for _, v := range []string{"", "=1+1", "+44 20", "-12", "-2.5", "-1e5", "-inf", "-nan", "-0x10", "-A1", "@sum", "\tx", "\rx", "x=1", "P-1", "-", "--1", "1-2",
		"＝1", "＋1", "－3", "＠A1", "'+", "''=1", "'abc", "'-12"} {
		checkFormulaLike(t, v)
	}
}

func checkFormulaLike(t *testing.T, v string) {
	t.Helper()
	if got, want := sheet.FormulaLike(strings.TrimLeft(v, "'")), store.SafeCell(v) != v; got != want {
		t.Errorf("FormulaLike(%q without its leading apostrophes) = %v, but the CSV export neutralises it: %v", v, got, want)
	}
}

func FuzzFormulaLike(f *testing.F) {
	for _, v := range []string{"=1", "-1", "-x", "@", "+", "a", "'+"} {
		f.Add(v)
	}
	f.Fuzz(checkFormulaLike)
}

// FuzzImportThroughRecipe maps arbitrary CSV text through the room
// system's recipe and checks it against a real store (ImportFile with
// Check), as `import --check --recipe` does: it never panics, a refusal is
// an *ImportError whose every problem names the file, and the store is
// unchanged whatever the input.
func FuzzImportThroughRecipe(f *testing.F) {
	room := readFile(f, filepath.Join(sources, "room", "room.csv"))
	f.Add(room)
	f.Add(strings.Replace(room, "58,Female", "17,Female", 1))
	f.Add(strings.Replace(room, "Positive FIT", "Bowel scope", 1))
	f.Add("ExamID,ExamDate\nX1,05-Mar-2026\n")
	// Files of one row, which the fuzzer changes faster: a procedure the
	// store holds (refused), and a new one (which the check accepts).
	lines := strings.SplitAfter(room, "\n")
	f.Add(lines[0] + lines[1])
	f.Add(lines[0] + strings.Replace(lines[1], "X-2026-0412", "X-2026-9999", 1))
	c := newRecipeCheck(f)
	f.Fuzz(func(t *testing.T, data string) { c.run(t, data) })
}

// recipeCheck is FuzzImportThroughRecipe's state from one input to the
// next: the recipe, a store holding the room system's procedures, and the
// file each input is written to (the same file every time, so that an
// input costs no new folder).
//
// That the store is unchanged is watched on a connection of the test's
// own, read-only and outside the store, through SQLite's data_version:
// it changes whenever any other connection commits anything, so it staying
// the same says that nothing at all was written — more than counting
// procedures and change-log entries would, and without reading them for
// every input. The counts are read too, at the start and whenever it
// changes, to say what changed.
type recipeCheck struct {
	rcp     *recipe.Recipe
	st      *store.Store
	path    string
	version *sql.Stmt
	last    int64
	counts  string
}

func newRecipeCheck(f testing.TB) *recipeCheck {
	rcp, err := recipe.Load(filepath.Join(sources, "room", "recipe.toml"))
	if err != nil {
		f.Fatal(err)
	}
	dir := f.TempDir()
	f.Setenv("POLYPLEDGER_HOME", filepath.Join(dir, "home"))
	ctx := context.Background()
	st, err := workspace.OpenStore(ctx, filepath.Join(dir, "unit.db"), true)
	if err != nil {
		f.Fatal(err)
	}
	f.Cleanup(func() { st.Close() })
	if _, err := workspace.ImportFile(ctx, st, workspace.ImportRequest{Path: filepath.Join(sources, "room", "procedures.csv"), Kind: store.Procedures}); err != nil {
		f.Fatal(err)
	}
	db, err := sql.Open("sqlite", "file:"+st.Path()+"?mode=ro")
	if err != nil {
		f.Fatal(err)
	}
	db.SetMaxOpenConns(1) // data_version is a connection's own
	f.Cleanup(func() { db.Close() })
	c := &recipeCheck{rcp: rcp, st: st, path: filepath.Join(dir, "room.csv")}
	if c.version, err = db.PrepareContext(ctx, "PRAGMA data_version"); err != nil {
		f.Fatal(err)
	}
	f.Cleanup(func() { c.version.Close() })
	c.last = c.dataVersion(f)
	c.counts = exported(f, st)
	return c
}

// dataVersion reads SQLite's data_version on the test's connection.
func (c *recipeCheck) dataVersion(t testing.TB) int64 {
	t.Helper()
	var v int64
	if err := c.version.QueryRow().Scan(&v); err != nil {
		t.Fatal(err)
	}
	return v
}

// run checks one input.
func (c *recipeCheck) run(t testing.TB, data string) {
	ctx := context.Background()
	goroutines := runtime.NumGoroutine()
	if err := os.WriteFile(c.path, []byte(data), 0o600); err != nil {
		t.Fatal(err)
	}
	_, err := workspace.ImportFile(ctx, c.st, workspace.ImportRequest{Path: c.path, Recipe: c.rcp, Check: true})
	var ie *store.ImportError
	var se *sheet.Error
	switch {
	case errors.As(err, &ie):
		for _, p := range ie.Errors {
			if !strings.HasPrefix(p.String(), c.path) {
				t.Errorf("a problem that does not name the file: %s", p)
			}
		}
	case errors.As(err, &se), err == nil:
	default:
		t.Fatalf("%T %v", err, err)
	}
	settle(goroutines)
	if v := c.dataVersion(t); v != c.last {
		c.last = v
		t.Fatalf("a check changed the store: procedures and change-log entries %s, were %s", exported(t, c.st), c.counts)
	}
}

// settle lets the goroutines that database/sql leaves behind an input —
// each waits for the end of a transaction or of a query's rows, and wakes
// when it has come — finish before the input ends (goroutines is
// runtime.NumGoroutine at its start), so that their coverage counts with
// the input that made them. Otherwise it falls now in one input and now in
// the next, and the fuzzer, taking that for new coverage that it then
// cannot reproduce, spends its time passing coverage between processes
// and trying to minimise inputs that found nothing (about half its
// minimisation runs, measured on these targets).
func settle(goroutines int) {
	for i := 0; i < 100 && runtime.NumGoroutine() > goroutines; i++ {
		runtime.Gosched()
	}
}

// exported says what a store holds, cheaply: its procedures and its
// change log's entries (every write adds one).
func exported(t testing.TB, st *store.Store) string {
	ctx := context.Background()
	n, err := st.CountProcedures(ctx, store.ListQuery{})
	if err != nil {
		t.Fatal(err)
	}
	log, err := st.ChangeLog(ctx, 1<<20)
	if err != nil {
		t.Fatal(err)
	}
	return fmt.Sprint(n, len(log))
}

// TestRecipeCheckWatch shows that FuzzImportThroughRecipe's watch can
// fail: a check leaves the data_version as it was, and an import that
// stores the same file (replacing the procedures the store holds) changes
// it.
func TestRecipeCheckWatch(t *testing.T) {
	c := newRecipeCheck(t)
	room := readFile(t, filepath.Join(sources, "room", "room.csv"))
	c.run(t, room)
	if err := os.WriteFile(c.path, []byte(room), 0o600); err != nil {
		t.Fatal(err)
	}
	if _, err := workspace.ImportFile(context.Background(), c.st, workspace.ImportRequest{Path: c.path, Recipe: c.rcp, Update: true}); err != nil {
		t.Fatal(err)
	}
	if v := c.dataVersion(t); v == c.last {
		t.Errorf("an import was not seen: data_version still %d", v)
	}
}
