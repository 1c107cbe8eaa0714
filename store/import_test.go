package store_test

// Tests of CSV import through the public API, on real SQLite files: header
// handling, all-or-nothing refusal with FILE:LINE: column: reason messages,
// the error cap, duplicates and --update, histology results, roster
// additions and progress reports.

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"
	"time"

	"polypledger/logbook"
	"polypledger/store"
)

// today is the fixed clock of the import and export tests.
var today = time.Date(2026, 11, 15, 9, 0, 0, 0, time.UTC)

var unitKey = []byte("import test unit key (invented)")

// openUnit opens a new database of the backend with the fixed clock.
func openUnit(t *testing.T, be store.TestBackend) *store.Store {
	t.Helper()
	return openUnitAt(t, be.NewDB(t))
}

func openUnitAt(t *testing.T, path string) *store.Store {
	t.Helper()
	s, err := store.Open(context.Background(), path, store.Options{Key: unitKey, Now: func() time.Time { return today }, User: "importer"})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

func importText(s *store.Store, kind store.Kind, name, text string, update bool) (store.ImportResult, error) {
	return s.Import(context.Background(), kind, name, strings.NewReader(text), store.ImportOptions{Update: update})
}

func mustImport(t *testing.T, s *store.Store, kind store.Kind, name, text string) store.ImportResult {
	t.Helper()
	res, err := importText(s, kind, name, text, false)
	if err != nil {
		t.Fatalf("import %s: %v", name, err)
	}
	return res
}

func exportText(t *testing.T, s *store.Store, kind store.Kind) string {
	t.Helper()
	var b bytes.Buffer
	if _, err := s.Export(context.Background(), kind, &b); err != nil {
		t.Fatalf("export %s: %v", kind, err)
	}
	return b.String()
}

func fixture(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "roundtrip", name))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// importError asserts that err is an *store.ImportError and returns it.
func importError(t *testing.T, err error) *store.ImportError {
	t.Helper()
	var ie *store.ImportError
	if !errors.As(err, &ie) {
		t.Fatalf("error %v (%T), want an *store.ImportError", err, err)
	}
	return ie
}

func errorLines(ie *store.ImportError) []string {
	var out []string
	for _, e := range ie.Errors {
		out = append(out, e.String())
	}
	return out
}

// counts returns how many procedures, lesions and change-log rows are stored.
func counts(t *testing.T, s *store.Store) [3]int {
	t.Helper()
	ctx := context.Background()
	var c [3]int
	var err error
	if c[0], err = s.CountProcedures(ctx, store.ListQuery{}); err != nil {
		t.Fatal(err)
	}
	err = s.ForEachCase(ctx, store.CaseFilter{}, func(cs *logbook.Case) error { c[1] += len(cs.Lesions); return nil })
	if err != nil {
		t.Fatal(err)
	}
	log, err := s.ChangeLog(ctx, 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	c[2] = len(log)
	return c
}

// Every column of a kind is required in the header but lesions' tattoo
// (architecture.md, "CSV interchange"); rows are built by column name.
var (
	procHeader = strings.Join(store.Columns(store.Procedures), ",")
	lesHeader  = strings.Join(store.Columns(store.Lesions), ",")
	histHeader = strings.Join(store.Columns(store.Histology), ",")
)

// line writes one CSV row with the named values in the kind's column order
// and every other cell empty.
func line(kind store.Kind, vals map[string]string) string {
	cols := store.Columns(kind)
	cells := make([]string, len(cols))
	for i, c := range cols {
		cells[i] = vals[c]
		delete(vals, c)
	}
	if len(vals) > 0 {
		panic(fmt.Sprintf("no such columns: %v", vals))
	}
	return strings.Join(cells, ",")
}

// procRowWith is a valid procedures.csv row with only the required fields,
// changed by extra.
func procRowWith(id string, age int, extra map[string]string) string {
	vals := map[string]string{"procedure_id": id, "performed_on": "2026-03-02", "operator_id": "E01",
		"age": fmt.Sprint(age), "sex": "F", "indication": "screening", "extent": "caecum"}
	for k, v := range extra {
		vals[k] = v
	}
	return line(store.Procedures, vals)
}

func procRow(id string, age int) string { return procRowWith(id, age, nil) }

// lesRow is a lesions.csv row for lesion no of procedure id with the given
// segment and size, changed by extra.
func lesRow(id string, no int, segment string, size string, extra map[string]string) string {
	vals := map[string]string{"procedure_id": id, "lesion_no": fmt.Sprint(no), "segment": segment, "size_mm": size}
	for k, v := range extra {
		vals[k] = v
	}
	return line(store.Lesions, vals)
}

func TestImportHeaderInAnyOrder(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		canonical := fixture(t, "procedures.csv")
		rows := strings.Split(strings.TrimSuffix(canonical, "\n"), "\n")
		// Reverse the columns of every row (the header with them).
		var b strings.Builder
		for _, r := range rows {
			cells := strings.Split(r, ",")
			for i, j := 0, len(cells)-1; i < j; i, j = i+1, j-1 {
				cells[i], cells[j] = cells[j], cells[i]
			}
			b.WriteString(strings.Join(cells, ",") + "\n")
		}
		res := mustImport(t, s, store.Procedures, "reversed.csv", b.String())
		if res.Rows != len(rows)-1 || res.Inserted != len(rows)-1 {
			t.Errorf("result %+v, want %d rows inserted", res, len(rows)-1)
		}
		if got := exportText(t, s, store.Procedures); got != canonical {
			t.Errorf("export after importing reversed columns differs from the canonical file:\n%s", got)
		}

		// The optional tattoo column may be left out of lesions.csv; a header
		// may carry a byte-order mark and spaces around names.
		noTattoo := store.Columns(store.Lesions)[:len(store.Columns(store.Lesions))-1]
		head := "\ufeff procedure_id , " + strings.Join(noTattoo[1:], ",")
		mustImport(t, s, store.Lesions, "lesions.csv", head+"\nFX001,1,caecum,4"+strings.Repeat(",", len(noTattoo)-4)+"\n")
		c, err := s.Case(context.Background(), "FX001")
		if err != nil || len(c.Lesions) != 1 || c.Lesions[0].Tattoo != logbook.Unrecorded || c.Lesions[0].SizeMM != 4 {
			t.Errorf("lesion imported without the tattoo column: %+v, %v", c.Lesions, err)
		}
	})
}

// TestImportHeaderAndRowProblemsInOneRun: problems of the header do not
// hide those of the rows; one run lists both (unknown, repeated and
// missing columns, and every bad value of the rows, which are read by the
// columns the header does name).
func TestImportHeaderAndRowProblemsInOneRun(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		noAge := strings.NewReplacer(",age,", ",", ",extent,", ",").Replace(procHeader)
		tests := []struct {
			name   string
			kind   store.Kind
			header string
			row    string
			want   []string
		}{
			{"unknown column", store.Procedures, procHeader + ",colour", procRowWith("P1", 60, map[string]string{"performed_on": "not-a-date"}) + ",blue", []string{
				"h.csv:1: colour: is not a column of this kind of file (expected: " + strings.Join(store.Columns(store.Procedures), ", ") + ")",
				`h.csv:2: performed_on: "not-a-date" is not a real calendar date (YYYY-MM-DD)`,
			}},
			{"missing required columns", store.Procedures, noAge, "P1,2026-03-02,E01,,,,,F,screening,,,,,,,,,,,,,,,,,", []string{
				"h.csv:1: age: required column is missing from the header",
				"h.csv:1: extent: required column is missing from the header",
			}},
			{"missing required columns and a bad row", store.Procedures, noAge, "P1,2026-03-02,E01,,,,,Q,screening,,,,,,,,,,,,,,,,,", []string{
				"h.csv:1: age: required column is missing from the header",
				"h.csv:1: extent: required column is missing from the header",
				`h.csv:2: sex: "Q" is not one of F, M, X, U`,
			}},
			{"repeated column", store.Procedures, procHeader + ",age", procRow("P1", 17) + ",70", []string{
				"h.csv:1: age: appears twice in the header",
				"h.csv:2: age: 17 is outside 18–110",
			}},
			{"unnamed column", store.Procedures, procHeader + ",", procRow("P1", 60) + ",x", []string{
				"h.csv:1: column 29: has no name in the header",
			}},
			{"lesion columns in a histology file", store.Histology, "procedure_id,lesion_no,histology,dysplasia,reported_on,segment", "P1,1,ssl,moderate,2026-03-10,rectum", []string{
				"h.csv:1: segment: is not a column of this kind of file (expected: procedure_id, lesion_no, histology, dysplasia, reported_on)",
				`h.csv:2: dysplasia: "moderate" is not one of none, low, high`,
				"h.csv:2: procedure_id: P1 is not in the logbook",
			}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := openUnit(t, be)
				before := counts(t, s)
				_, err := importText(s, tt.kind, "h.csv", tt.header+"\n"+tt.row+"\n", false)
				ie := importError(t, err)
				if got := errorLines(ie); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n got %q\nwant %q", got, tt.want)
				}
				if ie.Rows != 1 {
					t.Errorf("%d data rows read, want 1", ie.Rows)
				}
				if after := counts(t, s); after != before {
					t.Errorf("stored counts changed from %v to %v", before, after)
				}
			})
		}
		s := openUnit(t, be)
		_, err := importText(s, store.Procedures, "empty.csv", "", false)
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, []string{"empty.csv:1: header: the file is empty"}) {
			t.Errorf("empty file: %q", got)
		}
	})
}

// TestImportEveryProblemInOneRun: a file whose rows break several rules at
// once — values, a row's own rules, a repeat within the file, a clash with
// the logbook and a reference to a procedure that is not there — lists all
// of them in one run, so that nothing new appears once these are fixed.
func TestImportEveryProblemInOneRun(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "seed.csv", procHeader+"\n"+procRow("P0", 50)+"\n")
		procs := strings.Join([]string{
			procHeader,
			procRowWith("P1", 17, map[string]string{"sex": "Q", "extent": ""}), // three bad values in one row
			procRow("P0", 60), // already in the logbook
			procRowWith("P1", 61, map[string]string{"performed_on": "2025-02-29"}),   // a repeat, with a bad date too
			procRowWith("P2", 62, map[string]string{"incomplete_reason": "looping"}), // a cross-field rule
		}, "\n") + "\n"
		_, err := importText(s, store.Procedures, "p.csv", procs, false)
		want := []string{
			`p.csv:2: sex: "Q" is not one of F, M, X, U`,
			"p.csv:2: age: 17 is outside 18–110",
			"p.csv:2: extent: is required",
			"p.csv:3: procedure_id: P0 is already in the logbook (import with --update to replace it)",
			`p.csv:4: performed_on: "2025-02-29" is not a real calendar date (YYYY-MM-DD)`,
			"p.csv:4: procedure_id: P1 appears more than once in this file",
			"p.csv:5: incomplete_reason: is given but extent is caecum, not incomplete",
		}
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, want) {
			t.Errorf("procedures: problems\n got %q\nwant %q", got, want)
		}
		les := strings.Join([]string{
			lesHeader,
			lesRow("P9", 1, "rectum", "200", nil), // bad size and an unknown procedure
			lesRow("P0", 1, "colon", "3", nil),    // bad segment
			lesRow("P0", 1, "rectum", "3", nil),   // the same lesion again
		}, "\n") + "\n"
		_, err = importText(s, store.Lesions, "l.csv", les, false)
		want = []string{
			"l.csv:2: size_mm: 200 is outside 1–150",
			"l.csv:2: procedure_id: P9 is not in the logbook (import its procedure first)",
			`l.csv:3: segment: "colon" is not one of caecum, ascending, hepatic_flexure, transverse, splenic_flexure, descending, sigmoid, rectum`,
			"l.csv:4: lesion_no: lesion 1 of procedure P0 appears more than once in this file",
		}
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, want) {
			t.Errorf("lesions: problems\n got %q\nwant %q", got, want)
		}
		if c := counts(t, s); c[0] != 1 || c[1] != 0 {
			t.Errorf("stored %v after refused imports", c)
		}
	})
}

// TestImportHostileFiles offers files that are not what they claim: each
// is refused with a message naming the line and column, quickly, without
// echoing a hospital number or a huge value.
func TestImportHostileFiles(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		hospital := "RXH7654321"
		row := procRowWith("P1", 60, map[string]string{"patient_ref": hospital})
		huge := strings.Repeat("A", 100<<20)
		tests := []struct {
			name string
			file string
			want []string
		}{
			{"no header row", row + "\n" + procRow("P2", 61) + "\n", []string{
				"x.csv:1: header: the first line is not a header row: none of its 28 values names a column of a procedures file (they are not shown, as they may be patient data); the first line must name the columns (expected: " + strings.Join(store.Columns(store.Procedures), ", ") + ")",
			}},
			{"a hospital number as a column name", procHeader + "," + hospital + "\n" + procRow("P1", 60) + ",x\n", []string{
				"x.csv:1: column 29: a value of 10 characters (not shown, as it may identify a patient) is not a column of this kind of file (expected: " + strings.Join(store.Columns(store.Procedures), ", ") + ")",
			}},
			{"a hospital number in the wrong column", procHeader + "\n" + procRowWith("P1", 60, map[string]string{"sex": hospital}) + "\n", []string{
				"x.csv:2: sex: a value of 10 characters (not shown, as it may identify a patient) is not one of F, M, X, U",
			}},
			{"Latin-1 bytes", procHeader + "\n" + procRowWith("P1", 60, map[string]string{"operator_id": "Dr M\xfcller"}) + "\n", []string{
				"x.csv:2: operator_id: is not valid UTF-8 text (save the file as UTF-8 CSV)",
			}},
			{"UTF-16", "\xff\xfe" + procHeader, []string{
				"x.csv:1: header: the file is saved as UTF-16 text; save it as UTF-8 CSV",
			}},
			{"a value over the limit", procHeader + "\n" + procRowWith("P1", 60, map[string]string{"operator_id": strings.Repeat("E", 5000)}) + "\n", []string{
				"x.csv:2: operator_id: is 5000 bytes long; no value may be longer than 1024",
			}},
			{"a 100 MB value", procHeader + "\n" + procRowWith("P1", 60, map[string]string{"operator_id": huge}) + "\n", []string{
				"x.csv:2: row: is longer than 65536 bytes, far longer than any row of a procedures file; the rest of the file was not read (is it the right file? a quote left open makes the rest of a file one value)",
			}},
			{"a quote left open", procHeader + "\n" + procRow("P1", 60) + "\n\"" + strings.Repeat(procRow("P2", 61)+"\n", 10000), []string{
				// The line is where the reader gave up, within the open quote.
				"x.csv:LINE: row: is longer than 65536 bytes, far longer than any row of a procedures file; the rest of the file was not read (is it the right file? a quote left open makes the rest of a file one value)",
			}},
			{"a huge header", strings.Repeat("x", 200<<10), []string{
				"x.csv:1: row: is longer than 65536 bytes, far longer than any row of a procedures file; the rest of the file was not read (is it the right file? a quote left open makes the rest of a file one value)",
			}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := openUnit(t, be)
				before := counts(t, s)
				_, err := importText(s, store.Procedures, "x.csv", tt.file, false)
				ie := importError(t, err)
				got := errorLines(ie)
				if len(got) == 1 && strings.Contains(tt.want[0], ":LINE:") {
					if n := ie.Errors[0].Line; n < 3 || n > 10002 {
						t.Errorf("the open quote is reported at line %d, outside the file's rows", n)
					}
					got[0] = strings.Replace(got[0], fmt.Sprintf(":%d:", ie.Errors[0].Line), ":LINE:", 1)
				}
				if !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n got %q\nwant %q", got, tt.want)
				}
				if msg := ie.Error(); strings.Contains(strings.ToUpper(msg), hospital) || len(msg) > 4000 {
					t.Errorf("the message shows the hospital number or is %d bytes long", len(msg))
				}
				if after := counts(t, s); after != before {
					t.Errorf("stored counts changed from %v to %v", before, after)
				}
			})
		}
	})
}

// endless is a reader that never ends, like /dev/zero.
type endless struct{ b byte }

func (e endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = e.b
	}
	return len(p), nil
}

// TestImportEndlessInput reads a file that never ends: the import stops at
// the first over-long row instead of reading on until memory runs out.
func TestImportEndlessInput(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		for _, b := range []byte{0, 'x', '"'} {
			s := openUnit(t, be)
			_, err := s.Import(context.Background(), store.Procedures, "/dev/zero", endless{b}, store.ImportOptions{})
			ie := importError(t, err)
			if len(ie.Errors) != 1 || !strings.Contains(ie.Errors[0].String(), "/dev/zero:1: row: is longer than 65536 bytes") {
				t.Errorf("endless %q: %q", b, errorLines(ie))
			}
		}
	})
}

// TestImportTwoBrokenRows is the acceptance line: a file with two
// broken rows names both lines and columns and stores nothing.
func TestImportTwoBrokenRows(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		before := counts(t, s)
		file := strings.Join([]string{
			procHeader,
			procRow("P1", 60),
			procRow("P2", 17),
			procRow("P3", 70),
			procRowWith("P4", 55, map[string]string{"performed_on": "2025-02-29", "sex": "M"}),
		}, "\n") + "\n"
		_, err := importText(s, store.Procedures, "two-broken.csv", file, false)
		ie := importError(t, err)
		want := []string{
			"two-broken.csv:3: age: 17 is outside 18–110",
			`two-broken.csv:5: performed_on: "2025-02-29" is not a real calendar date (YYYY-MM-DD)`,
		}
		if got := errorLines(ie); !reflect.DeepEqual(got, want) {
			t.Errorf("problems\n got %q\nwant %q", got, want)
		}
		wantText := strings.Join(want, "\n") + "\ntwo-broken.csv: nothing was imported (2 problems in 4 rows)"
		if ie.Error() != wantText {
			t.Errorf("message\n got %q\nwant %q", ie.Error(), wantText)
		}
		if after := counts(t, s); after != before {
			t.Errorf("stored counts changed from %v to %v: the valid rows were kept", before, after)
		}
		if r, _ := s.Roster(context.Background()); len(r) != 0 {
			t.Errorf("roster additions of a refused import were kept: %v", r)
		}
	})
}

func TestImportAllOrNothing(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		tests := []struct {
			name string
			kind store.Kind
			file string
			want []string
		}{
			{"bad last procedure", store.Procedures,
				procHeader + "\n" + procRow("P1", 60) + "\n" + procRow("P2", 61) + "\n" + procRow("P3", 62) + ",extra\n",
				[]string{"f.csv:4: row: has 29 fields but the header has 28"}},
			{"bad code", store.Procedures, procHeader + "\n" + procRowWith("P1", 60, map[string]string{"indication": "fit"}) + "\n",
				[]string{`f.csv:2: indication: "fit" is not one of screening, stool_test_positive, surveillance, diagnostic, therapeutic`}},
			{"future date", store.Procedures, procHeader + "\n" + procRowWith("P1", 60, map[string]string{"performed_on": "2026-11-16"}) + "\n",
				[]string{"f.csv:2: performed_on: 2026-11-16 is in the future"}},
			{"id twice in one file", store.Procedures, procHeader + "\n" + procRow("P1", 60) + "\n" + procRow("P1", 61) + "\n",
				[]string{"f.csv:3: procedure_id: P1 appears more than once in this file"}},
			{"cross-field rule", store.Procedures, procHeader + "\n" + procRowWith("P1", 60, map[string]string{"incomplete_reason": "looping"}) + "\n",
				[]string{"f.csv:2: incomplete_reason: is given but extent is caecum, not incomplete"}},
			{"unclosed quote", store.Procedures, procHeader + "\n" + procRow("P1", 60) + "\n\"P2,2026-03-02\n",
				[]string{`f.csv:3: row: not valid CSV: extraneous or missing " in quoted-field`}},
			{"lesion rule", store.Lesions, lesHeader + "\n" + lesRow("P0", 1, "rectum", "3", map[string]string{"retrieved": "no", "sent_to_pathology": "yes"}) + "\n",
				[]string{"f.csv:2: sent_to_pathology: is yes but retrieved is not yes"}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := openUnit(t, be)
				// One procedure is already stored so that lesion files have a home.
				mustImport(t, s, store.Procedures, "seed.csv", procHeader+"\n"+procRow("P0", 50)+"\n")
				before := counts(t, s)
				_, err := importText(s, tt.kind, "f.csv", tt.file, false)
				ie := importError(t, err)
				if got := errorLines(ie); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n got %q\nwant %q", got, tt.want)
				}
				if after := counts(t, s); after != before {
					t.Errorf("stored counts changed from %v to %v", before, after)
				}
			})
		}
	})
}

func TestImportErrorCap(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		var b strings.Builder
		b.WriteString(procHeader + "\n")
		for i := range 150 {
			b.WriteString(procRow(fmt.Sprintf("P%d", i), 200) + "\n")
		}
		_, err := importText(s, store.Procedures, "many.csv", b.String(), false)
		ie := importError(t, err)
		if len(ie.Errors) != store.MaxReportedErrors || store.MaxReportedErrors != 100 || ie.More != 50 || ie.Rows != 150 {
			t.Fatalf("listed %d, more %d, rows %d; want 100 listed, 50 more, 150 rows", len(ie.Errors), ie.More, ie.Rows)
		}
		if first, last := ie.Errors[0].String(), ie.Errors[99].String(); first != "many.csv:2: age: 200 is outside 18–110" || last != "many.csv:101: age: 200 is outside 18–110" {
			t.Errorf("first and last listed: %q, %q", first, last)
		}
		msg := ie.Error()
		if !strings.HasSuffix(msg, "many.csv: … and 50 more problems not listed\nmany.csv: nothing was imported (150 problems in 150 rows)") {
			t.Errorf("message ends %q", msg[max(0, len(msg)-160):])
		}
		if n := strings.Count(msg, "\n") + 1; n != 102 {
			t.Errorf("message has %d lines, want 100 problems + 2", n)
		}
		if c := counts(t, s); c != [3]int{} {
			t.Errorf("stored %v", c)
		}
	})
}

func TestImportDuplicateProcedure(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "first.csv", procHeader+"\n"+procRow("P1", 60)+"\n"+procRow("P2", 61)+"\n")
		before := counts(t, s)

		again := procHeader + "\n" + procRow("P3", 62) + "\n" + procRow("P1", 64) + "\n"
		_, err := importText(s, store.Procedures, "again.csv", again, false)
		want := []string{"again.csv:3: procedure_id: P1 is already in the logbook (import with --update to replace it)"}
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, want) {
			t.Errorf("without --update: %q, want %q", got, want)
		}
		if after := counts(t, s); after != before {
			t.Errorf("a refused import stored something: %v → %v", before, after)
		}

		res, err := importText(s, store.Procedures, "again.csv", again, true)
		if err != nil {
			t.Fatal(err)
		}
		if res.Rows != 2 || res.Inserted != 1 || res.Updated != 1 {
			t.Errorf("with --update: %+v, want 2 rows, 1 new, 1 updated", res)
		}
		c, err := s.Case(ctx, "P1")
		if err != nil || c.Age != 64 {
			t.Errorf("P1 after update: age %d, %v; want 64", c.Age, err)
		}
		log, _ := s.ChangeLog(ctx, 1)
		if len(log) != 1 || log[0].Action != "update" || log[0].Record != "procedure P1" ||
			!strings.Contains(log[0].Old, `"age":"60"`) || !strings.Contains(log[0].New, `"age":"64"`) {
			t.Errorf("change log of the update: %+v; want old age 60 → new age 64", log)
		}
	})
}

func TestImportEveryRowIsLogged(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+procRow("P1", 60)+"\n"+procRow("P2", 61)+"\n")
		mustImport(t, s, store.Lesions, "l.csv", lesHeader+"\n"+
			lesRow("P1", 1, "rectum", "3", map[string]string{"retrieved": "yes", "sent_to_pathology": "yes", "histology": "pending"})+"\n"+
			lesRow("P2", 1, "caecum", "8", map[string]string{"retrieved": "no", "sent_to_pathology": "no"})+"\n")
		mustImport(t, s, store.Histology, "h.csv", histHeader+"\nP1,1,hyperplastic,none,2026-03-10\n")
		log, err := s.ChangeLog(ctx, 100)
		if err != nil {
			t.Fatal(err)
		}
		var got []string
		for i := len(log) - 1; i >= 0; i-- {
			e := log[i]
			if e.User != "importer" || !e.At.Equal(today) {
				t.Errorf("entry %q by %q at %v", e.Record, e.User, e.At)
			}
			got = append(got, e.Action+" "+e.Record)
		}
		want := []string{"insert roster E01", "insert procedure P1", "insert procedure P2", "insert lesion P1#1", "insert lesion P2#1", "update lesion P1#1"}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("change log\n got %q\nwant %q", got, want)
		}
		if h := log[0]; !strings.Contains(h.Old, `"histology":"pending"`) || !strings.Contains(h.New, `"histology":"hyperplastic"`) || !strings.Contains(h.New, `"reported_on":"2026-03-10"`) {
			t.Errorf("histology entry old %s new %s", h.Old, h.New)
		}
	})
}

func TestImportLesions(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+procRow("P1", 60)+"\n")
		head := lesHeader + "\n"
		les := func(id string, no int, segment, size string) string { return lesRow(id, no, segment, size, nil) + "\n" }
		mustImport(t, s, store.Lesions, "l.csv", head+les("P1", 1, "rectum", "3"))
		before := counts(t, s)
		tests := []struct {
			name, rows string
			want       []string
		}{
			{"unknown procedure", les("P9", 1, "rectum", "3"), []string{"l.csv:2: procedure_id: P9 is not in the logbook (import its procedure first)"}},
			{"lesion already stored", les("P1", 1, "rectum", "4"), []string{"l.csv:2: lesion_no: procedure P1 already has lesion 1 (import with --update to replace it)"}},
			{"lesion twice in the file", les("P1", 2, "rectum", "3") + les("P1", 2, "sigmoid", "5"), []string{"l.csv:3: lesion_no: lesion 2 of procedure P1 appears more than once in this file"}},
			{"no size", les("P1", 2, "rectum", ""), []string{"l.csv:2: size_mm: is required"}},
			{"size too large", les("P1", 2, "rectum", "151"), []string{"l.csv:2: size_mm: 151 is outside 1–150"}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				_, err := importText(s, store.Lesions, "l.csv", head+tt.rows, false)
				if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n got %q\nwant %q", got, tt.want)
				}
				if after := counts(t, s); after != before {
					t.Errorf("stored counts changed %v → %v", before, after)
				}
			})
		}
		res, err := importText(s, store.Lesions, "l.csv", head+les("P1", 1, "sigmoid", "4"), true)
		if err != nil || res.Updated != 1 {
			t.Fatalf("lesion update: %+v, %v", res, err)
		}
		c, _ := s.Case(context.Background(), "P1")
		if len(c.Lesions) != 1 || c.Lesions[0].Segment != logbook.Sigmoid || c.Lesions[0].SizeMM != 4 {
			t.Errorf("lesion after update: %+v", c.Lesions)
		}
	})
}

func TestImportHistology(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+procRow("P1", 60)+"\n")
		sent := func(h, d string) map[string]string {
			return map[string]string{"retrieved": "yes", "sent_to_pathology": "yes", "histology": h, "dysplasia": d}
		}
		mustImport(t, s, store.Lesions, "l.csv", lesHeader+"\n"+
			lesRow("P1", 1, "rectum", "3", sent("pending", ""))+"\n"+
			lesRow("P1", 2, "caecum", "12", sent("pending", ""))+"\n"+
			lesRow("P1", 3, "sigmoid", "4", map[string]string{"retrieved": "no", "sent_to_pathology": "no"})+"\n"+
			lesRow("P1", 4, "ascending", "7", sent("tubular_adenoma", "low"))+"\n")
		if n, _ := s.CountAwaitingHistology(ctx); n != 2 {
			t.Fatalf("awaiting %d, want 2", n)
		}
		head := histHeader + "\n"
		before := counts(t, s)
		tests := []struct {
			name, rows string
			want       []string
		}{
			{"unknown procedure", "P9,1,ssl,none,2026-03-10\n", []string{"h.csv:2: procedure_id: P9 is not in the logbook"}},
			{"unknown lesion", "P1,7,ssl,none,2026-03-10\n", []string{"h.csv:2: lesion_no: procedure P1 has no lesion 7"}},
			{"lesion never sent", "P1,3,ssl,none,2026-03-10\n", []string{"h.csv:2: histology: is ssl but sent_to_pathology is not yes"}},
			{"a different result for a reported lesion", "P1,4,villous_adenoma,high,2026-03-10\n",
				[]string{"h.csv:2: histology: lesion already has histology tubular_adenoma (no report date recorded); use --update to correct it"}},
			{"pending as a result", "P1,1,pending,,2026-03-10\n", []string{"h.csv:2: histology: a result cannot be pending"}},
			{"no report date", "P1,1,ssl,none,\n", []string{"h.csv:2: reported_on: is required"}},
			{"good row then a bad one", "P1,1,ssl,none,2026-03-10\nP1,2,tubular_adenoma,,2026-03-10\n", []string{"h.csv:3: dysplasia: must be low or high for tubular_adenoma"}},
			{"bad row then rows that would fail against the stored lesions", "P1,1,ssl,moderate,2026-03-10\nP1,8,ssl,none,2026-03-10\n", []string{
				`h.csv:2: dysplasia: "moderate" is not one of none, low, high`,
				"h.csv:3: lesion_no: procedure P1 has no lesion 8",
			}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				_, err := importText(s, store.Histology, "h.csv", head+tt.rows, false)
				if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, tt.want) {
					t.Errorf("problems\n got %q\nwant %q", got, tt.want)
				}
				if after := counts(t, s); after != before {
					t.Errorf("stored counts changed %v → %v", before, after)
				}
			})
		}

		res := mustImport(t, s, store.Histology, "h.csv", head+"P1,1,hyperplastic,none,2026-03-10\nP1,2,tubular_adenoma,high,2026-03-12\n")
		if res.Rows != 2 || res.Updated != 2 {
			t.Errorf("result %+v, want 2 rows updated", res)
		}
		if n, _ := s.CountAwaitingHistology(ctx); n != 0 {
			t.Errorf("awaiting %d after the results, want 0", n)
		}
		c, _ := s.Case(ctx, "P1")
		got := fmt.Sprint(c.Lesions[0].Histology, c.Lesions[0].Dysplasia, logbook.FormatDate(c.Lesions[0].ReportedOn), " ",
			c.Lesions[1].Histology, c.Lesions[1].Dysplasia, logbook.FormatDate(c.Lesions[1].ReportedOn))
		if got != "hyperplasticnone2026-03-10 tubular_adenomahigh2026-03-12" {
			t.Errorf("lesions after results: %s", got)
		}

		// The same result again is not a correction: it may add the report date
		// the lesion lacks, or change nothing (and log nothing); a different
		// date for it is a correction.
		mustImport(t, s, store.Histology, "again.csv", head+"P1,4,tubular_adenoma,low,2026-03-11\n")
		c, _ = s.Case(ctx, "P1")
		if got := logbook.FormatDate(c.Lesions[3].ReportedOn); got != "2026-03-11" {
			t.Errorf("report date after the repeated result: %q", got)
		}
		logged := counts(t, s)
		mustImport(t, s, store.Histology, "again.csv", head+"P1,4,tubular_adenoma,low,2026-03-11\n")
		if counts(t, s) != logged {
			t.Error("an identical result was logged as a change")
		}
		_, err := importText(s, store.Histology, "again.csv", head+"P1,4,tubular_adenoma,low,2026-03-12\n", false)
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, []string{"again.csv:2: histology: lesion already has histology tubular_adenoma (reported 2026-03-11); use --update to correct it"}) {
			t.Errorf("a new date for a reported result: %q", got)
		}

		// A correction needs --update; the change log keeps the old result.
		res, err = importText(s, store.Histology, "fix.csv", head+"P1,4,villous_adenoma,high,2026-03-20\n", true)
		if err != nil || res.Updated != 1 {
			t.Fatalf("correction: %+v, %v", res, err)
		}
		log, _ := s.ChangeLog(ctx, 1)
		if !strings.Contains(log[0].Old, `"histology":"tubular_adenoma"`) || !strings.Contains(log[0].New, `"histology":"villous_adenoma"`) {
			t.Errorf("correction logged as %+v", log[0])
		}
	})
}

func TestImportAddsToRoster(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		if err := s.SaveRosterEntry(ctx, logbook.RosterEntry{ID: "E01", Name: "Dr Invented", Role: logbook.RoleEndoscopist}); err != nil {
			t.Fatal(err)
		}
		file := procHeader + "\n" +
			procRowWith("P1", 60, map[string]string{"trainee_id": "T77"}) + "\n" +
			procRowWith("P2", 61, map[string]string{"operator_id": "E77"}) + "\n" +
			procRowWith("P3", 62, map[string]string{"operator_id": "E77", "trainee_id": "T77"}) + "\n"
		res := mustImport(t, s, store.Procedures, "new-staff.csv", file)
		want := []logbook.RosterEntry{{ID: "T77", Role: logbook.RoleTrainee}, {ID: "E77", Role: logbook.RoleEndoscopist}}
		if !reflect.DeepEqual(res.RosterAdded, want) {
			t.Errorf("RosterAdded = %+v, want %+v", res.RosterAdded, want)
		}
		roster, _ := s.Roster(ctx)
		if len(roster) != 3 || roster[1].ID != "E77" || roster[2].ID != "T77" {
			t.Errorf("roster = %+v", roster)
		}
		// Ids already on the roster are not reported again.
		res = mustImport(t, s, store.Procedures, "more.csv", procHeader+"\n"+procRowWith("P4", 63, map[string]string{"operator_id": "E77"})+"\n")
		if len(res.RosterAdded) != 0 {
			t.Errorf("second import reported %+v", res.RosterAdded)
		}
	})
}

func TestImportPseudonymisesPatientReferences(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+procRowWith("P1", 60, map[string]string{"patient_ref": "rxh7654321"})+"\n")
		c, _ := s.Case(ctx, "P1")
		want, _ := logbook.Pseudonymise(unitKey, "RXH7654321")
		if c.PatientKey != want {
			t.Errorf("stored patient key %q, want the pseudonym %q", c.PatientKey, want)
		}
		if out := exportText(t, s, store.Procedures); strings.Contains(strings.ToUpper(out), "RXH7654321") || !strings.Contains(out, "psn:"+want) {
			t.Errorf("export shows the hospital number or lacks the pseudonym:\n%s", out)
		}
		// Without a unit key a hospital number cannot be stored.
		nokey, err := store.Open(ctx, be.NewDB(t), store.Options{Now: func() time.Time { return today }})
		if err != nil {
			t.Fatal(err)
		}
		defer nokey.Close()
		_, err = importText(nokey, store.Procedures, "p.csv", procHeader+"\n"+procRowWith("P1", 60, map[string]string{"patient_ref": "RXH7654321"})+"\n", false)
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, []string{"p.csv:2: patient_ref: " + logbook.ErrNoKey.Error()}) {
			t.Errorf("import without a key: %q", got)
		}
	})
}

// TestImportProgress imports a generated 25,000-row file and checks the
// progress callback: every 10,000 rows, with the bytes read so far.
func TestImportProgress(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		var b strings.Builder
		b.WriteString(procHeader + "\n")
		const n = 25000
		for i := range n {
			b.WriteString(procRow(fmt.Sprintf("G%06d", i), 18+i%90) + "\n")
		}
		file := b.String()
		type call struct {
			rows  int
			bytes int64
		}
		var calls []call
		res, err := s.Import(context.Background(), store.Procedures, "big.csv", strings.NewReader(file), store.ImportOptions{
			Progress: func(rows int, read int64) { calls = append(calls, call{rows, read}) },
		})
		if err != nil {
			t.Fatal(err)
		}
		if res.Rows != n || res.Inserted != n {
			t.Errorf("result %+v, want %d rows inserted", res, n)
		}
		if len(calls) != 2 || calls[0].rows != store.ProgressEvery || calls[1].rows != 2*store.ProgressEvery || store.ProgressEvery != 10000 {
			t.Fatalf("progress calls %+v, want at 10000 and 20000 rows", calls)
		}
		// Bytes read so far cover the rows reported (the reader may be ahead)
		// and never exceed the file.
		for _, c := range calls {
			rowBytes := int64(len(procHeader)+1) + int64(c.rows)*int64(len(procRow("G000000", 18))+1)
			if c.bytes < rowBytes-100 || c.bytes > int64(len(file)) {
				t.Errorf("progress at %d rows says %d bytes read; rows so far take about %d of %d", c.rows, c.bytes, rowBytes, len(file))
			}
		}
		if got, _ := s.CountProcedures(context.Background(), store.ListQuery{}); got != n {
			t.Errorf("%d procedures stored, want %d", got, n)
		}
	})
}

func TestImportReadOnlyRefused(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		path := be.NewDB(t)
		openUnitAt(t, path).Close()
		ro, err := store.Open(context.Background(), path, store.Options{ReadOnly: true})
		if err != nil {
			t.Fatal(err)
		}
		defer ro.Close()
		if _, err := importText(ro, store.Procedures, "p.csv", procHeader+"\n"+procRow("P1", 60)+"\n", false); err == nil {
			t.Error("import into a read-only database succeeded")
		}
	})
}

func TestParseKind(t *testing.T) {
	for _, k := range []string{"procedures", "lesions", "histology"} {
		if got, err := store.ParseKind(k); err != nil || string(got) != k {
			t.Errorf("ParseKind(%q) = %q, %v", k, got, err)
		}
	}
	if _, err := store.ParseKind("patients"); err == nil || err.Error() != `kind "patients" is not procedures, lesions or histology` {
		t.Errorf("ParseKind(patients): %v", err)
	}
}

// TestImportKeepsUpperCasedPseudonyms: an exported file whose pseudonyms a
// spreadsheet turned to capitals ("PSN:3F…") imports back to the same
// patients; the pseudonym is not hashed again as if it were a hospital
// number, which would silently re-key the patient under --update.
func TestImportKeepsUpperCasedPseudonyms(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		s := openUnit(t, be)
		mustImport(t, s, store.Procedures, "p.csv", procHeader+"\n"+
			procRowWith("P1", 60, map[string]string{"patient_ref": "RXH7654321"})+"\n"+
			procRowWith("P2", 61, map[string]string{"patient_ref": "RXH7654322"})+"\n")
		before := map[string]string{}
		for _, id := range []string{"P1", "P2"} {
			c, _ := s.Case(ctx, id)
			before[id] = c.PatientKey
		}
		exported := exportText(t, s, store.Procedures)
		upper := regexp.MustCompile(`psn:[0-9a-f]{64}`).ReplaceAllStringFunc(exported, strings.ToUpper)
		if upper == exported || !strings.Contains(upper, "PSN:") {
			t.Fatal("no pseudonym was upper-cased: the test would prove nothing")
		}
		if _, err := importText(s, store.Procedures, "upper.csv", upper, true); err != nil {
			t.Fatal(err)
		}
		for id, key := range before {
			if c, _ := s.Case(ctx, id); c.PatientKey != key {
				t.Errorf("%s: patient key %s after re-import, was %s", id, c.PatientKey, key)
			}
		}
		if again := exportText(t, s, store.Procedures); again != exported {
			t.Errorf("export after re-import differs at %s", firstDifference(again, exported))
		}
	})
}

// TestImportRefusesAnAmountTooSmallToStore: "1e-400" would be stored as 0
// (an underflow); it is refused, naming the line and column.
func TestImportRefusesAnAmountTooSmallToStore(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		_, err := importText(s, store.Procedures, "p.csv", procHeader+"\n"+procRowWith("P1", 60, map[string]string{"midazolam_mg": "1e-400"})+"\n", false)
		want := []string{`p.csv:2: midazolam_mg: "1e-400" is too small to record (it would be stored as 0)`}
		if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, want) {
			t.Errorf("problems %q, want %q", got, want)
		}
	})
}
