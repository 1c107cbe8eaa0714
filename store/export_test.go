package store_test

// Round trips: importing the files export writes and exporting again gives
// the same bytes, for a small hand-written fixture that uses every column
// and code, and for the invented demo unit.

import (
	"context"
	"fmt"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/store"
)

var kinds = []store.Kind{store.Procedures, store.Lesions, store.Histology}

// importAll imports procedures, lesions and histology files, in that order.
func importAll(t *testing.T, s *store.Store, files map[store.Kind]string) {
	t.Helper()
	for _, k := range kinds {
		mustImport(t, s, k, string(k)+".csv", files[k])
	}
}

func exportAll(t *testing.T, s *store.Store) map[store.Kind]string {
	t.Helper()
	out := map[store.Kind]string{}
	for _, k := range kinds {
		out[k] = exportText(t, s, k)
	}
	return out
}

// firstDifference describes where two files first differ, for messages.
func firstDifference(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(al) || i < len(bl); i++ {
		var x, y string
		if i < len(al) {
			x = al[i]
		}
		if i < len(bl) {
			y = bl[i]
		}
		if x != y {
			return "line " + strconv.Itoa(i+1) + ":\n got  " + x + "\n want " + y
		}
	}
	return "no difference"
}

func TestRoundTripFixture(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		files := map[store.Kind]string{}
		for _, k := range kinds {
			files[k] = fixture(t, string(k)+".csv")
		}

		res := mustImport(t, s, store.Procedures, "procedures.csv", files[store.Procedures])
		if res.Inserted != 15 || len(res.RosterAdded) != 5 {
			t.Errorf("procedures: %+v; want 15 new and 5 roster additions (E01–E03, T01, T02)", res)
		}
		if got := exportText(t, s, store.Procedures); got != files[store.Procedures] {
			t.Errorf("procedures export differs from the imported file at %s", firstDifference(got, files[store.Procedures]))
		}
		mustImport(t, s, store.Lesions, "lesions.csv", files[store.Lesions])
		if got := exportText(t, s, store.Lesions); got != files[store.Lesions] {
			t.Errorf("lesions export differs from the imported file at %s", firstDifference(got, files[store.Lesions]))
		}
		if n, _ := s.CountAwaitingHistology(context.Background()); n != 2 {
			t.Errorf("awaiting histology after lesions.csv: %d, want 2", n)
		}

		// histology.csv repeats the results lesions.csv already carries (adding
		// their report dates) and fills the two pending lesions.
		res = mustImport(t, s, store.Histology, "histology.csv", files[store.Histology])
		if res.Rows != 13 {
			t.Errorf("histology: %+v, want 13 rows", res)
		}
		if got := exportText(t, s, store.Histology); got != files[store.Histology] {
			t.Errorf("histology export differs from the imported file at %s", firstDifference(got, files[store.Histology]))
		}
		wantLesions := strings.NewReplacer(
			"FX006,1,sigmoid,5,0-Is,adenoma,high,nbi,,cold_snare,yes,yes,pending,,", "FX006,1,sigmoid,5,0-Is,adenoma,high,nbi,,cold_snare,yes,yes,tubular_adenoma,high,",
			"FX009,2,rectum,3,0-Is,hyperplastic,high,nbi,hyperplastic,cold_snare,yes,yes,pending,,", "FX009,2,rectum,3,0-Is,hyperplastic,high,nbi,hyperplastic,cold_snare,yes,yes,hyperplastic,none,",
		).Replace(files[store.Lesions])
		if got := exportText(t, s, store.Lesions); got != wantLesions {
			t.Errorf("lesions after histology differ at %s", firstDifference(got, wantLesions))
		}

		// What was exported imports into a new database and exports the same.
		first := exportAll(t, s)
		s2 := openUnit(t, be)
		importAll(t, s2, first)
		second := exportAll(t, s2)
		for _, k := range kinds {
			if second[k] != first[k] {
				t.Errorf("%s: second round trip differs at %s", k, firstDifference(second[k], first[k]))
			}
		}
	})
}

func TestRoundTripDemo(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		a := openUnit(t, be)
		var roster []logbook.RosterEntry
		for _, st := range demo.StaffList() {
			roster = append(roster, st.Entry)
		}
		n, err := a.InsertCases(ctx, store.DefaultSettings, roster, "export test", func(emit func(*logbook.Case) error) error {
			return demo.Generate(demo.Options{Procedures: 1500, Seed: 7, Key: unitKey}, emit)
		}, nil)
		if err != nil || n != 1500 {
			t.Fatalf("demo load: %d, %v", n, err)
		}
		first := exportAll(t, a)
		for _, k := range kinds {
			if lines := strings.Count(first[k], "\n"); lines < 100 {
				t.Fatalf("%s export has only %d lines", k, lines)
			}
		}
		b := openUnit(t, be)
		importAll(t, b, first)
		second := exportAll(t, b)
		for _, k := range kinds {
			if second[k] != first[k] {
				t.Errorf("%s: export after import differs at %s", k, firstDifference(second[k], first[k]))
			}
		}
		if findings, err := b.Check(ctx); err != nil || len(findings) != 0 {
			t.Errorf("Check after the round trip: %q, %v", findings, err)
		}
		// Every lesion awaiting histology is still awaiting it.
		na, _ := a.CountAwaitingHistology(ctx)
		nb, _ := b.CountAwaitingHistology(ctx)
		if na == 0 || na != nb {
			t.Errorf("awaiting histology: %d in the demo, %d after the round trip", na, nb)
		}
	})
}

func TestExportUnknownKind(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		var b strings.Builder
		if _, err := s.Export(context.Background(), store.Kind("patients"), &b); err == nil {
			t.Error("export of an unknown kind succeeded")
		}
		if b.Len() != 0 {
			t.Errorf("export of an unknown kind wrote %q", b.String())
		}
	})
}

func TestExportEmptyDatabaseWritesHeaders(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		s := openUnit(t, be)
		for _, k := range kinds {
			want := strings.Join(store.Columns(k), ",") + "\n"
			if got := exportText(t, s, k); got != want {
				t.Errorf("%s export of an empty database = %q, want the header only", k, got)
			}
		}
		if !strings.HasSuffix(strings.Join(store.Columns(store.Lesions), ","), ",tattoo") {
			t.Error("the lesions export lacks the optional tattoo column")
		}
	})
}

// hostileValues are identifiers that validation lets through but a
// spreadsheet would run as a formula (OWASP "CSV injection" guidance;
// common practice), their full-width forms, and values that really begin
// with an apostrophe, the character export puts before a formula.
var hostileValues = []string{
	"=X1", `=HYPERLINK("http://example.invalid","open")`, "+SUM(1)", "@SUM(1)", "-2+3", "-A1", "-",
	"＝1+1", "＋SUM(1)", "－3", "＠A1",
	"'", "''", "'abc", "'=X1", "''=X1", "'-12", "'－3",
	"-12", "-2.5", "a'b", "a=b",
}

// TestExportImportHostileValuesRoundTrip stores every hostile value as a
// procedure id, an endoscopist and a trainee, exports, and imports the
// export into a new database: the same records come back — no apostrophe
// turned into part of an id, no extra case, no phantom roster entry — and
// exporting again gives the same files.
func TestExportImportHostileValuesRoundTrip(t *testing.T) {
	store.EachBackend(t, func(t *testing.T, be store.TestBackend) {
		ctx := context.Background()
		a := openUnit(t, be)
		importHostile(t, a)
		for _, v := range hostileValues {
			if c, err := a.Case(ctx, v); err != nil || c.OperatorID != v {
				t.Fatalf("value %q was not stored as it is: %+v, %v", v, c.Procedure, err)
			}
		}
		first := exportAll(t, a)
		for _, k := range kinds {
			for _, cell := range strings.FieldsFunc(first[k], func(r rune) bool { return r == ',' || r == '\n' }) {
				if cell = strings.Trim(cell, `"`); cell != "" && store.SafeCell(cell) != cell && !strings.HasPrefix(cell, "'") {
					t.Errorf("%s export: cell %q would run as a formula", k, cell)
				}
			}
		}

		b := openUnit(t, be)
		importAll(t, b, first)
		for _, v := range hostileValues {
			c, err := b.Case(ctx, v)
			if err != nil {
				t.Errorf("case %q did not come back: %v", v, err)
				continue
			}
			if c.OperatorID != v || len(c.Lesions) != 1 {
				t.Errorf("case %q came back with operator %q and %d lesions", v, c.OperatorID, len(c.Lesions))
			}
		}
		if ca, cb := counts(t, a), counts(t, b); ca[0] != cb[0] || ca[1] != cb[1] || ca[0] != len(hostileValues) {
			t.Errorf("procedures and lesions: %v first, %v after the round trip; want %d each", ca, cb, len(hostileValues))
		}
		ra, _ := a.Roster(ctx)
		rb, _ := b.Roster(ctx)
		if !reflect.DeepEqual(ra, rb) {
			t.Errorf("roster after the round trip\n got %v\nwant %v", rb, ra)
		}
		second := exportAll(t, b)
		for _, k := range kinds {
			if second[k] != first[k] {
				t.Errorf("%s: export after import differs at %s", k, firstDifference(second[k], first[k]))
			}
		}
	})
}

// importHostile stores every hostile value as a procedure id, an
// endoscopist and a trainee, each procedure with one lesion.
func importHostile(t *testing.T, s *store.Store) {
	t.Helper()
	rows := []string{procHeader}
	les := []string{lesHeader}
	for i, v := range hostileValues {
		rows = append(rows, line(store.Procedures, map[string]string{
			"procedure_id": cell(v), "performed_on": "2026-03-02", "operator_id": cell(v),
			"trainee_id": cell(fmt.Sprintf("T%d%s", i, v)), "age": "60", "sex": "F", "indication": "screening", "extent": "caecum"}))
		les = append(les, lesRow(cell(v), 1, "rectum", "3", nil))
	}
	mustImport(t, s, store.Procedures, "p.csv", strings.Join(rows, "\n")+"\n")
	mustImport(t, s, store.Lesions, "l.csv", strings.Join(les, "\n")+"\n")
}

// cell writes a value as a CSV cell the way export does: behind an
// apostrophe where it looks like a formula, and quoted where it needs it.
func cell(v string) string {
	v = store.SafeCell(v)
	if strings.ContainsAny(v, `",`+"\n\r") {
		return `"` + strings.ReplaceAll(v, `"`, `""`) + `"`
	}
	return v
}
