package app

import (
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"polypledger/store"
)

// TestSaveDialogWriterTouchesNothing checks that the writer the save dialog
// hands over leaves an existing file (here standing in for the unit's
// database) exactly as it was, and creates no file, until something is
// written through it; the toolkit's own writer empties the file at once.
func TestSaveDialogWriterTouchesNothing(t *testing.T) {
	test.NewTempApp(t)
	useLazyFileWriters()
	dir := t.TempDir()
	precious := filepath.Join(dir, "unit.db")
	if err := os.WriteFile(precious, []byte("years of a unit's work"), 0o600); err != nil {
		t.Fatal(err)
	}
	absent := filepath.Join(dir, "new.pdf")
	for _, p := range []string{precious, absent} {
		w, err := storage.Writer(storage.NewFileURI(p))
		if err != nil {
			t.Fatal(err)
		}
		if w.URI().Path() != p {
			t.Errorf("writer for %s names %s", p, w.URI().Path())
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
	}
	if b, _ := os.ReadFile(precious); string(b) != "years of a unit's work" {
		t.Errorf("the chosen existing file was changed to %q", b)
	}
	if _, err := os.Stat(absent); !os.IsNotExist(err) {
		t.Errorf("a file was created at %s without a write (%v)", absent, err)
	}
	// A real write still reaches the file.
	w, err := storage.Writer(storage.NewFileURI(absent))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Write([]byte("report")); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(absent); string(b) != "report" {
		t.Errorf("written file holds %q", b)
	}
}

// TestBackupOntoTheDatabaseIsRefused picks the unit's own database as the
// backup file (the save dialog's "overwrite?" question does not know what
// the file is): the backup is refused with a message and the database is
// byte for byte unchanged.
func TestBackupOntoTheDatabaseIsRefused(t *testing.T) {
	u := newTestUI(t, 30)
	db := u.st.Path()
	before := fileHash(t, db)
	u.unit.backupTo(db)
	u.jobs.wait()
	if got := u.unit.message.Text; !strings.Contains(got, "Backup failed") {
		t.Errorf("message after a backup onto the database: %q", got)
	}
	if after := fileHash(t, db); !bytes.Equal(before, after) {
		t.Error("the database changed")
	}
}

func fileHash(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(b)
	return h[:]
}

// TestNewUnitNeverDeletesAFile makes a unit on the first-run screen's path:
// a fill that fails leaves no file, and a path where a file already is (made
// by another program in between) is left as it was, with a message.
func TestNewUnitNeverDeletesAFile(t *testing.T) {
	dir := t.TempDir()
	t.Setenv("POLYPLEDGER_HOME", dir)
	ctx := context.Background()
	failed := filepath.Join(dir, "failed.db")
	err := createUnit(ctx, failed, func(*store.Store) error { return errors.New("stopped half-way") })
	if err == nil {
		t.Fatal("a failing fill reported success")
	}
	if _, err := os.Stat(failed); !os.IsNotExist(err) {
		t.Errorf("a failed new unit left %s (%v)", failed, err)
	}
	other := filepath.Join(dir, "other.db")
	if err := os.WriteFile(other, []byte("another program's file"), 0o600); err != nil {
		t.Fatal(err)
	}
	err = createUnit(ctx, other, func(*store.Store) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "left as it is") {
		t.Errorf("making a unit over an existing file: %v", err)
	}
	if b, _ := os.ReadFile(other); string(b) != "another program's file" {
		t.Errorf("the existing file now holds %q", b)
	}
}

// TestKeyOpenToOthersIsShown opens the app with a configuration folder any
// user may read: a window says so, naming the fix.
func TestKeyOpenToOthersIsShown(t *testing.T) {
	u := newTestUI(t, 0)
	dir := os.Getenv("POLYPLEDGER_HOME")
	if err := os.Chmod(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	u.showMain()
	top := u.win.Canvas().Overlays().Top()
	if top == nil {
		t.Fatal("no warning shown for a key folder open to others")
	}
	var text []string
	for _, o := range test.LaidOutObjects(top) {
		switch x := o.(type) {
		case *widget.Label:
			text = append(text, x.Text)
		case *canvas.Text:
			text = append(text, x.Text)
		}
	}
	if joined := strings.Join(text, " "); !strings.Contains(joined, "chmod") {
		t.Errorf("the warning does not say how to fix it: %q", joined)
	}
}
