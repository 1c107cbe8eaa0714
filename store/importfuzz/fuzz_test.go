// Package importfuzz holds the fuzz targets of the CSV importers, at two
// depths. FuzzCheckProcedures, FuzzCheckLesions and FuzzCheckHistology read
// and check whole files in memory (store.CheckFile), as Import does before
// it asks the database — thousands of files a second: any bytes give either
// no problem or a list of problems, each naming the file and a line, in a
// message of bounded size, and never a panic or a hang.
// FuzzImportEndToEnd imports any bytes as any kind into a real SQLite
// database that already holds a few procedures and lesions: either an
// error with the database unchanged, or a success whose records pass Check
// and the in-memory check — never a partial import.
//
// They live apart from the store's own tests so that a fuzzing binary
// links only what the store links: the store's tests bring a PostgreSQL
// cluster and its client, and the fuzzer's bookkeeping for every input
// grows with all the code it instruments. scripts/fuzz-smoke builds this
// package with the nopostgres tag, which leaves the store's PostgreSQL
// backend out too (store/nopostgres.go); everything the targets run is the
// application's own code either way. Run briefly by scripts/fuzz-smoke and
// at length by scripts/fuzz-long; seed corpora are in testdata/fuzz.
package importfuzz_test

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
	"time"

	"modernc.org/sqlite"

	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/store"
)

var (
	// fuzzKey is the unit key of the targets' databases and checks.
	fuzzKey = []byte("importer fuzz targets' unit key.")
	// lastDay is the last date of the invented records, and fuzzNow the
	// targets' clock, a month later: no invented date is in the future.
	lastDay = time.Date(2025, 6, 30, 0, 0, 0, 0, time.UTC)
	fuzzNow = lastDay.AddDate(0, 1, 0)
)

// invented returns n invented demo cases (demo data, not real patients).
func invented(t testing.TB, n int) []logbook.Case {
	t.Helper()
	var cases []logbook.Case
	err := demo.Generate(demo.Options{Procedures: n, Seed: 29, End: lastDay, Key: []byte("invented demo key")}, func(c *logbook.Case) error {
		cp := *c
		cp.Lesions = slices.Clone(c.Lesions)
		cases = append(cases, cp)
		return nil
	})
	if err != nil {
		t.Fatalf("inventing cases: %v", err)
	}
	return cases
}

// openStore opens (creating) the database at path with the targets' key
// and clock.
func openStore(t testing.TB, path string) *store.Store {
	t.Helper()
	s, err := store.Open(context.Background(), path, store.Options{Key: fuzzKey, Now: func() time.Time { return fuzzNow }})
	if err != nil {
		t.Fatalf("open %s: %v", path, err)
	}
	return s
}

// storeCases opens a new database at path holding cases and the invented
// roster.
func storeCases(t testing.TB, path string, cases []logbook.Case) *store.Store {
	t.Helper()
	s := openStore(t, path)
	var roster []logbook.RosterEntry
	for _, st := range demo.StaffList() {
		roster = append(roster, st.Entry)
	}
	_, err := s.InsertCases(context.Background(), store.DefaultSettings, roster, "invented cases for the fuzz targets", func(emit func(*logbook.Case) error) error {
		for i := range cases {
			if err := emit(&cases[i]); err != nil {
				return err
			}
		}
		return nil
	}, nil)
	if err != nil {
		s.Close()
		t.Fatalf("storing invented cases: %v", err)
	}
	return s
}

// exported is a store's export of one kind, as CSV.
func exported(t testing.TB, s *store.Store, kind store.Kind) []byte {
	t.Helper()
	var b bytes.Buffer
	if _, err := s.Export(context.Background(), kind, &b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// fixture is what the targets start from: the template database (a few
// invented procedures with their lesions, those of the last two that sent
// any to pathology awaiting histology) and a valid file of each kind for it — new procedures, the
// template's own lesions (valid with --update), and the results its
// lesions await.
type fixture struct {
	template []byte
	valid    map[store.Kind][]byte
}

func newFixture(t testing.TB) fixture {
	t.Helper()
	dir := t.TempDir()
	all := invented(t, 11)
	cases, others := all[:8], all[8:]
	var h bytes.Buffer
	h.WriteString(strings.Join(store.Columns(store.Histology), ",") + "\n")
	for i, waiting := len(cases)-1, 0; i >= 0 && waiting < 2; i-- {
		c := &cases[i]
		sent := false
		for j := range c.Lesions {
			l := &c.Lesions[j]
			if l.SentToPathology != logbook.Yes || !l.Histology.IsFinal() {
				continue
			}
			h.WriteString(strings.Join([]string{c.ID, logbook.FormatCount(l.LesionNo), string(l.Histology), string(l.Dysplasia), logbook.FormatDate(c.PerformedOn.AddDate(0, 0, 7))}, ",") + "\n")
			l.Histology, l.Dysplasia, l.ReportedOn = logbook.HistPending, "", time.Time{}
			sent = true
		}
		if sent {
			waiting++
		}
	}
	tpl := storeCases(t, filepath.Join(dir, "template.db"), cases)
	lesions := exported(t, tpl, store.Lesions)
	if err := tpl.Close(); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "template.db"))
	if err != nil {
		t.Fatal(err)
	}
	other := storeCases(t, filepath.Join(dir, "new.db"), others)
	procedures := exported(t, other, store.Procedures)
	other.Close()
	return fixture{template: b, valid: map[store.Kind][]byte{store.Procedures: procedures, store.Lesions: lesions, store.Histology: h.Bytes()}}
}

// fuzzSeeds are hand-made inputs for every importer: the header alone, a
// valid row, broken quoting, a byte-order mark, wrong field counts, a blank
// line, and a hostile value.
func fuzzSeeds(kind store.Kind, valid []byte) [][]byte {
	head := strings.Join(store.Columns(kind), ",")
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
		head + "," + store.Columns(kind)[0] + "\n",
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
var fuzzKinds = []store.Kind{store.Procedures, store.Lesions, store.Histology}

// FuzzImportEndToEnd imports data as the kind chosen by kind into the
// template database, with or without --update. The database stays open
// from one input to the next while imports are refused (which must change
// nothing, and is checked); after an import that committed anything the
// template is put back, so that every input meets the same database and a
// failure reproduces from its input alone.
func FuzzImportEndToEnd(f *testing.F) {
	fx := newFixture(f)
	for i, k := range fuzzKinds {
		for _, seed := range fuzzSeeds(k, fx.valid[k]) {
			f.Add(seed, uint8(i), false)
			f.Add(seed, uint8(i), true)
		}
	}
	e := newEndToEnd(f, fx)
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
// Whether the database changed is watched on that connection of the
// test's own (watch), outside the store, through SQLite's data_version,
// which changes whenever another connection commits anything — an update
// that leaves the counts as they were included — and the counts of
// procedures, lesions and change-log entries are read only when it has.
// Each is one statement prepared once; and the state seen after one input
// is the state before the next (nothing else writes to the database). That
// is what lets a refused input cost little more than the import itself.
type endToEnd struct {
	template string // the template database's file
	resets   int    // how often it was put back
	s        *store.Store
	db       *sql.DB // the test's own connection to the database
	watch    *sql.Conn
	version  *sql.Stmt // SQLite's data_version
	counts   *sql.Stmt
	last     dbState
}

// dbState is what endToEnd watches.
type dbState struct {
	version                      int64
	procedures, lesions, changes int
}

func newEndToEnd(t testing.TB, fx fixture) *endToEnd {
	dir := t.TempDir()
	e := &endToEnd{template: filepath.Join(dir, "template.db")}
	if err := os.WriteFile(e.template, fx.template, 0o600); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(e.close)
	return e
}

// open opens a copy of the template, and the test's own connection to it.
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
	e.s = openStore(t, path)
	if e.db, err = sql.Open("sqlite", "file:"+(&url.URL{Path: path}).EscapedPath()+"?_pragma=busy_timeout(10000)"); err != nil {
		t.Fatal(err)
	}
	if e.watch, err = e.db.Conn(ctx); err != nil {
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

// close closes the store and the test's connection, and removes the
// database.
func (e *endToEnd) close() {
	if e.s == nil {
		return
	}
	e.version.Close()
	e.counts.Close()
	e.watch.Close()
	e.db.Close()
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
	defer settle(runtime.NumGoroutine())
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	res, err := s.Import(ctx, kind, "fuzz.csv", bytes.NewReader(data), store.ImportOptions{Update: update})
	if errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("import of %d bytes did not finish in 20 s", len(data))
	}
	after := e.now(t, before)
	e.last = after
	if err != nil {
		var ie *store.ImportError
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
	if ie := store.CheckFile(kind, "fuzz.csv", bytes.NewReader(data), fuzzKey, fuzzNow); ie != nil {
		t.Fatalf("imported, but the in-memory check refuses it:\n%v", ie)
	}
	if res.Inserted+res.Updated > res.Rows {
		t.Fatalf("stored %d+%d records from %d rows", res.Inserted, res.Updated, res.Rows)
	}
	if kind != store.Histology && after.procedures+after.lesions-before.procedures-before.lesions != res.Inserted {
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

// fuzzCheck is the body of the in-memory fuzz targets: any file gives no
// problem or a list of them, each on the file and a line, with reasons of
// bounded length.
func fuzzCheck(f *testing.F, kind store.Kind) {
	for _, seed := range fuzzSeeds(kind, newFixture(f).valid[kind]) {
		f.Add(seed)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		ie := store.CheckFile(kind, "fuzz.csv", bytes.NewReader(data), fuzzKey, fuzzNow)
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

func FuzzCheckProcedures(f *testing.F) { fuzzCheck(f, store.Procedures) }

func FuzzCheckLesions(f *testing.F) { fuzzCheck(f, store.Lesions) }

func FuzzCheckHistology(f *testing.F) { fuzzCheck(f, store.Histology) }

// TestEndToEndWatch shows that FuzzImportEndToEnd's watch can fail, and
// that the template is really put back: a refused import leaves the
// database as it was seen; an accepted one that commits anything — new
// procedures, or lesions stored again with --update, which adds no
// procedure or lesion — is seen; and after it the same file is accepted
// again, as new, with the counts the template had.
func TestEndToEndWatch(t *testing.T) {
	fx := newFixture(t)
	for _, c := range []struct {
		name    string
		data    []byte
		kind    uint8 // index in fuzzKinds
		update  bool
		changed bool
	}{
		{"refused", []byte("a,b,c\n1,2,3\n"), 0, false, false},
		{"new procedures", fx.valid[store.Procedures], 0, false, true},
		{"stored lesions updated", fx.valid[store.Lesions], 1, true, true},
		{"histology recorded", fx.valid[store.Histology], 2, false, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			e := newEndToEnd(t, fx)
			e.open(t)
			template := e.last
			for i := 1; i <= 2; i++ {
				e.run(t, c.data, c.kind, c.update)
				if changed := e.resets == i; changed != c.changed {
					t.Fatalf("import %d seen as changing the database: %v, want %v (state %+v, template %+v)", i, changed, c.changed, e.last, template)
				}
				if got, want := e.last, template; got.procedures != want.procedures || got.lesions != want.lesions || got.changes != want.changes {
					t.Errorf("after import %d the database holds %+v, the template %+v", i, got, want)
				}
			}
		})
	}
}
