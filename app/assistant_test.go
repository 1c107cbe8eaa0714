package app

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"polypledger/recipe"
	"polypledger/store"
	"polypledger/workspace"
)

// sources holds the shipped shapes of other systems' files.
const sources = "../testdata/sources"

// copySource copies a shipped file into a temporary folder, as a file a
// person chooses.
func copySource(t *testing.T, rel string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(sources, rel))
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), filepath.Base(rel))
	if err := os.WriteFile(p, b, 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}

// find returns the first object under root of type T for which ok holds.
func find[T fyne.CanvasObject](root fyne.CanvasObject, ok func(T) bool) (T, bool) {
	var zero T
	if root == nil || !root.Visible() {
		return zero, false
	}
	if o, is := root.(T); is && ok(o) {
		return o, true
	}
	for _, c := range children(root) {
		if o, found := find(c, ok); found {
			return o, true
		}
	}
	return zero, false
}

// labels returns the text of every label shown under root.
func labels(root fyne.CanvasObject) string {
	var b strings.Builder
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		if o == nil || !o.Visible() {
			return
		}
		if l, ok := o.(*widget.Label); ok {
			b.WriteString(l.Text + "\n")
		}
		for _, c := range children(o) {
			walk(c)
		}
	}
	walk(root)
	return b.String()
}

// press taps the assistant's button with text, failing when it is not
// shown or not enabled.
func (a *assistant) press(t *testing.T, text string) {
	t.Helper()
	b, ok := find(a.body, func(b *button) bool { return b.Text == text })
	if !ok {
		t.Fatalf("no button %q on the assistant's page:\n%s", text, labels(a.body))
	}
	if b.Disabled() {
		t.Fatalf("the button %q is disabled; the page says:\n%s", text, labels(a.body))
	}
	test.Tap(b)
}

// picker returns the picker that follows the label text in a two-column
// grid of the mapping page.
func (a *assistant) picker(t *testing.T, label string) *keySelect {
	t.Helper()
	var found *keySelect
	for o, n := range a.u.names {
		if s, ok := o.(*keySelect); ok && n == label {
			if _, shown := find(a.body, func(x *keySelect) bool { return x == s }); shown {
				return s
			}
		}
	}
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		if o == nil || found != nil {
			return
		}
		if c, ok := o.(*fyne.Container); ok {
			for i := 0; i+1 < len(c.Objects); i++ {
				if l, ok := c.Objects[i].(*widget.Label); ok && l.Text == label {
					if s, ok := c.Objects[i+1].(*keySelect); ok {
						found = s
						return
					}
				}
			}
		}
		for _, c := range children(o) {
			walk(c)
		}
	}
	walk(a.body)
	if found == nil {
		t.Fatalf("no picker beside %q:\n%s", label, labels(a.body))
	}
	return found
}

// chooseFile types a file's path into the first step and reads the file.
func (a *assistant) chooseFile(t *testing.T, path string) {
	t.Helper()
	a.path.SetText(path)
	a.press(t, "Read the file")
	a.u.jobs.wait()
}

// importThrough runs the assistant on a file of another system: read, the
// mapping as proposed (or as changed by adjust), the preview, and the
// import; it returns the import's result.
func importThrough(t *testing.T, u *ui, path string, adjust func(a *assistant)) (workspace.ImportReport, error) {
	t.Helper()
	a := u.openAssistant()
	var rep workspace.ImportReport
	var err error
	a.done = func(r workspace.ImportReport, e error) { rep, err = r, e }
	a.chooseFile(t, path)
	if a.rcp == nil {
		t.Fatalf("no mapping for %s:\n%s", path, labels(a.body))
	}
	if adjust != nil {
		adjust(a)
	}
	a.press(t, "Preview…")
	u.jobs.wait()
	page := labels(a.body)
	if !strings.Contains(page, "No problem: it is ready to import.") {
		t.Fatalf("the preview of %s:\n%s", path, page)
	}
	a.press(t, "Save the recipe and import")
	u.jobs.wait()
	return rep, err
}

// sameAsOurs fails the test unless the app's store holds exactly the
// records of our own CSV files of the shipped shapes (imported into another
// database with the same unit key).
func sameAsOurs(t *testing.T, u *ui, ours map[store.Kind]string) {
	t.Helper()
	ctx := context.Background()
	other, err := workspace.OpenStore(ctx, filepath.Join(t.TempDir(), "ours.db"), true)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	for _, k := range recipe.Kinds {
		if f, ok := ours[k]; ok {
			if _, err := workspace.ImportFile(ctx, other, workspace.ImportRequest{Path: filepath.Join(sources, f), Kind: k}); err != nil {
				t.Fatal(err)
			}
		}
	}
	for _, k := range recipe.Kinds {
		var got, want bytes.Buffer
		if _, err := u.st.Export(ctx, k, &got); err != nil {
			t.Fatal(err)
		}
		if _, err := other.Export(ctx, k, &want); err != nil {
			t.Fatal(err)
		}
		if got.String() != want.String() {
			t.Errorf("%s stored through the assistant:\n%s\nour CSV:\n%s", k, got.String(), want.String())
		}
	}
}

// TestAssistantImportsOurOwnFileDirectly: a file of ours is recognised by
// its header and imported as it is, without a recipe; the ids it adds to
// the roster are on screen afterwards.
func TestAssistantImportsOurOwnFileDirectly(t *testing.T) {
	u := newTestUI(t, 20)
	path := filepath.Join(t.TempDir(), "procedures.csv")
	csv := strings.Join(store.Columns(store.Procedures), ",") + "\n" +
		"IMP-1,2026-10-01,E01,,,,,60,F,screening,outpatient,none,caecum,,yes,480,3,2,2,yes,,,,,,no,none,\n" +
		"IMP-2,2026-10-02,E77,,,,,55,M,diagnostic,outpatient,none,incomplete,looping,no,,,,,,,,,,,,,\n"
	if err := os.WriteFile(path, []byte(csv), 0o600); err != nil {
		t.Fatal(err)
	}
	a := u.openAssistant()
	var rep workspace.ImportReport
	var err error
	a.done = func(r workspace.ImportReport, e error) { rep, err = r, e }
	a.chooseFile(t, path)
	if page := labels(a.body); !strings.Contains(page, "is a procedures file of this program's own") {
		t.Fatalf("the page says:\n%s", page)
	}
	a.press(t, "Import")
	u.jobs.wait()
	if err != nil || rep.Rows != 2 {
		t.Fatalf("import: %d rows, %v", rep.Rows, err)
	}
	if _, err := u.st.Case(u.ctx, "IMP-2"); err != nil {
		t.Errorf("IMP-2 not stored: %v", err)
	}
	found := false
	for _, r := range u.roster {
		found = found || r.ID == "E77"
	}
	if !found {
		t.Error("the roster on screen does not hold the endoscopist the file added")
	}
	if saved, _ := workspace.SavedRecipes(); len(saved) != 0 {
		t.Errorf("a file of ours saved a recipe: %v", saved)
	}
}

// TestAssistantMapsOtherSystemsFiles imports the procedure-room system's
// file and then the laboratory's results through the assistant: the first
// as proposed, after a value picker and a column picker are tried and put
// back; the second once the date picker says the laboratory's day order.
// The records stored are those of our own CSV files, each recipe is saved
// under its name, and the saved recipe is offered for the next file with
// the same columns.
func TestAssistantMapsOtherSystemsFiles(t *testing.T) {
	u := newTestUI(t, 0)
	room := copySource(t, "room/room.csv")
	rep, err := importThrough(t, u, room, func(a *assistant) {
		if got := a.picker(t, "performed_on").Selected; got != "ExamDate" {
			t.Errorf("performed_on ← %q, want ExamDate", got)
		}
		// A value picker: the file's "Change in bowel habit" → our code.
		p := a.picker(t, `"Change in bowel habit"`)
		if p.Selected != "diagnostic" {
			t.Errorf("%q → %q, want diagnostic", "Change in bowel habit", p.Selected)
		}
		p.SetSelected("therapeutic")
		if got := a.rcp.Values("indication")["change in bowel habit"]; got != "therapeutic" {
			t.Errorf("after the picker, the recipe maps it to %q", got)
		}
		a.picker(t, `"Change in bowel habit"`).SetSelected("diagnostic")
		// A column picker: indication read from no column, then from its own.
		a.picker(t, "indication").SetSelected(notInFile)
		if _, ok := a.rcp.Columns["indication"]; ok {
			t.Error("indication is still mapped")
		}
		a.picker(t, "indication").SetSelected("Referral")
		a.name.SetText("Room system")
	})
	if err != nil {
		t.Fatalf("room import: %v", err)
	}
	if rep.Kinds[store.Procedures].New != 6 || rep.Kinds[store.Lesions].New != 7 {
		t.Errorf("stored %v", rep.Kinds)
	}

	lab := copySource(t, "lab/lab.csv")
	a := u.openAssistant()
	a.chooseFile(t, lab)
	if got := a.picker(t, "Dates in the file").Selected; got != isoDates {
		t.Errorf("the laboratory's dates proposed as %q", got)
	}
	a.press(t, "Preview…")
	u.jobs.wait()
	if page := labels(a.body); !strings.Contains(page, `Reported (reported_on): "02/04/2026" is not a real date in the form YYYY-MM-DD`) {
		t.Errorf("the preview does not show the date problem:\n%s", page)
	}
	a.press(t, "Back")
	a.picker(t, "Dates in the file").SetSelected("DD/MM/YYYY")
	a.press(t, "Preview…")
	u.jobs.wait()
	if page := labels(a.body); !strings.Contains(page, "No problem") || !strings.Contains(page, "Columns the recipe does not read: Lab no, Pathologist.") {
		t.Fatalf("the preview:\n%s", page)
	}
	var err2 error
	a.done = func(_ workspace.ImportReport, e error) { err2 = e }
	a.press(t, "Save the recipe and import")
	u.jobs.wait()
	if err2 != nil {
		t.Fatalf("lab import: %v", err2)
	}
	sameAsOurs(t, u, map[store.Kind]string{store.Procedures: "room/procedures.csv", store.Lesions: "room/lesions.csv", store.Histology: "lab/histology.csv"})

	saved, err := workspace.SavedRecipes()
	if err != nil || len(saved) != 2 {
		t.Fatalf("saved recipes %v, %v", saved, err)
	}
	dir, _ := workspace.RecipeDir()
	if _, err := os.Stat(filepath.Join(dir, "room-system.toml")); err != nil {
		t.Errorf("the room recipe is not saved under its name: %v", err)
	}
	again := u.openAssistant()
	again.chooseFile(t, copySource(t, "room/room.csv"))
	if page := labels(again.body); again.savedAt != filepath.Join(dir, "room-system.toml") || !strings.Contains(page, `The saved recipe "Room system" fits this file's columns`) {
		t.Errorf("the saved recipe is not offered (%q):\n%s", again.savedAt, page)
	}
}

// TestAssistantWideWorkbook maps the audit spreadsheet (a workbook, a
// procedure a row with its polyps side by side) as proposed.
func TestAssistantWideWorkbook(t *testing.T) {
	u := newTestUI(t, 0)
	if _, err := importThrough(t, u, copySource(t, "wide/audit.xlsx"), func(a *assistant) {
		if got := a.picker(t, "size_mm").Selected; got != "Polyp {n} size" {
			t.Errorf("size_mm ← %q", got)
		}
	}); err != nil {
		t.Fatal(err)
	}
	sameAsOurs(t, u, map[store.Kind]string{store.Procedures: "wide/procedures.csv", store.Lesions: "wide/lesions.csv"})
}
