// Package app is the desktop program: a Fyne window over the unit database.
// It holds only user-interface code; records go through store and figures
// come from report (through workspace, which the command line shares).
//
// The environment variable POLYPLEDGER_START_TAB names the screen shown
// first (cases, entry, pathology, figures, reports, settings), so that
// each screen can be opened directly, for example to take a screenshot.
// Alt+1 to Alt+6 switch screens; the File menu opens another database and
// imports record files.
package app

import (
	"polypledger/audit"
	_ "polypledger/internal/plainlocale" // before the UI toolkit reads the locale

	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	fyneapp "fyne.io/fyne/v2/app"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"

	"polypledger/assets"
	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

// Run opens the desktop window on the database at dbPath and returns when
// the window is closed. When the file does not exist yet, the window starts
// with the first-run choices (a demo unit or an empty one).
func Run(dbPath string) error {
	a := fyneapp.NewWithID("org.polypledger.logbook")
	useLazyFileWriters()
	a.SetIcon(fyne.NewStaticResource("polypledger.png", assets.IconPNG()))
	w := a.NewWindow("polypledger")
	u := newUI(a, w, time.Now)
	u.startTab = os.Getenv("POLYPLEDGER_START_TAB")
	u.startLayoutFile()
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
	profiles []*audit.Profile
	settings store.Settings
	roster   []logbook.RosterEntry

	tabs    *container.AppTabs
	status  *widget.Label
	list    *caseList
	form    *caseForm
	inbox   *inbox
	figures *figuresScreen
	reports *reportScreen
	unit    *unitScreen

	// names are what fields outside the forms are called, for the layout
	// file of the end-to-end tests (layoutfile.go).
	names map[fyne.CanvasObject]string

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
// main screens; it is for the start, before the window shows (openLater
// is for a window already showing).
func (u *ui) open(path string) error {
	st, profiles, err := openUnit(u.ctx, path)
	if err != nil {
		return err
	}
	return u.adopt(st, profiles)
}

// openLater opens the database off the UI thread (opening may bring an
// older file's schema up to date) and then shows it in place of the one
// open now; failed is called with the reason when it cannot be opened, and
// the database open before stays open.
func (u *ui) openLater(path string, failed func(error)) {
	var st *store.Store
	var profiles []*audit.Profile
	u.jobs.run("Opening "+filepath.Base(path), func(ctx context.Context, progress progressFunc) (err error) {
		st, profiles, err = openUnit(ctx, path)
		return err
	}, func(err error) {
		if err == nil {
			err = u.adopt(st, profiles)
		}
		if err != nil {
			failed(err)
		}
	})
}

// openUnit opens a database with the unit key, and the standard profiles.
func openUnit(ctx context.Context, path string) (*store.Store, []*audit.Profile, error) {
	st, err := workspace.OpenStore(ctx, path, true)
	if err != nil {
		return nil, nil, err
	}
	profiles, err := workspace.LoadProfiles()
	if err != nil {
		st.Close()
		return nil, nil, err
	}
	return st, profiles, nil
}

// adopt shows an opened database in place of the one open now. (It must
// not wait for running jobs: they finish on the UI thread it runs on.)
func (u *ui) adopt(st *store.Store, profiles []*audit.Profile) error {
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

// tabNames are the screens in order, as POLYPLEDGER_START_TAB names them
// ("scorecards" is still read as "figures").
var tabNames = []string{"cases", "entry", "pathology", "figures", "reports", "settings"}

// tabTitles are the screens' names on their tabs and in the Go menu.
var tabTitles = []string{"Cases", "Enter a case", "Pathology results", "Audit figures", "Reports", "Unit settings"}

// showMain builds the screens of an open unit.
func (u *ui) showMain() {
	u.list = newCaseList(u)
	u.form = newCaseForm(u)
	u.inbox = newInbox(u)
	u.figures = newFiguresScreen(u)
	u.reports = newReportScreen(u)
	u.unit = newUnitScreen(u)
	contents := []fyne.CanvasObject{u.list.content, u.form.content, u.inbox.content, u.figures.content, u.reports.content, u.unit.content}
	var items []*container.TabItem
	for i, c := range contents {
		items = append(items, container.NewTabItem(tabTitles[i], c))
	}
	u.tabs = container.NewAppTabs(items...)
	u.tabs.OnSelected = func(t *container.TabItem) { u.tabShown(u.tabs.SelectedIndex()) }
	u.status = widget.NewLabel("")
	u.status.Truncation = fyne.TextTruncateEllipsis
	u.updateStatus()
	u.win.SetContent(container.NewBorder(nil, u.status, nil, nil, u.tabs))
	u.win.SetMainMenu(u.mainMenu())
	start := 0
	for i, n := range tabNames {
		if strings.EqualFold(n, u.startTab) || (n == "figures" && strings.EqualFold(u.startTab, "scorecards")) {
			start = i
		}
	}
	u.tabs.SelectIndex(start)
	u.tabShown(start)
	if u.stopWatch != nil {
		u.stopWatch()
	}
	u.stopWatch = u.watchChanges(watchEvery)
	u.warnAboutKey()
}

// warnAboutKey says so, with the command that fixes it, when the unit key
// or its folder can be read by other users of this computer.
func (u *ui) warnAboutKey() {
	if w := workspace.KeyWarnings(); len(w) > 0 {
		dialog.ShowInformation("The unit key is open to others", strings.Join(w, "\n\n"), u.win)
	}
}

// mainMenu is the window's menu: File (open another database, import a
// records file, back up) and Go (each screen, Alt+1 to Alt+6, which work
// whatever has the keyboard).
func (u *ui) mainMenu() *fyne.MainMenu {
	ctrl := func(k fyne.KeyName) fyne.Shortcut {
		return &desktop.CustomShortcut{KeyName: k, Modifier: fyne.KeyModifierShortcutDefault}
	}
	file := fyne.NewMenu("File",
		&fyne.MenuItem{Label: "Open another database…", Shortcut: ctrl(fyne.KeyO), Action: u.chooseDatabase},
		&fyne.MenuItem{Label: "Import records from a file…", Shortcut: ctrl(fyne.KeyI), Action: u.chooseImport},
		&fyne.MenuItem{Label: "Back up the database…", Action: func() { u.unit.backup() }},
	)
	var screens []*fyne.MenuItem
	for i, t := range tabTitles {
		i := i
		screens = append(screens, &fyne.MenuItem{Label: t, Action: func() { u.tabs.SelectIndex(i) },
			Shortcut: &desktop.CustomShortcut{KeyName: fyne.KeyName(fmt.Sprint(i + 1)), Modifier: fyne.KeyModifierAlt}})
	}
	return fyne.NewMainMenu(file, fyne.NewMenu("Go", screens...))
}

// chooseDatabase asks for another database file and opens it in place of
// the one open now.
func (u *ui) chooseDatabase() {
	u.openFile([]string{".db", ".sqlite", ".sqlite3"}, func(path string) {
		u.openLater(path, func(err error) {
			dialog.ShowError(fmt.Errorf("%s could not be opened; the database open before is still open: %w", path, err), u.win)
		})
	})
}

// openFile asks for an existing file with one of the extensions exts,
// starting in the database's folder, and calls then with its path.
func (u *ui) openFile(exts []string, then func(path string)) {
	d := dialog.NewFileOpen(func(r fyne.URIReadCloser, err error) {
		if err != nil || r == nil {
			return
		}
		path := r.URI().Path()
		r.Close()
		then(path)
	}, u.win)
	d.SetFilter(storage.NewExtensionFileFilter(exts))
	u.startIn(d)
	d.Show()
}

// saveFile asks where to save a file, suggesting name in the database's
// folder, and calls then with the path chosen. Nothing is written to the
// chosen file here (see useLazyFileWriters): then writes it through
// workspace.Output or store.Backup, which never replace a database.
func (u *ui) saveFile(name string, then func(path string)) {
	d := dialog.NewFileSave(func(w fyne.URIWriteCloser, err error) {
		if err != nil || w == nil {
			return
		}
		path := w.URI().Path()
		w.Close()
		then(path)
	}, u.win)
	d.SetFileName(name)
	u.startIn(d)
	d.Show()
}

// startIn opens a file dialog in the folder of the database, so that files
// kept beside it are one click away.
func (u *ui) startIn(d interface{ SetLocation(fyne.ListableURI) }) {
	if u.st == nil {
		return
	}
	if abs, err := filepath.Abs(u.st.Path()); err == nil {
		if l, err := storage.ListerForURI(storage.NewFileURI(filepath.Dir(abs))); err == nil {
			d.SetLocation(l)
		}
	}
}

// tabShown brings a screen up to date when it is shown.
func (u *ui) tabShown(i int) {
	switch i {
	case 0:
		u.list.reload()
	case 1:
		u.form.refreshRoster()
		u.win.Canvas().Focus(u.form.id.focus())
	case 2:
		u.inbox.reload()
	case 3:
		u.figures.shown()
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
	u.status.SetText(statusText(u.settings.UnitName, n, waiting, u.databaseName()))
}

// statusText is the status line: the unit, its procedures and the lesions
// awaiting histology (counts grouped by thousands, words matching the
// count), and the database.
func statusText(unit string, procedures, waiting int, database string) string {
	return fmt.Sprintf("%s  ·  %s, %s awaiting histology  ·  %s", unit,
		countOf(procedures, "procedure", "procedures"), countOf(waiting, "lesion", "lesions"), database)
}

// recordsChanged is called after any case or result is stored.
func (u *ui) recordsChanged() {
	u.updateStatus()
	u.list.refresh()
	u.inbox.stale = true
	u.figures.stale = true
}

// rosterChanged is called after the roster or settings are stored.
func (u *ui) rosterChanged() {
	if err := u.reloadUnit(); err != nil {
		u.status.SetText(err.Error())
		return
	}
	u.form.refreshRoster()
	u.list.refreshRoster()
	u.figures.refreshChoices()
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
