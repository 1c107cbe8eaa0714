package app

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

// firstRun is the screen shown when there is no database yet: where the
// file will be, and the choice between an invented demo unit and an empty
// unit of one's own.
type firstRun struct {
	u        *ui
	path     *entry
	problem  *widget.Label
	demoSize *entry
	unitName *entry
	roster   []logbook.RosterEntry
	rosterUI *fyne.Container
	newID    *entry
	newName  *entry
	newRole  *choice[logbook.Role]
}

// showFirstRun shows the first-run choices for path; problem, when not
// empty, says why the file could not be opened.
func (u *ui) showFirstRun(path, problem string) {
	fr := &firstRun{u: u}
	fr.path = newEntry("a database file, or a unit server's postgres://role@host/database")
	fr.path.SetText(path)
	choose := newButton("Choose another place…", func() {
		u.saveFile(filepath.Base(path), func(p string) {
			fr.path.SetText(p)
		})
	})
	openOther := newButton("Open an existing database…", func() {
		u.openFile([]string{".db", ".sqlite", ".sqlite3"}, func(p string) {
			fr.path.SetText(p)
			fr.openExisting()
		})
	})
	fr.problem = widget.NewLabel(problem)
	fr.problem.Importance = widget.DangerImportance
	fr.problem.Wrapping = fyne.TextWrapWord
	showText(fr.problem, "")
	if problem != "" {
		showText(fr.problem, "This database could not be opened: "+problem)
	}

	fr.demoSize = newEntry("number of cases")
	fr.demoSize.SetText("4000")
	demoBtn := newButton("Open a demo unit", fr.makeDemo)
	demoBtn.Importance = widget.HighImportance
	demoText := widget.NewLabel("A made-up unit with eight endoscopists, two trainees and two years of invented cases, to try every screen. None of it is real patient data.")
	demoText.Wrapping = fyne.TextWrapWord
	demoBox := container.NewVBox(
		widget.NewLabelWithStyle("Try it with invented data", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		demoText,
		container.NewBorder(nil, nil, widget.NewLabel("Number of cases"), nil, fr.demoSize),
		demoBtn)

	fr.unitName = newEntry("e.g. Riverside Hospital Endoscopy")
	fr.newID = newEntry("short id, e.g. E01")
	fr.newName = newEntry("name as it appears on reports")
	fr.newRole = newChoice(logbook.Roles, roleWords, false, nil)
	fr.newRole.Set(logbook.RoleEndoscopist)
	u.name(fr.newRole, "Role")
	u.name(fr.demoSize, "Number of cases")
	u.name(fr.unitName, "Unit name")
	fr.rosterUI = container.NewVBox()
	add := newButton("Add to the roster", fr.addPerson)
	fr.newName.OnSubmitted = func(string) { fr.addPerson() }
	create := newButton("Start an empty unit", fr.makeEmpty)
	create.Importance = widget.HighImportance
	emptyBox := container.NewVBox(
		widget.NewLabelWithStyle("Start your own unit", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		container.NewBorder(nil, nil, widget.NewLabel("Unit name"), nil, fr.unitName),
		widget.NewLabel("Who performs or learns colonoscopy here (you can add more later):"),
		fr.rosterUI,
		container.NewGridWithColumns(2, fr.newID, fr.newName),
		container.NewGridWithColumns(2, fr.newRole, add),
		create)
	fr.showRoster()

	title := widget.NewLabelWithStyle("Welcome to polypledger", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	intro := widget.NewLabel("There is no logbook database here yet. It will be kept here — a file on this computer, or an empty database on the unit's server (postgres://…):")
	intro.Wrapping = fyne.TextWrapWord
	cards, layout := newColumns(420, widget.NewCard("", "", demoBox), widget.NewCard("", "", emptyBox))
	body := container.NewVBox(title, intro, fr.path, container.NewHBox(choose, openOther),
		fr.problem,
		widget.NewSeparator(),
		cards)
	scroll := container.NewVScroll(container.NewPadded(body))
	layout.onChange = scroll.Refresh
	u.win.SetMainMenu(nil)
	u.win.SetContent(scroll)
}

func (fr *firstRun) showRoster() {
	fr.rosterUI.RemoveAll()
	if len(fr.roster) == 0 {
		l := widget.NewLabel("Nobody yet.")
		l.Importance = widget.LowImportance
		fr.rosterUI.Add(l)
	}
	for i, r := range fr.roster {
		i := i
		fr.rosterUI.Add(container.NewBorder(nil, nil, nil, newButton("Remove "+r.ID, func() {
			fr.roster = append(fr.roster[:i:i], fr.roster[i+1:]...)
			fr.showRoster()
		}), rosterLine(r)))
	}
}

func (fr *firstRun) addPerson() {
	r := logbook.RosterEntry{ID: strings.TrimSpace(fr.newID.Text), Name: strings.TrimSpace(fr.newName.Text), Role: fr.newRole.Value()}
	if ps := logbook.ValidateRosterEntry(r); len(ps) > 0 {
		showText(fr.problem, "Roster: "+ps[0].Error())
		return
	}
	for _, x := range fr.roster {
		if x.ID == r.ID {
			showText(fr.problem, "Roster: "+r.ID+" is already on the list")
			return
		}
	}
	showText(fr.problem, "")
	fr.roster = append(fr.roster, r)
	fr.newID.SetText("")
	fr.newName.SetText("")
	fr.showRoster()
	fr.u.win.Canvas().Focus(fr.newID)
}

// target returns the chosen path if no file is there yet.
func (fr *firstRun) target() (string, bool) {
	p := strings.TrimSpace(fr.path.Text)
	if p == "" {
		showText(fr.problem, "Say where the database should be kept: a file, or a unit server's postgres:// address.")
		return "", false
	}
	if _, err := os.Stat(p); err == nil {
		showText(fr.problem, p+" already exists; open it, or choose another place for a new unit.")
		return "", false
	}
	return p, true
}

func (fr *firstRun) openExisting() {
	p := strings.TrimSpace(fr.path.Text)
	fr.u.openLater(p, func(err error) { showText(fr.problem, "This database could not be opened: "+err.Error()) })
}

// makeDemo creates the invented demo unit at the chosen path.
func (fr *firstRun) makeDemo() {
	p, ok := fr.target()
	if !ok {
		return
	}
	n, err := strconv.Atoi(strings.TrimSpace(fr.demoSize.Text))
	if err != nil || n < 1 || n > 2_000_000 {
		showText(fr.problem, "The number of cases must be a whole number from 1 to 2000000.")
		return
	}
	fr.u.jobs.run("Making the demo unit", func(ctx context.Context, report progressFunc) error {
		return createUnit(ctx, p, func(st *store.Store) error {
			_, err := workspace.CreateDemo(ctx, st, n, 1, func(done int) {
				report(float64(done)/float64(n), fmt.Sprintf("%d of %d invented cases", done, n))
			})
			return err
		})
	}, func(err error) {
		switch {
		case cancelled(err):
			showText(fr.problem, "Stopped; nothing was kept.")
		case err != nil:
			showText(fr.problem, "The demo unit could not be made: "+err.Error())
		default:
			fr.u.openLater(p, func(err error) { showText(fr.problem, err.Error()) })
		}
	})
}

// makeEmpty creates a new unit with its name and roster.
func (fr *firstRun) makeEmpty() {
	p, ok := fr.target()
	if !ok {
		return
	}
	name := strings.TrimSpace(fr.unitName.Text)
	if name == "" {
		showText(fr.problem, "Give the unit a name; it is printed on every report.")
		return
	}
	roster := append([]logbook.RosterEntry(nil), fr.roster...)
	fr.u.jobs.run("Creating the unit", func(ctx context.Context, progress progressFunc) error {
		return createUnit(ctx, p, func(st *store.Store) error {
			s := store.DefaultSettings
			s.UnitName = name
			if err := st.SaveSettings(ctx, s); err != nil {
				return err
			}
			for _, r := range roster {
				if err := st.SaveRosterEntry(ctx, r); err != nil {
					return err
				}
			}
			return nil
		})
	}, func(err error) {
		if err != nil {
			showText(fr.problem, "The unit could not be created: "+err.Error())
			return
		}
		fr.u.openLater(p, func(err error) { showText(fr.problem, err.Error()) })
	})
}

// createUnit makes a new database at path and fills it before it appears
// there (store.Create): a failure or a cancel leaves no file, and nothing
// at path is ever deleted or replaced — if a file appeared there meanwhile,
// the unit is not made and the message says so.
func createUnit(ctx context.Context, path string, fill func(*store.Store) error) error {
	opt, err := workspace.StoreOptions(true)
	if err != nil {
		return err
	}
	err = store.Create(ctx, path, opt, fill)
	if errors.Is(err, store.ErrExists) {
		return fmt.Errorf("%s appeared while the unit was being made (another program?); it was left as it is, and nothing was made", path)
	}
	return err
}
