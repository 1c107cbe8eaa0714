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
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"polypledger/logbook"
)

// fuzzTemplate builds the database every fuzz input starts from: a few
// invented procedures with their lesions, some awaiting histology.
func fuzzTemplate(f *testing.F) []byte {
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
// nothing, and is checked); after an accepted one it is made again from
// the template.
func FuzzImportEndToEnd(f *testing.F) {
	template := fuzzTemplate(f)
	valid := fuzzValidFiles(f)
	for i, k := range fuzzKinds {
		for _, seed := range fuzzSeeds(k, valid[k]) {
			f.Add(seed, uint8(i), false)
			f.Add(seed, uint8(i), true)
		}
	}
	dir := f.TempDir()
	var s *Store
	f.Cleanup(func() {
		if s != nil {
			s.Close()
		}
	})
	fresh := 0
	f.Fuzz(func(t *testing.T, data []byte, kindByte uint8, update bool) {
		kind := fuzzKinds[int(kindByte)%len(fuzzKinds)]
		if s == nil {
			fresh++
			path := filepath.Join(dir, fmt.Sprintf("unit%d.db", fresh))
			if err := os.WriteFile(path, template, 0o600); err != nil {
				t.Fatal(err)
			}
			s = openTest(t, path, Options{Now: func() time.Time { return fuzzNow }})
		}
		before := storeCounts(t, s)
		ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
		defer cancel()
		res, err := s.Import(ctx, kind, "fuzz.csv", bytes.NewReader(data), ImportOptions{Update: update})
		if errors.Is(err, context.DeadlineExceeded) {
			t.Fatalf("import of %d bytes did not finish in 20 s", len(data))
		}
		after := storeCounts(t, s)
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
		// An accepted import that changed the database: the next input
		// starts again from the template.
		if after != before {
			defer func() {
				s.Close()
				os.Remove(s.Path())
				s = nil
			}()
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
	})
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
func fuzzValidFiles(f *testing.F) map[Kind][]byte {
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
