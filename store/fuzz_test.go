package store

// Fuzz targets for the CSV importers, at two depths. FuzzCheckProcedures,
// FuzzCheckLesions and FuzzCheckHistology read and check whole files in
// memory, as Import does before it asks the database — thousands of files a
// second: any bytes give either no problem or a list of problems, each
// naming the file and a line, in a message of bounded size, and never a
// panic or a hang. FuzzImportEndToEnd imports any bytes as any kind into a
// real database that already holds a few procedures and lesions: either an
// error with the database unchanged, or a success whose records pass Check —
// never a partial import. It is slower (each input builds a database). Run
// briefly by scripts/fuzz-smoke and at length by scripts/fuzz-long; seed
// corpora are in testdata/fuzz.

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"modernc.org/sqlite"

	"polypledger/logbook"
)

// fuzzTemplate builds the database every fuzz input starts from: a few
// invented procedures with their lesions, some awaiting histology.
func fuzzTemplate(f testing.TB) []byte {
	f.Helper()
	path := filepath.Join(f.TempDir(), "template.db")
	cases := inventedCases(f, 8, "", 29)
	s := openTest(f, path, Options{})
	ctx := context.Background()
	if _, err := s.Import(ctx, Procedures, "p.csv", bytes.NewReader(proceduresCSV(f, cases)), ImportOptions{}); err != nil {
		f.Fatal(err)
	}
	if _, err := s.Import(ctx, Lesions, "l.csv", bytes.NewReader(lesionsCSV(f, cases)), ImportOptions{}); err != nil {
		f.Fatal(err)
	}
	if err := s.Close(); err != nil {
		f.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		f.Fatal(err)
	}
	return b
}

// fuzzSeeds are hand-made inputs for every importer: the header alone, a
// valid row, broken quoting, a byte-order mark, wrong field counts, a blank
// line, and a hostile value.
func fuzzSeeds(kind Kind, valid []byte) [][]byte {
	head := strings.Join(Columns(kind), ",")
	lines := strings.SplitN(string(valid), "\n", 3)
	row := ""
	if len(lines) > 1 {
		row = lines[1]
	}
	var out [][]byte
	for _, s := range []string{
		"",
		head + "\n",
		string(valid),
		"\ufeff" + head + "\n" + row + "\n",
		head + "\n" + row + "\n" + row + "\n",
		head + "\n\n" + row + "\n",
		head + "\n\"" + row + "\n",
		head + "\n" + row + ",extra\n",
		head + "\r\n" + strings.ReplaceAll(row, ",", ",\"") + "\r\n",
		"a,b,c\n1,2,3\n",
		head + "," + Columns(kind)[0] + "\n",
		head + "\n=HYPERLINK(\"x\")" + row[strings.IndexByte(row+",", ','):] + "\n",
		head + "\n'=HYPERLINK(\"x\")" + row[strings.IndexByte(row+",", ','):] + "\n",
		head + "\n" + strings.Replace(row, "2", "\xe9", 1) + "\n",
		strings.Replace(row, "2", "\xe9", 1) + "\n" + row + "\n",
	} {
		out = append(out, []byte(s))
	}
	return out
}

// fuzzKinds are the kinds FuzzImportEndToEnd's kind byte chooses from.
var fuzzKinds = []Kind{Procedures, Lesions, Histology}

// FuzzImportEndToEnd imports data as the kind chosen by kind into the
// template database, with or without --update. The database stays open
// from one input to the next while imports are refused (which must change
// nothing, and is checked); after an import that committed anything the
// template is put back, so that every input meets the same database and a
// failure reproduces from its input alone.
func FuzzImportEndToEnd(f *testing.F) {
	valid := fuzzValidFiles(f)
	for i, k := range fuzzKinds {
		for _, seed := range fuzzSeeds(k, valid[k]) {
			f.Add(seed, uint8(i), false)
			f.Add(seed, uint8(i), true)
		}
	}
	e := newEndToEnd(f)
	f.Fuzz(func(t *testing.T, data []byte, kindByte uint8, update bool) {
		e.run(t, data, kindByte, update)
	})
}

// endToEnd is FuzzImportEndToEnd's state from one input to the next: the
// template, and the store open on a copy of it with the state it was last
// seen in.
//
// The store is opened once. After an import that committed anything, the
// template's pages are copied back into the open database by SQLite's
// online backup, run on the test's own connection as a restore — the same
// content as a new copy, without closing, reopening and checking the
// store again for every accepted input.
//
// Whether the database changed is watched on a connection of the test's
// own (watch), through SQLite's data_version, which changes whenever
// another connection commits anything — an update that leaves the counts
// as they were included — and the counts of procedures, lesions and
// change-log entries are read only when it has. Each is one statement
// prepared once; and the state seen after one input is the state before
// the next (nothing else writes to the database). That is what lets a
// refused input cost little more than the import itself.
type endToEnd struct {
	template string // the template database's file
	resets   int    // how often it was put back
	s        *Store
	watch    *sql.Conn
	version  *sql.Stmt // SQLite's data_version
	counts   *sql.Stmt
	last     dbState
}

// dbState is what endToEnd watches.
type dbState struct {
	version int64
	dbCounts
}

func newEndToEnd(f testing.TB) *endToEnd {
	dir := f.TempDir()
	e := &endToEnd{template: filepath.Join(dir, "template.db")}
	if err := os.WriteFile(e.template, fuzzTemplate(f), 0o600); err != nil {
		f.Fatal(err)
	}
	f.Cleanup(e.close)
	return e
}

// open opens a copy of the template.
func (e *endToEnd) open(t testing.TB) {
	ctx := context.Background()
	path := filepath.Join(filepath.Dir(e.template), "unit.db")
	b, err := os.ReadFile(e.template)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o600); err != nil {
		t.Fatal(err)
	}
	e.s = openTest(t, path, Options{Now: func() time.Time { return fuzzNow }})
	if e.watch, err = e.s.db.pool.Conn(ctx); err != nil {
		t.Fatal(err)
	}
	if e.version, err = e.watch.PrepareContext(ctx, "PRAGMA data_version"); err != nil {
		t.Fatal(err)
	}
	if e.counts, err = e.watch.PrepareContext(ctx, "SELECT (SELECT count(*) FROM procedures), (SELECT count(*) FROM lesions), (SELECT count(*) FROM change_log)"); err != nil {
		t.Fatal(err)
	}
	e.last = e.now(t, dbState{version: -1})
}

// now reads the watched state: its data_version, and its counts if that
// differs from was's (or else they are was's).
func (e *endToEnd) now(t testing.TB, was dbState) dbState {
	t.Helper()
	st := was
	if err := e.version.QueryRow().Scan(&st.version); err != nil {
		t.Fatal(err)
	}
	if st.version != was.version {
		if err := e.counts.QueryRow().Scan(&st.procedures, &st.lesions, &st.changes); err != nil {
			t.Fatal(err)
		}
	}
	return st
}

// reset puts the template back into the open database.
func (e *endToEnd) reset(t testing.TB) {
	t.Helper()
	err := e.watch.Raw(func(dc any) error {
		c, ok := dc.(interface {
			NewRestore(string) (*sqlite.Backup, error)
		})
		if !ok {
			return fmt.Errorf("the driver's connection %T cannot restore", dc)
		}
		b, err := c.NewRestore("file:" + (&url.URL{Path: e.template}).EscapedPath() + "?mode=ro&immutable=1")
		if err != nil {
			return err
		}
		for more := true; more; {
			if more, err = b.Step(-1); err != nil {
				b.Finish()
				return err
			}
		}
		return b.Finish()
	})
	if err != nil {
		t.Fatalf("putting the template back: %v", err)
	}
	e.resets++
	e.last = e.now(t, dbState{version: -1})
}

// close closes the store and removes its file.
func (e *endToEnd) close() {
	if e.s == nil {
		return
	}
	e.version.Close()
	e.counts.Close()
	e.watch.Close()
	e.s.Close()
	os.Remove(e.s.Path())
	e.s = nil
}

// run imports one input and checks the outcome.
func (e *endToEnd) run(t testing.TB, data []byte, kindByte uint8, update bool) {
	kind := fuzzKinds[int(kindByte)%len(fuzzKinds)]
	if e.s == nil {
		e.open(t)
	}
	s, before := e.s, e.last
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	res, err := s.Import(ctx, kind, "fuzz.csv", bytes.NewReader(data), ImportOptions{Update: update})
	if errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("import of %d bytes did not finish in 20 s", len(data))
	}
	after := e.now(t, before)
	e.last = after
	if err != nil {
		var ie *ImportError
		if !errors.As(err, &ie) {
			t.Fatalf("import failed with %v, not a list of bad rows", err)
		}
		if len(ie.Errors) == 0 {
			t.Fatalf("a refused import lists no problem: %v", err)
		}
		if after != before {
			t.Fatalf("a refused import changed the database: %+v, was %+v", after, before)
		}
		return
	}
	// An accepted import that committed anything: the next input starts
	// again from the template.
	if after.version != before.version {
		defer e.reset(t)
	}
	// What the database accepted, the in-memory check accepts too.
	if ie := checkFile(kind, "fuzz.csv", bytes.NewReader(data), testKey, fuzzNow); ie != nil {
		t.Fatalf("imported, but the in-memory check refuses it:\n%v", ie)
	}
	if res.Inserted+res.Updated > res.Rows {
		t.Fatalf("stored %d+%d records from %d rows", res.Inserted, res.Updated, res.Rows)
	}
	if kind != Histology && after.procedures+after.lesions-before.procedures-before.lesions != res.Inserted {
		t.Fatalf("reported %d inserted, counts went from %+v to %+v", res.Inserted, before, after)
	}
	findings, err := s.Check(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(findings) > 0 {
		t.Fatalf("an accepted import left problems:\n%s", strings.Join(findings, "\n"))
	}
}

// fuzzNow is the clock of the fuzz targets: after every invented date.
var fuzzNow = pastEnd.AddDate(0, 1, 0)

// fuzzCheck is the body of the in-memory fuzz targets: any file gives no
// problem or a list of them, each on the file and a line, with reasons of
// bounded length.
func fuzzCheck(f *testing.F, kind Kind) {
	for _, seed := range fuzzSeeds(kind, fuzzValidFiles(f)[kind]) {
		f.Add(seed)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		ie := checkFile(kind, "fuzz.csv", bytes.NewReader(data), testKey, fuzzNow)
		if ie == nil {
			return
		}
		if len(ie.Errors) == 0 {
			t.Fatal("a refusal lists no problem")
		}
		for _, e := range ie.Errors {
			if e.File != "fuzz.csv" || e.Line < 1 || e.Column == "" || e.Reason == "" {
				t.Fatalf("problem %q does not name the file, a line, a column and a reason", e.String())
			}
			if len(e.Column) > 2*logbook.MaxShownValue || len(e.Reason) > 1200 {
				t.Fatalf("problem of %d+%d bytes: %.200q…", len(e.Column), len(e.Reason), e.String())
			}
		}
	})
}

func FuzzCheckProcedures(f *testing.F) { fuzzCheck(f, Procedures) }

func FuzzCheckLesions(f *testing.F) { fuzzCheck(f, Lesions) }

func FuzzCheckHistology(f *testing.F) { fuzzCheck(f, Histology) }

// fuzzValidFiles are valid files of each kind for the template database:
// new procedures, the template's own lesions (valid with --update), and
// results for its lesions awaiting histology.
func fuzzValidFiles(f testing.TB) map[Kind][]byte {
	var h bytes.Buffer
	h.WriteString(strings.Join(Columns(Histology), ",") + "\n")
	template := inventedCases(f, 8, "", 29)
	for _, c := range template {
		for _, l := range c.Lesions {
			if l.Histology == logbook.HistPending {
				h.WriteString(c.ID + "," + logbook.FormatCount(l.LesionNo) + ",tubular_adenoma,low," + logbook.FormatDate(c.PerformedOn) + "\n")
			}
		}
	}
	return map[Kind][]byte{
		Procedures: proceduresCSV(f, inventedCases(f, 3, "NEW", 31)),
		Lesions:    lesionsCSV(f, template),
		Histology:  h.Bytes(),
	}
}

// storeCounts counts an open store's rows.
func storeCounts(t testing.TB, s *Store) dbCounts {
	t.Helper()
	var c dbCounts
	for _, q := range []struct {
		sql string
		n   *int
	}{
		{"SELECT count(*) FROM procedures", &c.procedures},
		{"SELECT count(*) FROM lesions", &c.lesions},
		{"SELECT count(*) FROM change_log", &c.changes},
	} {
		if err := s.db.QueryRowContext(context.Background(), q.sql).Scan(q.n); err != nil {
			t.Fatal(err)
		}
	}
	return c
}

// TestEndToEndWatch shows that FuzzImportEndToEnd's watch can fail, and
// that the template is really put back: a refused import leaves the
// database as it was seen; an accepted one that commits anything — new
// procedures, or lesions stored again with --update, which adds no
// procedure or lesion — is seen; and after it the same file is accepted
// again, as new, with the counts the template had.
func TestEndToEndWatch(t *testing.T) {
	valid := fuzzValidFiles(t)
	for _, c := range []struct {
		name    string
		data    []byte
		kind    uint8 // index in fuzzKinds
		update  bool
		changed bool
	}{
		{"refused", []byte("a,b,c\n1,2,3\n"), 0, false, false},
		{"new procedures", valid[Procedures], 0, false, true},
		{"stored lesions updated", valid[Lesions], 1, true, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			e := newEndToEnd(t)
			e.open(t)
			template := e.last
			for i := 1; i <= 2; i++ {
				e.run(t, c.data, c.kind, c.update)
				if changed := e.resets == i; changed != c.changed {
					t.Fatalf("import %d seen as changing the database: %v, want %v (state %+v, template %+v)", i, changed, c.changed, e.last, template)
				}
				if e.last.dbCounts != template.dbCounts {
					t.Errorf("after import %d the database holds %+v, the template %+v", i, e.last.dbCounts, template.dbCounts)
				}
			}
		})
	}
}
