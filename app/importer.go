package app

import (
	"context"
	"errors"
	"fmt"
	"os"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/store"
)

// importKinds are the record files the File menu imports, in plain words.
var importKinds = []struct {
	kind  store.Kind
	words string
}{
	{store.Procedures, "Procedures (one row per colonoscopy)"},
	{store.Lesions, "Lesions (one row per polyp or finding)"},
	{store.Histology, "Pathology results (one row per lesion)"},
}

// chooseImport asks what kind of records a file holds and which file, then
// imports it.
func (u *ui) chooseImport() {
	var words []string
	for _, k := range importKinds {
		words = append(words, k.words)
	}
	kind := newKeySelect(words, nil)
	kind.SetSelectedIndex(0)
	update := widget.NewCheck("Records already stored may be replaced by the file's", nil)
	help := widget.NewLabel("The file is a CSV file with a header row naming the columns listed in the README. " +
		"It is stored whole or not at all: any bad row is listed and nothing is stored.")
	help.Wrapping = fyne.TextWrapWord
	var d dialog.Dialog
	pick := newButton("Choose the file…", func() {
		k := importKinds[max(0, kind.SelectedIndex())].kind
		opt := store.ImportOptions{Update: update.Checked}
		d.Hide()
		u.openFile([]string{".csv"}, func(path string) { u.importFile(k, path, opt, nil) })
	})
	pick.Importance = widget.HighImportance
	d = dialog.NewCustom("Import records from a file", "Cancel",
		container.NewVBox(widget.NewLabel("What the file holds:"), kind, update, help, container.NewHBox(pick)), u.win)
	d.Resize(fyne.NewSize(min(560, u.win.Canvas().Size().Width-40), 300))
	d.Show()
	u.win.Canvas().Focus(kind)
}

// importFile imports a CSV file of kind off the UI thread with a progress
// bar and Cancel; refused rows are listed as the command line lists them
// (FILE:LINE: column: reason), and ids added to the roster are named.
// done, when set, is called afterwards with the result (tests).
func (u *ui) importFile(kind store.Kind, path string, opt store.ImportOptions, done func(store.ImportResult, error)) {
	var res store.ImportResult
	u.jobs.run("Importing "+string(kind), func(ctx context.Context, report progressFunc) error {
		f, err := os.Open(path)
		if err != nil {
			return fmt.Errorf("cannot open %s: %w", path, err)
		}
		defer f.Close()
		var size int64
		if fi, err := f.Stat(); err == nil {
			size = fi.Size()
		}
		opt.Progress = func(rows int, read int64) {
			frac := -1.0
			if size > 0 {
				frac = float64(read) / float64(size)
			}
			report(frac, fmt.Sprintf("%d rows read", rows))
		}
		res, err = u.st.Import(ctx, kind, path, f, opt)
		return err
	}, func(err error) {
		if done != nil {
			defer done(res, err)
		}
		u.recordsChanged()
		if len(res.RosterAdded) > 0 {
			u.rosterChanged()
		}
		if u.inbox != nil {
			u.inbox.reload()
		}
		var ie *store.ImportError
		switch {
		case cancelled(err):
			dialog.ShowInformation("Import stopped", "The import was cancelled; nothing was stored.", u.win)
		case errors.As(err, &ie):
			u.showImportErrors(ie)
		case err != nil:
			dialog.ShowError(fmt.Errorf("nothing was imported: %w", err), u.win)
		default:
			msg := fmt.Sprintf("%d rows were stored from %s.", res.Rows, path)
			if len(res.RosterAdded) > 0 {
				var ids []string
				for _, r := range res.RosterAdded {
					ids = append(ids, r.ID)
				}
				msg += " Added to the roster: " + strings.Join(ids, ", ") + "; give them names under Unit settings."
			}
			dialog.ShowInformation("Records imported", msg, u.win)
		}
	})
}

// showImportErrors lists a refused file's problems, one line each.
func (u *ui) showImportErrors(ie *store.ImportError) {
	text := widget.NewLabel(ie.Error())
	text.Wrapping = fyne.TextWrapWord
	text.TextStyle.Monospace = true
	body := container.NewBorder(widget.NewLabel("Nothing was imported. Correct these rows and import the file again:"), nil, nil, nil,
		container.NewVScroll(text))
	d := dialog.NewCustom("The file was refused", "Close", body, u.win)
	size := u.win.Canvas().Size()
	d.Resize(fyne.NewSize(min(760, size.Width-40), min(420, size.Height-60)))
	d.Show()
}
