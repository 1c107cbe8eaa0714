package store_test

// Tests of ImportRecords — the entry point for records mapped from other
// files and for workbooks of ours — of the check-only import, and of the
// workbook export, on real SQLite files.

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"polypledger/sheet"
	"polypledger/store"
)

// rec builds a record of kind with the named values (none holding a
// comma).
func rec(kind store.Kind, lineNo int, origin *store.Origin, vals map[string]string) store.Record {
	return store.Record{Kind: kind, Line: lineNo, Values: strings.Split(line(kind, vals), ","), Origin: origin}
}

// proc is a valid procedure record with only the required fields, changed
// by extra.
func proc(lineNo int, o *store.Origin, id string, extra map[string]string) store.Record {
	v := map[string]string{"procedure_id": id, "performed_on": "2026-03-02", "operator_id": "E01", "age": "60", "sex": "F", "indication": "screening", "extent": "caecum"}
	for k, x := range extra {
		v[k] = x
	}
	return rec(store.Procedures, lineNo, o, v)
}

func les(lineNo int, o *store.Origin, id, no string) store.Record {
	return rec(store.Lesions, lineNo, o, map[string]string{"procedure_id": id, "lesion_no": no, "segment": "rectum", "size_mm": "4"})
}

// feedOf hands over the records and the problems as a Feed would.
func feedOf(recs []store.Record, problems ...store.RowError) store.Feed {
	return func(emit func(store.Record) error, refuse func(store.RowError)) error {
		for _, p := range problems {
			refuse(p)
		}
		for _, r := range recs {
			if err := emit(r); err != nil {
				return err
			}
		}
		return nil
	}
}

// roomOrigin names the columns of a procedure-room system's file, as a
// recipe would.
func roomOrigin(kind store.Kind, absent ...string) *store.Origin {
	names := map[string]string{"procedure_id": "ExamID", "age": "PtAge (age)", "performed_on": "ExamDate (performed_on)", "lesion_no": "LesionNo (lesion_no)", "segment": "Location (segment)"}
	o := &store.Origin{File: "room.csv"}
	for _, c := range store.Columns(kind) {
		o.Columns = append(o.Columns, names[c])
		o.Absent = append(o.Absent, contains(absent, c))
	}
	o.AbsentHint = func(column string) string { return "add " + column + " to the recipe's [columns]" }
	return o
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func TestImportRecords(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		po, lo := roomOrigin(store.Procedures), roomOrigin(store.Lesions)
		tests := []struct {
			name     string
			stored   []store.Record // imported first, plainly
			recs     []store.Record
			problems []store.RowError
			want     []string // the problems; none: stored
			counts   map[store.Kind]store.KindCount
		}{
			{
				name:   "procedures and their lesions in one import",
				recs:   []store.Record{proc(2, po, "P1", nil), les(2, lo, "P1", "1"), les(3, lo, "P1", "2"), proc(4, po, "P2", nil)},
				counts: map[store.Kind]store.KindCount{store.Procedures: {New: 2}, store.Lesions: {New: 2}},
			},
			{
				name: "a value is named by the source's column and line",
				recs: []store.Record{proc(2, po, "P1", map[string]string{"age": "200"}), proc(3, po, "P2", nil)},
				want: []string{"room.csv:2: PtAge (age): 200 is outside 18–110"},
			},
			{
				name: "the lesions of a refused procedure are not reported again",
				recs: []store.Record{proc(2, po, "P1", map[string]string{"age": "200"}), les(2, lo, "P1", "1"), les(3, lo, "P1", "2")},
				want: []string{"room.csv:2: PtAge (age): 200 is outside 18–110"},
			},
			{
				name: "a lesion after a refused row is still checked against its stored procedure",
				recs: []store.Record{proc(2, po, "P1", map[string]string{"age": "200"}), proc(3, po, "P2", nil), les(3, lo, "P2", "1"), les(4, lo, "P9", "1")},
				want: []string{"room.csv:2: PtAge (age): 200 is outside 18–110", "room.csv:4: ExamID: P9 is not in the logbook (import its procedure first)"},
			},
			{
				name:   "a procedure already stored: its lesions are not reported as clashes too",
				stored: []store.Record{proc(1, nil, "P1", nil), les(1, nil, "P1", "1")},
				recs:   []store.Record{proc(2, po, "P1", nil), les(2, lo, "P1", "1")},
				want:   []string{"room.csv:2: ExamID: P1 is already in the logbook (import with --update to replace it)"},
			},
			{
				name: "a required column the file lacks is reported once",
				recs: []store.Record{proc(2, roomOrigin(store.Procedures, "performed_on"), "P1", map[string]string{"performed_on": ""}),
					proc(3, roomOrigin(store.Procedures, "performed_on"), "P2", map[string]string{"performed_on": ""})},
				want: []string{"room.csv:2: ExamDate (performed_on): is required, on this row and every other: room.csv has no column for it; add performed_on to the recipe's [columns]"},
			},
			{
				name: "a record repeated in the import",
				recs: []store.Record{proc(2, po, "P1", nil), les(2, lo, "P1", "1"), les(3, lo, "P1", "1")},
				want: []string{"room.csv:3: LesionNo (lesion_no): lesion 1 of procedure P1 appears more than once in this file"},
			},
			{
				name:     "the feed's own problems refuse the import, listed in line order with the store's",
				recs:     []store.Record{proc(2, po, "P1", map[string]string{"age": "17"}), proc(8, po, "P2", nil)},
				problems: []store.RowError{{File: "room.csv", Line: 7, Column: "Referral (indication)", Reason: `"Bowel scope" is not in the recipe: add it under [values.indication]`}},
				want:     []string{"room.csv:2: PtAge (age): 17 is outside 18–110", `room.csv:7: Referral (indication): "Bowel scope" is not in the recipe: add it under [values.indication]`},
			},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := openUnit(t, be)
				ctx := context.Background()
				if tt.stored != nil {
					if _, err := s.ImportRecords(ctx, "first", feedOf(tt.stored), store.ImportOptions{}); err != nil {
						t.Fatal(err)
					}
				}
				before := counts(t, s)
				res, err := s.ImportRecords(ctx, "room.csv", feedOf(tt.recs, tt.problems...), store.ImportOptions{})
				if tt.want == nil {
					if err != nil {
						t.Fatal(err)
					}
					if !reflect.DeepEqual(res.Kinds, tt.counts) {
						t.Errorf("counts %v, want %v", res.Kinds, tt.counts)
					}
					return
				}
				ie := importError(t, err)
				if got := errorLines(ie); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(tt.want, "\n"))
				}
				words := func(n int, one string) string {
					if n == 1 {
						return "1 " + one
					}
					return fmt.Sprintf("%d %ss", n, one)
				}
				if !strings.HasSuffix(ie.Error(), "room.csv: nothing was imported ("+words(len(tt.want), "problem")+" in "+words(len(tt.recs), "row")+")") {
					t.Errorf("last line of %q", ie.Error())
				}
				if after := counts(t, s); after != before {
					t.Errorf("a refused import changed the logbook: %v → %v", before, after)
				}
			})
		}
	})
}

// TestImportCheckStoresNothing checks files against a logbook: the result
// says what would be stored (new, replacing, clashing, new roster ids),
// the problems are those an import finds, and the database file is the
// same, byte for byte, afterwards.
func TestImportCheckStoresNothing(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "unit.db")
	s := openUnitAt(t, path)
	mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+procRow("P1", 60)+"\n")
	mustImport(t, s, store.Lesions, "l.csv", lesHeader+"\n"+lesRow("P1", 1, "rectum", "4", nil)+"\n")
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	po, lo := roomOrigin(store.Procedures), roomOrigin(store.Lesions)
	tests := []struct {
		name   string
		update bool
		recs   []store.Record
		want   []string
		counts map[store.Kind]store.KindCount
		roster []string
	}{
		{
			name:   "new records, a new endoscopist and a trainee",
			recs:   []store.Record{proc(2, po, "P2", map[string]string{"operator_id": "E07", "trainee_id": "T03"}), les(2, lo, "P2", "1"), les(3, lo, "P2", "2")},
			counts: map[store.Kind]store.KindCount{store.Procedures: {New: 1}, store.Lesions: {New: 2}},
			roster: []string{"E07", "T03"},
		},
		{
			name:   "records already stored, with update",
			update: true,
			recs:   []store.Record{proc(2, po, "P1", map[string]string{"age": "61"}), les(2, lo, "P1", "1"), les(3, lo, "P1", "2")},
			counts: map[store.Kind]store.KindCount{store.Procedures: {Replacing: 1}, store.Lesions: {Replacing: 1, New: 1}},
		},
		{
			name:   "records already stored, without update, and a bad value",
			recs:   []store.Record{proc(2, po, "P1", nil), proc(3, po, "P3", map[string]string{"age": "7"}), proc(4, po, "P4", nil)},
			want:   []string{"room.csv:2: ExamID: P1 is already in the logbook (import with --update to replace it)", "room.csv:3: PtAge (age): 7 is outside 18–110"},
			counts: map[store.Kind]store.KindCount{store.Procedures: {New: 1, Clashing: 1}},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := openUnitAt(t, path)
			res, err := s.ImportRecords(ctx, "room.csv", feedOf(tt.recs), store.ImportOptions{Check: true, Update: tt.update})
			if err := s.Close(); err != nil {
				t.Fatal(err)
			}
			if tt.want == nil && err != nil {
				t.Fatal(err)
			}
			if tt.want != nil {
				ie := importError(t, err)
				if got := errorLines(ie); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(tt.want, "\n"))
				}
				if !strings.Contains(ie.Error(), "room.csv: checked, nothing stored (2 problems in 3 rows)") {
					t.Errorf("last line of\n%s", ie.Error())
				}
			}
			if !reflect.DeepEqual(res.Kinds, tt.counts) {
				t.Errorf("counts %v, want %v", res.Kinds, tt.counts)
			}
			var ids []string
			for _, r := range res.RosterAdded {
				ids = append(ids, r.ID)
			}
			if !reflect.DeepEqual(ids, tt.roster) {
				t.Errorf("new roster ids %v, want %v", ids, tt.roster)
			}
			after, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(before, after) {
				t.Error("the database file changed")
			}
			if _, err := os.Stat(path + "-wal"); !errors.Is(err, os.ErrNotExist) {
				t.Errorf("a write-ahead log was left beside the database: %v", err)
			}
		})
	}
}

// importWorkbook imports every sheet of a workbook of ours, named after its
// kind, in one ImportRecords.
func importWorkbook(t *testing.T, s *store.Store, name string, book []byte) (store.ImportResult, error) {
	t.Helper()
	var tables []*sheet.Table
	for _, k := range kinds {
		tb, err := sheet.Open(name, bytes.NewReader(book), sheet.Options{Sheet: string(k)})
		if err != nil {
			t.Fatal(err)
		}
		defer tb.Close()
		tables = append(tables, tb)
	}
	return s.ImportRecords(context.Background(), name, func(emit func(store.Record) error, refuse func(store.RowError)) error {
		for i, tb := range tables {
			if err := store.SheetFeed(kinds[i], tb)(emit, refuse); err != nil {
				return err
			}
		}
		return nil
	}, store.ImportOptions{})
}

func exportWorkbook(t *testing.T, s *store.Store) []byte {
	t.Helper()
	var b bytes.Buffer
	n, err := s.ExportWorkbook(context.Background(), kinds, &b)
	if err != nil {
		t.Fatal(err)
	}
	if n[store.Procedures] == 0 {
		t.Fatalf("the workbook holds no procedures: %v", n)
	}
	return b.Bytes()
}

// TestWorkbookRoundTrip exports the fixture that uses every column and
// code, and identifiers a spreadsheet would run as formulas, as a workbook
// and imports it into a new database: the same records come back, and the
// CSV exports of both databases are the same bytes.
func TestWorkbookRoundTrip(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		a := openUnit(t, be)
		files := map[store.Kind]string{}
		for _, k := range kinds {
			files[k] = fixture(t, string(k)+".csv")
		}
		importAll(t, a, files)
		importHostile(t, a)

		b := openUnit(t, be)
		if _, err := importWorkbook(t, b, "unit.xlsx", exportWorkbook(t, a)); err != nil {
			t.Fatal(err)
		}
		first, second := exportAll(t, a), exportAll(t, b)
		for _, k := range kinds {
			if first[k] != second[k] {
				t.Errorf("%s: the records differ after the workbook round trip at %s", k, firstDifference(second[k], first[k]))
			}
		}
		if ca, cb := counts(t, a), counts(t, b); ca[0] != cb[0] || ca[1] != cb[1] {
			t.Errorf("procedures and lesions: %v before, %v after", ca, cb)
		}
	})
}

// TestWorkbookProblemsNameTheSheetAndRow imports a workbook of ours whose
// procedures sheet has a bad value and lacks a column: the messages name
// the sheet and its own row numbers, as CSV messages name the line.
func TestWorkbookProblemsNameTheSheetAndRow(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		var book bytes.Buffer
		w, err := sheet.NewWriter(&book)
		if err != nil {
			t.Fatal(err)
		}
		header := store.Columns(store.Procedures)
		header = append(header[:1:1], header[2:]...) // no performed_on
		must := func(err error) {
			t.Helper()
			if err != nil {
				t.Fatal(err)
			}
		}
		must(w.AddSheet("procedures", header, nil))
		row := func(id, age string) []string {
			vals := map[string]string{"procedure_id": id, "operator_id": "E01", "age": age, "sex": "F", "indication": "screening", "extent": "caecum"}
			out := make([]string, len(header))
			for i, h := range header {
				out[i] = vals[h]
			}
			return out
		}
		must(w.WriteRow(row("P1", "60")))
		must(w.WriteRow(row("P2", "200")))
		for _, k := range kinds[1:] {
			must(w.AddSheet(string(k), store.Columns(k), nil))
		}
		must(w.Close())
		s := openUnit(t, be)
		_, err = importWorkbook(t, s, "unit.xlsx", book.Bytes())
		want := []string{
			"unit.xlsx[procedures]:1: performed_on: required column is missing from the header",
			"unit.xlsx[procedures]:3: age: 200 is outside 18–110",
		}
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, want) {
			t.Errorf("problems\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
		}
	})
}
