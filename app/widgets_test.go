package app

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

// TestFormFollowsTheKeyboard tabs through the case form in a small
// window: each field that gets the keyboard is scrolled into view.
func TestFormFollowsTheKeyboard(t *testing.T) {
	u := newTestUI(t, 20)
	u.win.Resize(fyne.NewSize(1024, 600))
	u.tabs.SelectIndex(1)
	c := u.win.Canvas()
	d := fyne.CurrentApp().Driver()
	s := u.form.scroll
	moved := false
	for i := 0; i < 40; i++ {
		c.FocusNext()
		f, ok := c.Focused().(fyne.CanvasObject)
		if !ok {
			continue
		}
		top := d.AbsolutePositionForObject(f).Y - d.AbsolutePositionForObject(s).Y
		if top < 0 || top+f.Size().Height > s.Size().Height {
			t.Fatalf("step %d: the field with the keyboard is out of view (%.0f in a %.0f high area)", i, top, s.Size().Height)
		}
		moved = moved || s.Offset.Y > 0
	}
	if !moved {
		t.Error("tabbing down the form never scrolled it")
	}
}

// TestEnterPressesAButton checks that Enter on a button with the keyboard
// presses it, as Space does.
func TestEnterPressesAButton(t *testing.T) {
	test.NewTempApp(t)
	for _, k := range []fyne.KeyName{fyne.KeyReturn, fyne.KeyEnter, fyne.KeySpace} {
		pressed := 0
		b := newButton("Go", func() { pressed++ })
		b.TypedKey(&fyne.KeyEvent{Name: k})
		if pressed != 1 {
			t.Errorf("%s pressed the button %d times", k, pressed)
		}
	}
}

// TestColumnsFollowTheWidth lays two groups side by side in a wide window
// and one under the other in a narrow one, never needing more width than
// the widest group.
func TestColumnsFollowTheWidth(t *testing.T) {
	a := test.NewTempApp(t)
	left, right := widget.NewLabel("left group"), widget.NewLabel("right group")
	cols, l := newColumns(300, left, right)
	changes := 0
	l.onChange = func() { changes++ }
	w := a.NewWindow("columns")
	defer w.Close()
	w.SetContent(container.NewVScroll(cols))
	for _, c := range []struct {
		width float32
		side  bool
	}{{900, true}, {500, false}, {900, true}} {
		w.Resize(fyne.NewSize(c.width, 400))
		side := left.Position().Y == right.Position().Y
		if side != c.side {
			t.Errorf("at %v wide: side by side %v, want %v", c.width, side, c.side)
		}
	}
	if min := cols.MinSize().Width; min > 300 {
		t.Errorf("the columns need %v wide, more than one group", min)
	}
}

// TestEmptyUnitSaysWhatToDo opens a unit with no cases: the case list says
// how to add some instead of showing a blank grid.
func TestEmptyUnitSaysWhatToDo(t *testing.T) {
	u := newTestUI(t, 0)
	u.list.reload()
	u.jobs.wait()
	if !u.list.hint.Visible() || !strings.Contains(u.list.hint.Text, "No cases yet") {
		t.Errorf("an empty unit's case list says %q", u.list.hint.Text)
	}
	u.figures.compute()
	u.jobs.wait()
	if !strings.Contains(u.figures.message.Text, "no procedures") {
		t.Errorf("an empty unit's figures say %q", u.figures.message.Text)
	}
}

// TestChoosingWhoseFiguresStartsAtTheTop scrolls down the figures and
// chooses another endoscopist: the new figures show from the top, without
// reading the cases again.
func TestChoosingWhoseFiguresStartsAtTheTop(t *testing.T) {
	u := newTestUI(t, 600)
	u.win.Resize(fyne.NewSize(1024, 700))
	u.tabs.SelectIndex(3)
	u.jobs.wait()
	s := u.figures
	s.scroll.Refresh() // lays the new rows out
	s.scroll.ScrollToOffset(fyne.NewPos(0, 2000))
	if s.scroll.Offset.Y == 0 {
		t.Fatalf("the figures do not scroll (%v, min %v, in %v); the test needs them to", s.scroll.Content.Size(), s.scroll.Content.MinSize(), s.scroll.Size())
	}
	before := s.last
	s.whose.SetSelectedIndex(1)
	u.jobs.wait()
	if s.scroll.Offset.Y != 0 {
		t.Errorf("after choosing another endoscopist the figures stay scrolled to %v", s.scroll.Offset.Y)
	}
	if !strings.HasPrefix(s.shownFor, s.whose.Options[1]) || s.last.Completeness != before.Completeness {
		t.Errorf("figures shown for %q", s.shownFor)
	}
}

// TestRosterNamesTheRoleOnce shows a trainee in the roster: the role
// appears once, beside the name.
func TestRosterNamesTheRoleOnce(t *testing.T) {
	test.NewTempApp(t)
	line := rosterLine(logbook.RosterEntry{ID: "T01", Name: "Dr Ada Nwachukwu", Role: logbook.RoleTrainee})
	var texts []string
	for _, o := range children(line) {
		if l, ok := o.(*widget.Label); ok {
			texts = append(texts, l.Text)
		}
	}
	all := strings.Join(texts, " ")
	if strings.Count(strings.ToLower(all), "trainee") != 1 {
		t.Errorf("roster line %q names the role other than once", all)
	}
}

// TestFigureRowShowsNoteStrictAndVerdict builds a row for a figure with a
// note and a strict maximum.
func TestFigureRowShowsNoteStrictAndVerdict(t *testing.T) {
	test.NewTempApp(t)
	v, target := 0.10, 0.10
	// Discomfort must stay below 10% (JAG certification KPI, Siau 2023),
	// so exactly 10% does not meet it and the target prints "<".
	ind := audit.Indicator{ID: "comfort_discomfort", Numerator: 30, Denominator: 300, Value: &v, Target: &target,
		Maximum: true, Strict: true, Status: audit.Below, Note: "12 without a comfort score left out."}
	r := newFigureRow(ind, false)
	if r.note.Text != ind.Note || !r.note.Visible() {
		t.Errorf("note shown as %q", r.note.Text)
	}
	if r.target.Text != "target < 10.0%" {
		t.Errorf("target shown as %q", r.target.Text)
	}
	if r.verdict.Text != "below target" || r.count.Text != "30 of 300 procedures" {
		t.Errorf("verdict %q, count %q", r.verdict.Text, r.count.Text)
	}
	if r.value.Importance == widget.LowImportance {
		t.Error("a judged figure is greyed")
	}
	p := newFigureRow(ind, true)
	if p.verdict.Text != "below target (provisional)" || !strings.Contains(p.provisional.Text, "not over") {
		t.Errorf("a period not over shows %q / %q", p.verdict.Text, p.provisional.Text)
	}
}

// TestOpenAnotherDatabase opens a second unit in place of the first, as the
// File menu does, and refuses a file that is not a database, keeping the
// unit open before.
func TestOpenAnotherDatabase(t *testing.T) {
	u := newTestUI(t, 30)
	second := filepath.Join(t.TempDir(), "other.db")
	st, err := workspace.OpenStore(u.ctx, second, true)
	if err != nil {
		t.Fatal(err)
	}
	s := store.DefaultSettings
	s.UnitName = "Second Unit"
	if err := st.SaveSettings(u.ctx, s); err != nil {
		t.Fatal(err)
	}
	st.Close()

	var failed error
	u.openLater(second, func(err error) { failed = err })
	u.jobs.wait()
	if failed != nil || u.st.Path() != second || u.settings.UnitName != "Second Unit" {
		t.Fatalf("after opening %s: open %s (%q), %v", second, u.st.Path(), u.settings.UnitName, failed)
	}

	junk := filepath.Join(t.TempDir(), "notes.db")
	if err := os.WriteFile(junk, []byte("not a database, just notes"), 0o600); err != nil {
		t.Fatal(err)
	}
	u.openLater(junk, func(err error) { failed = err })
	u.jobs.wait()
	if failed == nil || u.st.Path() != second {
		t.Errorf("a file that is not a database: %v, and %s is open", failed, u.st.Path())
	}
}
