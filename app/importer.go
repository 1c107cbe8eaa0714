package app

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

// runImport imports a file off the UI thread, as req says, with a progress
// bar and Cancel; refused rows are listed as the command line lists them
// (FILE:LINE: column: reason), and ids added to the roster are named. done,
// when set, is called afterwards with the result (tests).
func (u *ui) runImport(req workspace.ImportRequest, done func(workspace.ImportReport, error)) {
	var rep workspace.ImportReport
	u.jobs.run("Importing "+filepath.Base(req.Path), func(ctx context.Context, report progressFunc) error {
		req.Progress = func(rows int, f float64) { report(f, fmt.Sprintf("%d rows read", rows)) }
		var err error
		rep, err = workspace.ImportFile(ctx, u.st, req)
		return err
	}, func(err error) {
		if done != nil {
			defer done(rep, err)
		}
		u.recordsChanged()
		if len(rep.RosterAdded) > 0 {
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
			dialog.ShowInformation("Records imported", importedWords(req, rep), u.win)
		}
	})
}

// importedWords says what an import stored.
func importedWords(req workspace.ImportRequest, rep workspace.ImportReport) string {
	msg := fmt.Sprintf("%d rows were stored from %s.", rep.Rows, req.Path)
	if req.Recipe != nil || req.Kind == "" {
		var parts []string
		for _, k := range logbook.Kinds {
			if c := rep.Kinds[k]; c.New+c.Replacing > 0 {
				parts = append(parts, k.Count(c.New+c.Replacing))
			}
		}
		msg = fmt.Sprintf("%d rows of %s were read and stored: %s.", rep.Rows, req.Path, strings.Join(parts, ", "))
	}
	if len(rep.RosterAdded) > 0 {
		var ids []string
		for _, r := range rep.RosterAdded {
			ids = append(ids, r.ID)
		}
		msg += " Added to the roster: " + strings.Join(ids, ", ") + "; give them names under Unit settings."
	}
	if len(rep.Unused) > 0 {
		msg += " Columns not read: " + strings.Join(rep.Unused, ", ") + "."
	}
	return msg
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
