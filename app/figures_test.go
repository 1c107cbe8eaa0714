package app

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/workspace"
)

// TestFiguresMatchMetrics checks that every row shows the figure
// workspace.Audit.Figures computes for the same request — the path the
// metrics command and the reports take — for the unit, two endoscopists
// and a trainee.
func TestFiguresMatchMetrics(t *testing.T) {
	u := newTestUI(t, 1500)
	s := u.figures
	from, to, err := s.period.read()
	if err != nil {
		t.Fatal(err)
	}
	ws, err := workspace.NewAudit(u.ctx, u.st, "", u.profiles)
	if err != nil {
		t.Fatal(err)
	}
	trainee := -1
	for i, p := range s.whoIDs {
		if p.TraineeID != "" && trainee < 0 {
			trainee = i
		}
	}
	for _, i := range []int{0, 1, 2, trainee} {
		label := s.whose.Options[i]
		s.whose.SetSelected(label)
		s.compute()
		u.jobs.wait()
		pop := s.population()
		figs, err := ws.Figures(u.ctx, workspace.Request{From: from, To: to, Whose: pop}, nil)
		if err != nil {
			t.Fatal(err)
		}
		inds, _ := pop.Indicators(figs)
		if len(inds) == 0 || len(s.rows) != len(inds) {
			t.Fatalf("%s: %d rows for %d indicators", label, len(s.rows), len(inds))
		}
		for _, ind := range inds {
			r := s.rows[ind.ID]
			if r == nil {
				t.Errorf("%s: no row for %s", label, ind.ID)
				continue
			}
			if got := r.value.Text; got != audit.FormatValue(ind) {
				t.Errorf("%s %s: row shows %q, metrics gives %q", label, ind.ID, got, audit.FormatValue(ind))
			}
			if got := r.count.Text; got != audit.FormatCount(ind) {
				t.Errorf("%s %s: row counts %q, metrics %q", label, ind.ID, got, audit.FormatCount(ind))
			}
			if r.ind.Status != ind.Status || !strings.HasPrefix(r.verdict.Text, ind.Status.Words()) {
				t.Errorf("%s %s: verdict %q, metrics %s", label, ind.ID, r.verdict.Text, ind.Status)
			}
			if ind.Status == audit.TooFew && r.value.Importance != widget.LowImportance {
				t.Errorf("%s %s: too few cases but not greyed", label, ind.ID)
			}
			if ind.Note != "" && r.note.Text != ind.Note {
				t.Errorf("%s %s: note %q not shown (row says %q)", label, ind.ID, ind.Note, r.note.Text)
			}
		}
	}
}

func TestFiguresOfATrainee(t *testing.T) {
	u := newTestUI(t, 1500)
	s := u.figures
	for i, p := range s.whoIDs {
		if p.TraineeID != "" {
			s.whose.SetSelectedIndex(i)
			break
		}
	}
	s.compute()
	u.jobs.wait()
	if s.rows["unassisted_caecal_intubation"] == nil {
		t.Fatalf("a trainee's figures have no unassisted caecal intubation row: %s", s.message.Text)
	}
}

// TestQuickPeriodsAreOver checks that the quick choices mean whole periods
// that ended before today, and that a period still running is said to be
// provisional where the verdicts are.
func TestQuickPeriodsAreOver(t *testing.T) {
	today := mustDate("2026-11-15")
	cases := []struct{ choice, from, to string }{
		{quickQuarter, "2026-07-01", "2026-09-30"},
		{quickYear, "2025-01-01", "2025-12-31"},
		{quickYear12, "2025-11-01", "2026-10-31"},
		{quickSoFar, "2026-10-01", "2026-12-31"},
	}
	for _, c := range cases {
		from, to, ok := completePeriod(c.choice, today)
		if !ok || logbook.FormatDate(from) != c.from || logbook.FormatDate(to) != c.to {
			t.Errorf("%s on %s: %s to %s, want %s to %s", c.choice, logbook.FormatDate(today),
				logbook.FormatDate(from), logbook.FormatDate(to), c.from, c.to)
		}
	}
	// 1 January: the last complete quarter is the previous year's fourth.
	if from, to, _ := completePeriod(quickQuarter, mustDate("2027-01-01")); logbook.FormatDate(from) != "2026-10-01" || logbook.FormatDate(to) != "2026-12-31" {
		t.Errorf("last complete quarter on 1 January 2027: %s to %s", logbook.FormatDate(from), logbook.FormatDate(to))
	}

	u := newTestUI(t, 1500)
	s := u.figures
	s.period.quick.SetSelected(quickSoFar)
	s.compute()
	u.jobs.wait()
	if !s.status.Visible() || !strings.Contains(s.status.Text, "provisional") {
		t.Errorf("a period not over says nothing: %q", s.status.Text)
	}
	for id, r := range s.rows {
		if (r.ind.Status == audit.Meets || r.ind.Status == audit.Below) && !strings.Contains(r.verdict.Text, "provisional") {
			t.Errorf("%s: verdict %q of a period not over is not marked provisional", id, r.verdict.Text)
		}
	}
	s.period.quick.SetSelected(quickQuarter)
	s.compute()
	u.jobs.wait()
	if s.status.Visible() {
		t.Errorf("a finished quarter is called unfinished: %q", s.status.Text)
	}
}

// TestFiguresFitASmallScreen lays the screen out in a 1024 × 700 window
// (less the menu, tabs and status line): nothing may need more width.
func TestFiguresFitASmallScreen(t *testing.T) {
	u := newTestUI(t, 300)
	u.figures.compute()
	u.jobs.wait()
	for name, c := range map[string]fyne.CanvasObject{
		"cases": u.list.content, "entry": u.form.content, "pathology": u.inbox.content,
		"figures": u.figures.content, "reports": u.reports.content, "settings": u.unit.content,
	} {
		if m := c.MinSize(); m.Width > 1000 || m.Height > 560 {
			t.Errorf("%s needs %v, more than a 1024 × 700 screen gives it", name, m)
		}
	}
}
