package app

import (
	"context"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"polypledger/logbook"
	"polypledger/workspace"
)

// TestColleaguesCasesAppear: while the window shows the case list, a
// colleague's program stores a new case with a lesion awaiting histology
// in the same database; without a restart the list and the status line
// count it, and the pathology inbox, once shown, lists its lesion.
func TestColleaguesCasesAppear(t *testing.T) {
	u := newTestUI(t, 60)
	u.stopWatch()
	u.stopWatch = u.watchChanges(50 * time.Millisecond)
	u.tabs.SelectIndex(0)
	loadFirstPage(u)
	before := u.list.count
	u.tabs.SelectIndex(2)
	u.jobs.wait()
	waiting := u.inbox.total
	u.tabs.SelectIndex(0)
	u.jobs.wait()

	colleague, err := workspace.OpenStore(context.Background(), filepath.Join(filepath.Dir(u.st.Path()), "unit.db"), true)
	if err != nil {
		t.Fatal(err)
	}
	defer colleague.Close()
	c, err := colleague.Case(context.Background(), u.list.visibleIDs()[0])
	if err != nil {
		t.Fatal(err)
	}
	c.ID = "FROM-ROOM-2"
	c.PerformedOn = fixedNow().AddDate(0, 0, -1)
	l := logbook.NewLesion()
	l.ProcedureID, l.LesionNo, l.Segment, l.SizeMM = c.ID, 1, logbook.Rectum, 4
	l.Resection, l.Retrieved, l.SentToPathology, l.Histology = logbook.ColdSnare, logbook.Yes, logbook.Yes, logbook.HistPending
	c.Lesions = []logbook.Lesion{l}
	if err := colleague.SaveCase(context.Background(), c, true); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(10 * time.Second)
	for u.list.count != before+1 && time.Now().Before(deadline) {
		time.Sleep(20 * time.Millisecond)
		u.jobs.wait()
	}
	if u.list.count != before+1 {
		t.Fatalf("the case list shows %d cases, want %d with the colleague's", u.list.count, before+1)
	}
	if !strings.Contains(u.status.Text, "database "+u.st.Path()) || strings.Contains(u.status.Text, "read only") {
		t.Errorf("status line %q", u.status.Text)
	}
	u.tabs.SelectIndex(2)
	u.jobs.wait()
	if u.inbox.total <= waiting {
		t.Errorf("the pathology inbox counts %d lesions, want more than %d", u.inbox.total, waiting)
	}
}

// TestStatusText: the status line's counts take the word that matches them
// and are grouped by thousands (issue: "1 lesions awaiting histology").
func TestStatusText(t *testing.T) {
	for _, c := range []struct {
		procedures, waiting int
		want                string
	}{
		{1, 1, "Unit  ·  1 procedure, 1 lesion awaiting histology  ·  database u.db"},
		{0, 0, "Unit  ·  0 procedures, 0 lesions awaiting histology  ·  database u.db"},
		{12345, 1001, "Unit  ·  12,345 procedures, 1,001 lesions awaiting histology  ·  database u.db"},
	} {
		if got := statusText("Unit", c.procedures, c.waiting, "database u.db"); got != c.want {
			t.Errorf("statusText(%d, %d) = %q, want %q", c.procedures, c.waiting, got, c.want)
		}
	}
}

// TestCountOf: a count (the case list's among them) is grouped by
// thousands and takes the singular word for one.
func TestCountOf(t *testing.T) {
	for n, want := range map[int]string{0: "0 cases", 1: "1 case", 4000: "4,000 cases", 1234567: "1,234,567 cases"} {
		if got := countOf(n, "case", "cases"); got != want {
			t.Errorf("countOf(%d) = %q, want %q", n, got, want)
		}
	}
}
