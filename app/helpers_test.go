package app

import (
	"context"
	"os"
	"path/filepath"
	"testing"
	"time"

	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"polypledger/workspace"
)

// fixedNow is the clock of every app test: after the demo unit's last day.
func fixedNow() time.Time { return time.Date(2026, 11, 15, 10, 0, 0, 0, time.UTC) }

// newTestUI opens a fresh database in a temporary folder (with its own
// unit key) under the headless test driver. With demoCases > 0 it holds
// the invented demo unit of that size.
func newTestUI(t *testing.T, demoCases int) *ui {
	t.Helper()
	dir := t.TempDir()
	// Owner-only, as the program makes its configuration folder; a folder
	// open to others brings up a warning window (TestKeyOpenToOthersIsShown).
	if err := os.Chmod(dir, 0o700); err != nil {
		t.Fatal(err)
	}
	t.Setenv("POLYPLEDGER_HOME", dir)
	a := test.NewTempApp(t)
	w := a.NewWindow("test")
	t.Cleanup(w.Close)
	path := filepath.Join(dir, "unit.db")
	if demoCases > 0 {
		st, err := workspace.OpenStore(context.Background(), path, true)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := workspace.CreateDemo(context.Background(), st, demoCases, 7, nil); err != nil {
			t.Fatal(err)
		}
		if err := st.Close(); err != nil {
			t.Fatal(err)
		}
	}
	u := newUI(a, w, fixedNow)
	if err := u.open(path); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		u.jobs.wait()
		u.close()
	})
	u.jobs.wait()
	return u
}

// timeValue is a civil date as the logbook holds it.
type timeValue = time.Time

// cell names a table cell.
func cell(row, col int) widget.TableCellID { return widget.TableCellID{Row: row, Col: col} }

// entry is the entry of the form's field for column.
func (rf *recordForm[R]) entry(column string) *entry { return rf.field(column).input.(*entry) }

// scores is the score drop-down of the form's field for column.
func (rf *recordForm[R]) scores(column string) *keySelect { return rf.field(column).input.(*keySelect) }

// codeChoice is the code drop-down of the form's field for column.
func codeChoice[T comparable, R any](rf *recordForm[R], column string) *choice[T] {
	return rf.field(column).input.(*choice[T])
}
