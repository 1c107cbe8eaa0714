// Package app is the desktop program: a Fyne window over the unit database.
// It holds only user-interface code; records go through store and figures
// come from report (through workspace, which the command line shares).
//
// The environment variable POLYPLEDGER_START_TAB names the screen shown
// first (cases, entry, pathology, scorecards, reports, settings), so that
// each screen can be opened directly, for example to take a screenshot.
package app

import (
	_ "polypledger/internal/plainlocale" // before the UI toolkit reads the locale

	"context"
	"errors"
	"fmt"
	"os"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	fyneapp "fyne.io/fyne/v2/app"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/assets"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/workspace"
)

// Run opens the desktop window on the database at dbPath and returns when
// the window is closed. When the file does not exist yet, the window starts
// with the first-run choices (a demo unit or an empty one).
func Run(dbPath string) error {
	a := fyneapp.NewWithID("org.polypledger.logbook")
	a.SetIcon(fyne.NewStaticResource("polypledger.png", assets.IconPNG()))
	w := a.NewWindow("polypledger")
	u := newUI(a, w, time.Now)
	u.startTab = os.Getenv("POLYPLEDGER_START_TAB")
	u.start(dbPath)
	w.Resize(fyne.NewSize(1280, 800))
	w.ShowAndRun()
	u.jobs.wait()
	return u.close()
}

// ui is the open window and the unit shown in it.
type ui struct {
	app      fyne.App
	win      fyne.Window
	ctx      context.Context
	now      func() time.Time
	jobs     *jobs
	startTab string

	st       *store.Store
	profiles []*report.Profile
	settings store.Settings
	roster   []logbook.RosterEntry

	tabs    *container.AppTabs
	status  *widget.Label
	list    *caseList
	form    *caseForm
	inbox   *inbox
	cards   *scorecard
	reports *reportScreen
	unit    *unitScreen

	stopWatch func() // stops watchChanges
}

func newUI(a fyne.App, w fyne.Window, now func() time.Time) *ui {
	return &ui{app: a, win: w, ctx: context.Background(), now: now, jobs: &jobs{win: w}}
}

// today is the local civil date, the limit for "not in the future".
func (u *ui) today() time.Time { return logbook.Today(u.now()) }

// start opens dbPath, or shows the first-run choices when it does not exist
// or cannot be opened.
func (u *ui) start(dbPath string) {
	if _, err := os.Stat(dbPath); errors.Is(err, os.ErrNotExist) && !store.IsServerURL(dbPath) {
		u.showFirstRun(dbPath, "")
		return
	}
	if err := u.open(dbPath); err != nil {
		u.showFirstRun(dbPath, err.Error())
	}
}

// open opens (or creates) the database with the unit key and shows the
// main screens.
func (u *ui) open(path string) error {
	st, err := workspace.OpenStore(u.ctx, path, true)
	if err != nil {
		return err
	}
	profiles, err := workspace.LoadProfiles()
	if err != nil {
		st.Close()
		return err
	}
	u.close()
	u.st, u.profiles = st, profiles
	if err := u.reloadUnit(); err != nil {
		return err
	}
	u.showMain()
	return nil
}

// close closes the open database.
func (u *ui) close() error {
	if u.stopWatch != nil {
		u.stopWatch()
		u.stopWatch = nil
	}
	if u.st == nil {
		return nil
	}
	err := u.st.Close()
	u.st = nil
	return err
}

// reloadUnit reads the settings and roster again.
func (u *ui) reloadUnit() error {
	s, err := u.st.Settings(u.ctx)
	if err != nil {
		return err
	}
	r, err := u.st.Roster(u.ctx)
	if err != nil {
		return err
	}
	u.settings, u.roster = s, r
	u.win.SetTitle("polypledger – " + s.UnitName)
	return nil
}

// tabNames are the screens in order, as POLYPLEDGER_START_TAB names them.
var tabNames = []string{"cases", "entry", "pathology", "scorecards", "reports", "settings"}

// showMain builds the screens of an open unit.
func (u *ui) showMain() {
	u.list = newCaseList(u)
	u.form = newCaseForm(u)
	u.inbox = newInbox(u)
	u.cards = newScorecard(u)
	u.reports = newReportScreen(u)
	u.unit = newUnitScreen(u)
	u.tabs = container.NewAppTabs(
		container.NewTabItem("Cases", u.list.content),
		container.NewTabItem("Enter a case", u.form.content),
		container.NewTabItem("Pathology results", u.inbox.content),
		container.NewTabItem("Scorecards", u.cards.content),
		container.NewTabItem("Reports", u.reports.content),
		container.NewTabItem("Unit settings", u.unit.content),
	)
	u.tabs.OnSelected = func(t *container.TabItem) { u.tabShown(u.tabs.SelectedIndex()) }
	u.status = widget.NewLabel("")
	u.status.Truncation = fyne.TextTruncateEllipsis
	u.updateStatus()
	u.win.SetContent(container.NewBorder(nil, u.status, nil, nil, u.tabs))
	start := 0
	for i, n := range tabNames {
		if strings.EqualFold(n, u.startTab) {
			start = i
		}
	}
	u.tabs.SelectIndex(start)
	u.tabShown(start)
	u.stopWatch = u.watchChanges(watchEvery)
}

// tabShown brings a screen up to date when it is shown.
func (u *ui) tabShown(i int) {
	switch i {
	case 0:
		u.list.reload()
	case 1:
		u.form.refreshRoster()
		u.win.Canvas().Focus(u.form.id)
	case 2:
		u.inbox.reload()
	case 3:
		u.cards.shown()
	case 4:
		u.reports.shown()
	case 5:
		u.unit.load()
	}
}

// updateStatus writes the unit, database path and counts at the bottom.
func (u *ui) updateStatus() {
	if u.status == nil || u.st == nil {
		return
	}
	n, err := u.st.CountProcedures(u.ctx, store.ListQuery{})
	waiting, err2 := u.st.CountAwaitingHistology(u.ctx)
	if err := errors.Join(err, err2); err != nil {
		u.status.SetText(u.databaseName() + ": " + err.Error())
		return
	}
	u.status.SetText(fmt.Sprintf("%s  ·  %d procedures, %d lesions awaiting histology  ·  %s",
		u.settings.UnitName, n, waiting, u.databaseName()))
}

// recordsChanged is called after any case or result is stored.
func (u *ui) recordsChanged() {
	u.updateStatus()
	u.list.invalidate()
	u.inbox.stale = true
	u.cards.stale = true
}

// rosterChanged is called after the roster or settings are stored.
func (u *ui) rosterChanged() {
	if err := u.reloadUnit(); err != nil {
		u.status.SetText(err.Error())
		return
	}
	u.form.refreshRoster()
	u.list.refreshRoster()
	u.cards.refreshChoices()
	u.reports.refreshChoices()
	u.updateStatus()
}

// rosterLabel is "E01 – Dr Name" for a roster id.
func (u *ui) rosterLabel(id string) string {
	for _, r := range u.roster {
		if r.ID == id && r.Name != "" {
			return id + " – " + r.Name
		}
	}
	return id
}
