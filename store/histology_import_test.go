package store_test

// Tests of importing pathology results in files larger than one of the
// import's batches, and in feeds that mix results with the lesions they
// are for: every result is judged as if it were recorded on its own, in
// the order of the file, against the logbook as the rows before it left it.

import (
	"context"
	"fmt"
	"reflect"
	"strings"
	"testing"
	"time"

	"polypledger/logbook"
	"polypledger/store"
)

// pathologyUnitSize is how many procedures the large-file tests store:
// each with lesion 1 awaiting its result and lesion 2 reported, so that a
// file of a result for each lesion spans several of the import's batches
// (store.importBatch is 500 rows).
const pathologyUnitSize = 700

// pathologyUnit stores pathologyUnitSize procedures P0001… with two lesions
// each: 1 sent and pending, 2 a tubular adenoma with low-grade dysplasia
// reported on 2026-03-01.
func pathologyUnit(t *testing.T, be store.TestBackend) *store.Store {
	t.Helper()
	s := openUnit(t, be)
	var procs, lesions strings.Builder
	procs.WriteString(procHeader + "\n")
	lesions.WriteString(lesHeader + "\n")
	for i := 1; i <= pathologyUnitSize; i++ {
		id := pathologyID(i)
		procs.WriteString(procRow(id, 60) + "\n")
		lesions.WriteString(lesRow(id, 1, "rectum", "3", map[string]string{"retrieved": "yes", "sent_to_pathology": "yes", "histology": "pending"}) + "\n")
		lesions.WriteString(lesRow(id, 2, "caecum", "8", map[string]string{"retrieved": "yes", "sent_to_pathology": "yes", "histology": "tubular_adenoma", "dysplasia": "low"}) + "\n")
	}
	mustImport(t, s, store.Procedures, "p.csv", procs.String())
	mustImport(t, s, store.Lesions, "l.csv", lesions.String())
	res := mustImport(t, s, store.Histology, "reported.csv", histHeader+"\n"+joinRows(pathologyUnitSize, func(i int) string {
		return pathologyID(i) + ",2,tubular_adenoma,low,2026-03-01"
	}))
	if res.Kinds[store.Histology].New != pathologyUnitSize {
		t.Fatalf("setting up the reported lesions: %+v", res)
	}
	return s
}

func pathologyID(i int) string { return fmt.Sprintf("P%04d", i) }

// joinRows joins row(1) … row(n), one a line.
func joinRows(n int, row func(i int) string) string {
	var b strings.Builder
	for i := 1; i <= n; i++ {
		b.WriteString(row(i) + "\n")
	}
	return b.String()
}

// logSince returns the change-log entries made after the first skip, oldest
// first.
func logSince(t *testing.T, s *store.Store, skip int) []store.ChangeLogEntry {
	t.Helper()
	log, err := s.ChangeLog(context.Background(), 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	var out []store.ChangeLogEntry
	for i := len(log) - 1 - skip; i >= 0; i-- {
		out = append(out, log[i])
	}
	return out
}

// resultOf reads a histology.csv data row.
func resultOf(t *testing.T, row string) logbook.HistologyResult {
	t.Helper()
	f := strings.Split(row, ",")
	var no int
	fmt.Sscan(f[1], &no)
	on, err := time.Parse(time.DateOnly, f[4])
	if err != nil {
		t.Fatal(err)
	}
	return logbook.HistologyResult{ProcedureID: f[0], LesionNo: no, Histology: logbook.Histology(f[2]), Dysplasia: logbook.Dysplasia(f[3]), ReportedOn: on}
}

// TestImportHistologyInBatches: a histology.csv of more rows than one batch
// leaves the logbook and its change log exactly as recording its results one
// by one (RecordHistology, the pathology inbox's path) leaves them, in the
// file's order, with the same who and when and the same old and new
// lesions; one refused row anywhere refuses the whole file, with the same
// problem at the same line.
func TestImportHistologyInBatches(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		n := pathologyUnitSize
		pending := func(i int) string { return pathologyID(i) + ",1,ssl,none,2026-03-10" }
		// pendingBut is a result for each pending lesion, but row at.
		pendingBut := func(at int, row string) string {
			return joinRows(n, func(i int) string {
				if i == at {
					return row
				}
				return pending(i)
			})
		}
		// Results for both lesions of each procedure: three of the reported
		// ones, in three batches, differ from what is recorded.
		corrections := joinRows(2*n, func(i int) string {
			if i%2 == 1 {
				return pending(i/2 + 1)
			}
			if i == 4 || i == 1000 || i == 1400 {
				return pathologyID(i/2) + ",2,villous_adenoma,high,2026-03-20"
			}
			return pathologyID(i/2) + ",2,tubular_adenoma,low,2026-03-01"
		})
		tests := []struct {
			name   string
			rows   string
			update bool
			want   []string // the problems; none: stored
		}{
			{name: "a result for each pending lesion, over two batches", rows: joinRows(n, pending)},
			{name: "results for both lesions of each procedure, over three batches; the reported ones repeat their result",
				rows: joinRows(2*n, func(i int) string {
					if i%2 == 1 {
						return pending(i/2 + 1)
					}
					return pathologyID(i/2) + ",2,tubular_adenoma,low,2026-03-01"
				})},
			{name: "a reported result repeated with a new date needs --update",
				rows: pendingBut(650, "P0650,2,tubular_adenoma,low,2026-03-02"),
				want: []string{"h.csv:651: histology: lesion already has histology tubular_adenoma (reported 2026-03-01); use --update to correct it"}},
			{name: "different results for reported lesions in every batch, without --update",
				rows: corrections,
				want: []string{
					"h.csv:5: histology: lesion already has histology tubular_adenoma (reported 2026-03-01); use --update to correct it",
					"h.csv:1001: histology: lesion already has histology tubular_adenoma (reported 2026-03-01); use --update to correct it",
					"h.csv:1401: histology: lesion already has histology tubular_adenoma (reported 2026-03-01); use --update to correct it",
				}},
			{name: "different results for reported lesions in every batch, with --update",
				rows:   corrections,
				update: true},
			{name: "an unknown lesion in the middle of a large batch refuses the whole file",
				rows: pendingBut(420, "P0420,9,ssl,none,2026-03-10"),
				want: []string{"h.csv:421: lesion_no: procedure P0420 has no lesion 9"}},
			{name: "an unknown procedure in the second batch refuses the whole file",
				rows: pendingBut(600, "P9999,1,ssl,none,2026-03-10"),
				want: []string{"h.csv:601: procedure_id: P9999 is not in the logbook"}},
			{name: "rows with problems of their own among good ones",
				rows: joinRows(n, func(i int) string {
					switch i {
					case 100:
						return pathologyID(i) + ",1,ssl,moderate,2026-03-10"
					case 450:
						return pathologyID(i) + ",1,tubular_adenoma,,2026-03-10"
					}
					return pending(i)
				}),
				want: []string{`h.csv:101: dysplasia: "moderate" is not one of none, low, high`, "h.csv:451: dysplasia: must be low or high for tubular_adenoma"}},
			{name: "the same lesion twice, in different batches",
				rows: joinRows(n, pending) + pending(3) + "\n",
				want: []string{fmt.Sprintf("h.csv:%d: lesion_no: a result for lesion 1 of procedure P0003 appears more than once in this file", n+2)}},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := pathologyUnit(t, be)
				before, lesionsBefore := counts(t, s), exportText(t, s, store.Lesions)
				res, err := importText(s, store.Histology, "h.csv", histHeader+"\n"+tt.rows, tt.update)
				if tt.want != nil {
					if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, tt.want) {
						t.Errorf("problems\n got %q\nwant %q", got, tt.want)
					}
					if after := counts(t, s); after != before {
						t.Errorf("stored counts changed %v → %v", before, after)
					}
					if exportText(t, s, store.Lesions) != lesionsBefore {
						t.Error("a refused file changed the lesions")
					}
					return
				}
				if err != nil {
					t.Fatal(err)
				}
				rows := strings.Split(strings.TrimSuffix(tt.rows, "\n"), "\n")
				if res.Rows != len(rows) || res.Kinds[store.Histology].New != len(rows) {
					t.Errorf("result %+v, want %d rows and results", res, len(rows))
				}
				// The same results recorded one at a time on a unit stored
				// alike.
				one := pathologyUnit(t, be)
				for _, r := range rows {
					if err := one.RecordHistology(ctx, resultOf(t, r), tt.update); err != nil {
						t.Fatalf("recording %s on its own: %v", r, err)
					}
				}
				if got, want := exportText(t, s, store.Lesions), exportText(t, one, store.Lesions); got != want {
					t.Error("the lesions differ from those the results recorded one by one left")
				}
				got, want := logSince(t, s, before[2]), logSince(t, one, before[2])
				if len(got) != len(want) {
					t.Fatalf("%d change-log entries, want %d", len(got), len(want))
				}
				for i := range got {
					if got[i] != want[i] {
						t.Fatalf("change-log entry %d\n got %+v\nwant %+v", i, got[i], want[i])
					}
				}
			})
		}
	})
}

// TestImportRecordsResultsWithTheirLesions: in one feed, a result is judged
// against the lesions and procedures that the records before it stored or
// replaced — in the same batch or an earlier one — and not against those
// after it; a lesion replaced after its result replaces the lesion as the
// result left it.
func TestImportRecordsResultsWithTheirLesions(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		sent := func(lineNo int, id, no, histology, dysplasia string) store.Record {
			return rec(store.Lesions, lineNo, nil, map[string]string{"procedure_id": id, "lesion_no": no, "segment": "rectum", "size_mm": "4",
				"retrieved": "yes", "sent_to_pathology": "yes", "histology": histology, "dysplasia": dysplasia})
		}
		result := func(lineNo int, id, no, histology, dysplasia string) store.Record {
			return rec(store.Histology, lineNo, nil, map[string]string{"procedure_id": id, "lesion_no": no, "histology": histology, "dysplasia": dysplasia, "reported_on": "2026-03-10"})
		}
		// filler is n procedures that put what follows them in a later
		// batch.
		filler := func(n int) []store.Record {
			var out []store.Record
			for i := range n {
				out = append(out, proc(100+i, nil, fmt.Sprintf("F%04d", i), nil))
			}
			return out
		}
		cat := func(parts ...[]store.Record) []store.Record {
			var out []store.Record
			for _, p := range parts {
				out = append(out, p...)
			}
			return out
		}
		type lesionState struct{ histology, dysplasia, reported string }
		tests := []struct {
			name   string
			stored []store.Record // imported first, with --update
			recs   []store.Record
			update bool
			want   []string // the problems; none: stored
			// P1's lesion 1 afterwards, and the records of the change-log
			// entries the import made.
			lesion lesionState
			logged []string
		}{
			{
				name:   "a procedure, its lesion and the lesion's result in one batch",
				recs:   []store.Record{proc(2, nil, "P1", nil), sent(3, "P1", "1", "pending", ""), result(4, "P1", "1", "ssl", "none")},
				lesion: lesionState{"ssl", "none", "2026-03-10"},
				logged: []string{"insert roster E01", "insert procedure P1", "insert lesion P1#1", "update lesion P1#1"},
			},
			{
				name:   "a lesion in one batch and its result in the next",
				recs:   cat([]store.Record{proc(2, nil, "P1", nil), sent(3, "P1", "1", "pending", "")}, filler(600), []store.Record{result(4, "P1", "1", "ssl", "none")}),
				lesion: lesionState{"ssl", "none", "2026-03-10"},
			},
			{
				name:   "a result before its lesion",
				stored: []store.Record{proc(1, nil, "P1", nil)},
				recs:   []store.Record{result(2, "P1", "1", "ssl", "none"), sent(3, "P1", "1", "pending", "")},
				want:   []string{"import:2: lesion_no: procedure P1 has no lesion 1"},
			},
			{
				name: "a result before its procedure",
				recs: []store.Record{result(2, "P1", "1", "ssl", "none"), proc(3, nil, "P1", nil), sent(4, "P1", "1", "pending", "")},
				want: []string{"import:2: procedure_id: P1 is not in the logbook"},
			},
			{
				name:   "a result for a lesion refused in the same import",
				stored: []store.Record{proc(1, nil, "P1", nil)},
				recs:   []store.Record{sent(2, "P1", "1", "tubular_adenoma", ""), result(3, "P1", "1", "ssl", "none")},
				want:   []string{"import:2: dysplasia: must be low or high for tubular_adenoma", "import:3: lesion_no: procedure P1 has no lesion 1"},
			},
			{
				name:   "a result for a lesion replaced earlier in the same batch",
				stored: []store.Record{proc(1, nil, "P1", nil), les(1, nil, "P1", "1")},
				recs:   []store.Record{sent(2, "P1", "1", "pending", ""), result(3, "P1", "1", "ssl", "none")},
				update: true,
				lesion: lesionState{"ssl", "none", "2026-03-10"},
				logged: []string{"update lesion P1#1", "update lesion P1#1"},
			},
			{
				name:   "a result for a lesion that the same batch replaces only after it",
				stored: []store.Record{proc(1, nil, "P1", nil), les(1, nil, "P1", "1")},
				recs:   []store.Record{result(2, "P1", "1", "ssl", "none"), sent(3, "P1", "1", "pending", "")},
				update: true,
				want:   []string{"import:2: histology: is ssl but sent_to_pathology is not yes"},
			},
			{
				name:   "a lesion replaced after its result in the same batch",
				stored: []store.Record{proc(1, nil, "P1", nil), sent(1, "P1", "1", "pending", "")},
				recs:   []store.Record{result(2, "P1", "1", "ssl", "none"), sent(3, "P1", "1", "hyperplastic", "none")},
				update: true,
				lesion: lesionState{"hyperplastic", "none", ""},
				logged: []string{"update lesion P1#1", "update lesion P1#1"},
			},
			{
				name:   "a lesion replaced after its result, in the next batch",
				stored: []store.Record{proc(1, nil, "P1", nil), sent(1, "P1", "1", "pending", "")},
				recs:   cat([]store.Record{result(2, "P1", "1", "ssl", "none")}, filler(600), []store.Record{sent(3, "P1", "1", "hyperplastic", "none")}),
				update: true,
				lesion: lesionState{"hyperplastic", "none", ""},
			},
			{
				name:   "a correction of a final result, then the lesion replaced with the same result",
				stored: []store.Record{proc(1, nil, "P1", nil), sent(1, "P1", "1", "tubular_adenoma", "low"), result(1, "P1", "1", "tubular_adenoma", "low")},
				recs:   []store.Record{result(2, "P1", "1", "villous_adenoma", "high"), sent(3, "P1", "1", "villous_adenoma", "high")},
				update: true,
				lesion: lesionState{"villous_adenoma", "high", "2026-03-10"},
				logged: []string{"update lesion P1#1", "update lesion P1#1"},
			},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				s := openUnit(t, be)
				if tt.stored != nil {
					if _, err := s.ImportRecords(ctx, "stored", feedOf(tt.stored), store.ImportOptions{Update: true}); err != nil {
						t.Fatal(err)
					}
				}
				before, lesionsBefore := counts(t, s), exportText(t, s, store.Lesions)
				_, err := s.ImportRecords(ctx, "import", feedOf(tt.recs), store.ImportOptions{Update: tt.update})
				if tt.want != nil {
					if got := errorLines(importError(t, err)); !reflect.DeepEqual(got, tt.want) {
						t.Errorf("problems\n got %q\nwant %q", got, tt.want)
					}
					if after := counts(t, s); after != before || exportText(t, s, store.Lesions) != lesionsBefore {
						t.Errorf("a refused import changed the logbook: counts %v → %v", before, after)
					}
					return
				}
				if err != nil {
					t.Fatal(err)
				}
				c, err := s.Case(ctx, "P1")
				if err != nil || len(c.Lesions) != 1 {
					t.Fatalf("P1 afterwards: %+v, %v", c, err)
				}
				l := c.Lesions[0]
				if got := (lesionState{string(l.Histology), string(l.Dysplasia), logbook.FormatDate(l.ReportedOn)}); got != tt.lesion {
					t.Errorf("lesion 1 of P1 %+v, want %+v", got, tt.lesion)
				}
				// Each entry about P1's lesion starts from the lesion as the
				// entry before it left it.
				var records []string
				prev := ""
				for _, e := range logSince(t, s, before[2]) {
					if !strings.HasPrefix(e.Record, "procedure F") {
						records = append(records, e.Action+" "+e.Record)
					}
					if e.Record != "lesion P1#1" {
						continue
					}
					if prev != "" && e.Old != prev {
						t.Errorf("entry %s %s starts from\n%s\nnot from the lesion the entry before left\n%s", e.Action, e.Record, e.Old, prev)
					}
					prev = e.New
				}
				if tt.logged != nil && !reflect.DeepEqual(records, tt.logged) {
					t.Errorf("change log %q, want %q", records, tt.logged)
				}
			})
		}
	})
}
