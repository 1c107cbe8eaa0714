// Package app is the desktop program: a Fyne window over the unit database.
// It holds only user-interface code; records go through store and figures
// come from report.
package app

import (
	"context"
	"fmt"

	"fyne.io/fyne/v2"
	fyneapp "fyne.io/fyne/v2/app"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/store"
)

// Run opens the desktop window on the database at dbPath and returns when
// the window is closed.
func Run(dbPath string) error {
	ctx := context.Background()
	a := fyneapp.NewWithID("org.polypledger.logbook")
	w := a.NewWindow("polypledger")
	var body fyne.CanvasObject
	st, err := store.Open(ctx, dbPath, store.Options{})
	if err != nil {
		body = widget.NewLabel("Cannot open the database:\n" + err.Error())
	} else {
		defer st.Close()
		n, err := st.CountProcedures(ctx, store.ListQuery{})
		text := fmt.Sprintf("Database: %s\nProcedures recorded: %d", st.Path(), n)
		if err != nil {
			text = err.Error()
		}
		body = widget.NewLabel(text)
	}
	w.SetContent(container.NewPadded(body))
	w.Resize(fyne.NewSize(640, 240))
	w.ShowAndRun()
	return nil
}
