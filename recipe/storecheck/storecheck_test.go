// Package storecheck holds the tests that join the recipe and sheet
// packages to the store: what a recipe produces is what the store accepts,
// a unit's exports survive a workbook, and the workbook's formula-safety
// rule is the CSV export's. They live apart so that
// the recipe package's own tests, and its fuzzing, do not link the
// database engine.
package storecheck_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"polypledger/recipe"
	"polypledger/sheet"
	"polypledger/store"
)

const sources = "../../testdata/sources"

func readFile(t *testing.T, path string) string {
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
// export's the same.
func TestFormulaLikeMatchesCSVExport(t *testing.T) {
	for _, v := range []string{"", "=1+1", "+44 20", "-12", "-2.5", "-1e5", "-inf", "-nan", "-0x10", "-A1", "@sum", "\tx", "\rx", "x=1", "P-1", "-", "--1", "1-2"} {
		if got, want := sheet.FormulaLike(v), store.SafeCell(v) != v; got != want {
			t.Errorf("FormulaLike(%q) = %v, but the CSV export neutralises it: %v", v, got, want)
		}
	}
}

func FuzzFormulaLike(f *testing.F) {
	for _, v := range []string{"=1", "-1", "-x", "@", "+", "a"} {
		f.Add(v)
	}
	f.Fuzz(func(t *testing.T, v string) {
		if got, want := sheet.FormulaLike(v), store.SafeCell(v) != v; got != want {
			t.Errorf("FormulaLike(%q) = %v, CSV export %v", v, got, want)
		}
	})
}
