package app

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

func TestInboxRecordsResultInPlace(t *testing.T) {
	u := newTestUI(t, 400)
	b := u.inbox
	b.reload()
	before := b.total
	if before == 0 || len(b.rows) == 0 {
		t.Fatal("the demo unit has no lesions awaiting histology; the test needs some")
	}
	// Oldest case first, grouped by case.
	for i := 1; i < len(b.rows); i++ {
		if b.rows[i].item.PerformedOn.Before(b.rows[i-1].item.PerformedOn) {
			t.Fatalf("row %d is older than row %d", i, i-1)
		}
	}
	r := b.rows[0]
	id, no := r.item.Lesion.ProcedureID, r.item.Lesion.LesionNo

	// A result the rules refuse stays in the list with the reason shown.
	r.histology.Set(logbook.HistHyperplastic)
	r.dysplasia.Set(logbook.DysplasiaHigh)
	test.Tap(r.save)
	u.jobs.wait()
	if r.message.Hidden || !strings.Contains(r.message.Text, "dysplasia") {
		t.Errorf("refused result shows %q", r.message.Text)
	}
	if b.total != before {
		t.Errorf("a refused result changed the count to %d", b.total)
	}

	r.histology.Set(logbook.TubularAdenoma)
	r.dysplasia.Set(logbook.DysplasiaLow)
	r.reported.SetText("2026-11-10")
	test.Tap(r.save)
	u.jobs.wait()
	if b.total != before-1 {
		t.Errorf("after one result, %d lesions wait; want %d", b.total, before-1)
	}
	c, err := u.st.Case(u.ctx, id)
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range c.Lesions {
		if l.LesionNo == no && (l.Histology != logbook.TubularAdenoma || l.Dysplasia != logbook.DysplasiaLow || logbook.FormatDate(l.ReportedOn) != "2026-11-10") {
			t.Errorf("stored lesion = %s %s %s", l.Histology, l.Dysplasia, logbook.FormatDate(l.ReportedOn))
		}
	}
	for _, row := range b.rows {
		if row.item.Lesion.ProcedureID == id && row.item.Lesion.LesionNo == no {
			t.Error("the lesion is still in the inbox after its result")
		}
	}
}

func TestInboxImportReportsLines(t *testing.T) {
	u := newTestUI(t, 400)
	u.inbox.reload()
	first := u.inbox.rows[0].item.Lesion
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o600); err != nil {
			t.Fatal(err)
		}
		return p
	}
	header := "procedure_id,lesion_no,histology,dysplasia,reported_on\n"
	bad := write("bad.csv", header+fmt.Sprintf("%s,%d,tubular_adenoma,low,2026-11-01\n", first.ProcedureID, first.LesionNo)+
		"NOPE,1,hyperplastic,,2026-11-01\n")
	var gotErr error
	u.inbox.importFile(bad, func(_ workspace.ImportReport, err error) { gotErr = err })
	u.jobs.wait()
	var ie *store.ImportError
	if !errors.As(gotErr, &ie) || len(ie.Errors) != 1 {
		t.Fatalf("import of a bad file gave %v", gotErr)
	}
	// The line number counts the header as line 1, as the command line does.
	if got := ie.Errors[0].String(); !strings.HasPrefix(got, bad+":3: procedure_id:") {
		t.Errorf("error line = %q", got)
	}
	if n, _ := u.st.CountAwaitingHistology(u.ctx); n != u.inbox.total {
		t.Errorf("a refused import changed the waiting count")
	}

	good := write("good.csv", header+fmt.Sprintf("%s,%d,tubular_adenoma,low,2026-11-01\n", first.ProcedureID, first.LesionNo))
	before := u.inbox.total
	var res workspace.ImportReport
	u.inbox.importFile(good, func(r workspace.ImportReport, err error) { res, gotErr = r, err })
	u.jobs.wait()
	if gotErr != nil || res.Rows != 1 {
		t.Fatalf("good import: %+v, %v", res, gotErr)
	}
	if u.inbox.total != before-1 {
		t.Errorf("after importing one result, %d wait; want %d", u.inbox.total, before-1)
	}
}
