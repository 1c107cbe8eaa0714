package app

import (
	"context"
	"time"

	"fyne.io/fyne/v2"
)

// watchEvery is how often the app looks for changes stored by others.
const watchEvery = 3 * time.Second

// watchChanges looks every interval at the database's change mark (one
// index lookup, on a file or a server) and, when anyone — a colleague's
// workstation, an import on the command line — has stored something since,
// brings the screens up to date with refreshFromDatabase. It returns the
// function that stops it.
func (u *ui) watchChanges(interval time.Duration) (stop func()) {
	st := u.st
	ctx, cancel := context.WithCancel(u.ctx)
	last, err := st.ChangeMark(ctx)
	if err != nil {
		last = -1
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		t := time.NewTicker(interval)
		defer t.Stop()
		for {
			select {
			case <-ctx.Done():
				return
			case <-t.C:
			}
			mark, err := st.ChangeMark(ctx)
			if err != nil || mark == last {
				continue
			}
			last = mark
			fyne.Do(func() {
				if ctx.Err() == nil && u.st == st {
					u.refreshFromDatabase()
				}
			})
		}
	}()
	return func() {
		cancel()
		<-done
	}
}

// refreshFromDatabase is the hook for changes stored by others: the
// status line, and the case list and the pathology inbox when shown (the
// other screens read the database again when they are next shown).
func (u *ui) refreshFromDatabase() {
	u.recordsChanged()
	switch u.tabs.SelectedIndex() {
	case 0:
		u.list.reload()
	case 2:
		u.inbox.reload()
	}
}

// databaseName says, for the status line, which database the window is
// on: its file, or the server and the database's name (never a password),
// and whether this connection may only read.
func (u *ui) databaseName() string {
	name := "database " + u.st.Location()
	if u.st.OnServer() {
		name = u.st.Location()
	}
	if ok, _ := u.st.Writable(); !ok {
		name += " (read only)"
	}
	return name
}
