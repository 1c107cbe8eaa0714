package app

import (
	"testing"

	"polypledger/logbook"
	"polypledger/store"
)

// loadFirstPage reads the list's first page as scrolling to the top would.
func loadFirstPage(u *ui) {
	u.jobs.wait()
	u.list.request(0)
	u.jobs.wait()
}

func TestCaseListFilters(t *testing.T) {
	u := newTestUI(t, 400)
	l := u.list
	tests := []struct {
		name  string
		set   func()
		query store.ListQuery
		check func(r store.ProcedureRow) bool
	}{
		{"everyone", func() {}, store.ListQuery{}, func(store.ProcedureRow) bool { return true }},
		{"one endoscopist", func() { l.operator.SetSelectedIndex(2) }, // E02, after "Everyone" and E01
			store.ListQuery{CaseFilter: store.CaseFilter{OperatorID: "E02"}},
			func(r store.ProcedureRow) bool { return r.Procedure.OperatorID == "E02" }},
		{"screening only", func() { l.indication.Set(logbook.Screening) },
			store.ListQuery{CaseFilter: store.CaseFilter{OperatorID: "E02"}, Indication: logbook.Screening},
			func(r store.ProcedureRow) bool { return r.Procedure.Indication == logbook.Screening }},
		{"histology pending", func() {
			l.operator.SetSelectedIndex(0)
			l.indication.ClearSelected()
			l.pending.SetChecked(true)
		}, store.ListQuery{HistologyPending: true},
			func(r store.ProcedureRow) bool { return r.AwaitingHist > 0 }},
		{"a period", func() {
			l.pending.SetChecked(false)
			l.from.SetText("2026-01-01")
			l.to.SetText("2026-03-31")
		}, store.ListQuery{CaseFilter: store.CaseFilter{From: mustDate("2026-01-01"), To: mustDate("2026-03-31")}},
			func(r store.ProcedureRow) bool {
				d := logbook.FormatDate(r.Procedure.PerformedOn)
				return d >= "2026-01-01" && d <= "2026-03-31"
			}},
	}
	for _, tc := range tests {
		tc.set()
		loadFirstPage(u)
		want, err := u.st.CountProcedures(u.ctx, tc.query)
		if err != nil {
			t.Fatal(err)
		}
		if want == 0 {
			t.Fatalf("%s: the demo unit has no such cases; the test needs some", tc.name)
		}
		if l.count != want {
			t.Errorf("%s: list shows %d cases, the store counts %d", tc.name, l.count, want)
		}
		ids := l.visibleIDs()
		if len(ids) != min(want, listPageSize) {
			t.Errorf("%s: first page has %d rows, want %d", tc.name, len(ids), min(want, listPageSize))
		}
		for i := range ids {
			r, _ := l.rowAt(i)
			if !tc.check(r) {
				t.Errorf("%s: row %d (%s) does not match the filter", tc.name, i, r.Procedure.ID)
				break
			}
		}
	}
}

func TestCaseListSortsAndPages(t *testing.T) {
	u := newTestUI(t, 400)
	l := u.list
	l.sortBy("age") // ascending first
	loadFirstPage(u)
	prev := -1
	for i := range l.visibleIDs() {
		r, _ := l.rowAt(i)
		if r.Procedure.Age < prev {
			t.Fatalf("row %d: age %d after %d; not sorted by age", i, r.Procedure.Age, prev)
		}
		prev = r.Procedure.Age
	}
	// Only the pages asked for are read, and no more than listPagesKept stay.
	for p := 0; p < 4; p++ {
		l.request(p)
	}
	u.jobs.wait()
	if got := len(l.visibleIDs()); got != 400 {
		t.Errorf("after reading four pages, %d rows are held, want 400", got)
	}
	l.mu.Lock()
	held := len(l.pages)
	l.mu.Unlock()
	if held > listPagesKept {
		t.Errorf("%d pages held, at most %d expected", held, listPagesKept)
	}
	// Cell text comes from the page; a row not yet read shows a placeholder.
	l.invalidate()
	if got := l.cellText(cell(0, 1)); got != "…" {
		t.Errorf("unread cell shows %q", got)
	}
	u.jobs.wait()
	r, _ := l.rowAt(0)
	if got := l.cellText(cell(0, 1)); got != r.Procedure.ID {
		t.Errorf("cell (0,1) = %q, want the procedure id %q", got, r.Procedure.ID)
	}
}

func mustDate(s string) (d timeValue) {
	d, err := logbook.ParseDate(s)
	if err != nil {
		panic(err)
	}
	return d
}

// TestCaseListKeepsRowsWhileReread: after records change, the rows read
// before stay on screen until their page has been read again (a deep page
// on a server can take a fifth of a second just after a change), and are
// then replaced by what the database now holds; a new filter or sort order
// shows nothing of the old list.
func TestCaseListKeepsRowsWhileReread(t *testing.T) {
	u := newTestUI(t, 150)
	l := u.list
	l.sortBy("id")
	loadFirstPage(u)
	first, ok := l.rowAt(0)
	if !ok {
		t.Fatal("first row not read")
	}
	// A case that sorts first arrives.
	c := first.Procedure
	c.ID = "0000-NEW"
	if err := u.st.SaveCase(u.ctx, logbook.Case{Procedure: c}, true); err != nil {
		t.Fatal(err)
	}
	u.recordsChanged()
	if got := l.cellText(cell(0, 1)); got != first.Procedure.ID {
		t.Errorf("while the page is read again, row 0 shows %q, want the row shown before (%q)", got, first.Procedure.ID)
	}
	u.jobs.wait()
	if got := l.cellText(cell(0, 1)); got != "0000-NEW" {
		t.Errorf("after the page is read again, row 0 shows %q, want the new case", got)
	}
	if got := l.cellText(cell(1, 1)); got != first.Procedure.ID {
		t.Errorf("row 1 shows %q, want %q", got, first.Procedure.ID)
	}
	l.mu.Lock()
	stale := len(l.shown)
	l.mu.Unlock()
	if stale != 0 {
		t.Errorf("%d pages of old rows kept after every page shown was read again", stale)
	}
	// Ordering the list otherwise forgets the old rows at once.
	l.sortBy("age")
	if got := l.cellText(cell(0, 1)); got != "…" {
		t.Errorf("just after a new sort order, row 0 shows %q, want the placeholder", got)
	}
	u.jobs.wait()
}
