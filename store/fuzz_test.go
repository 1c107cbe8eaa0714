package store

// Fuzz targets for the three CSV importers: any bytes, imported into a
// database that already holds a few procedures and lesions, must give either
// an error with the database unchanged or a success whose records pass
// Check — never a panic, a hang or a partial import. Run briefly by
// scripts/fuzz-smoke; seed corpora are in testdata/fuzz.

import (
	"bytes"
	"context"
	"errors"
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
func fuzzSeeds(f *testing.F, kind Kind, valid []byte) {
	head := strings.Join(Columns(kind), ",")
	lines := strings.SplitN(string(valid), "\n", 3)
	row := ""
	if len(lines) > 1 {
		row = lines[1]
	}
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
	} {
		f.Add([]byte(s), false)
		f.Add([]byte(s), true)
	}
}

// fuzzImport is the body shared by the importer fuzz targets.
func fuzzImport(f *testing.F, kind Kind, valid []byte) {
	template := fuzzTemplate(f)
	fuzzSeeds(f, kind, valid)
	f.Fuzz(func(t *testing.T, data []byte, update bool) {
		path := filepath.Join(t.TempDir(), "unit.db")
		if err := os.WriteFile(path, template, 0o600); err != nil {
			t.Fatal(err)
		}
		s := openTest(t, path, Options{Now: func() time.Time { return pastEnd.AddDate(0, 1, 0) }})
		defer s.Close()
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

// storeCounts counts an open store's rows.
func storeCounts(t *testing.T, s *Store) dbCounts {
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
		if err := s.db.QueryRow(q.sql).Scan(q.n); err != nil {
			t.Fatal(err)
		}
	}
	return c
}

func FuzzImportProcedures(f *testing.F) {
	fuzzImport(f, Procedures, proceduresCSV(f, inventedCases(f, 3, "NEW", 31)))
}

func FuzzImportLesions(f *testing.F) {
	// Lesions of the template's own procedures: valid with --update.
	fuzzImport(f, Lesions, lesionsCSV(f, inventedCases(f, 8, "", 29)))
}

func FuzzImportHistology(f *testing.F) {
	var b bytes.Buffer
	b.WriteString(strings.Join(Columns(Histology), ",") + "\n")
	for _, c := range inventedCases(f, 8, "", 29) {
		for _, l := range c.Lesions {
			if l.Histology == logbook.HistPending {
				b.WriteString(c.ID + "," + logbook.FormatCount(l.LesionNo) + ",tubular_adenoma,low," + logbook.FormatDate(c.PerformedOn) + "\n")
			}
		}
	}
	fuzzImport(f, Histology, b.Bytes())
}
