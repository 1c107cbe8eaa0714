package app

import (
	"context"
	"errors"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/store"
	"polypledger/surveillance"
)

// unitScreen is the "Unit settings" screen: the unit's name, the roster
// (add, retire, mark as trainee), the default standard and surveillance
// guideline, the local minimum for resect-and-discard figures, and backup.
type unitScreen struct {
	u         *ui
	name      *entry
	standard  *keySelect
	guideline *keySelect
	rules     *keySelect
	minCases  *entry
	message   *widget.Label
	roster    *fyne.Container
	newID     *entry
	newName   *entry
	newRole   *choice[logbook.Role]
	content   fyne.CanvasObject
}

func newUnitScreen(u *ui) *unitScreen {
	s := &unitScreen{u: u}
	s.name = newEntry("the unit's name, printed on every report")
	s.standard = newKeySelect(nil, nil)
	var gls []string
	for _, g := range surveillance.Guidelines {
		gls = append(gls, g.Title())
	}
	s.guideline = newKeySelect(gls, nil)
	s.rules = newKeySelect([]string{"PIVI (ASGE 2011)", "ESGE competence standards (2022)"}, nil)
	s.minCases = newEntry("cases")
	s.message = widget.NewLabel("")
	s.message.Wrapping = fyne.TextWrapWord
	save := newButton("Save the settings", s.save)
	save.Importance = widget.HighImportance
	backup := newButton("Back up now…", s.backup)
	openOther := newButton("Open another database…", u.chooseDatabase)
	imp := newButton("Import records from a file…", u.chooseImport)
	minItem := widget.NewFormItem("Fewest cases to judge", s.minCases)
	minItem.HintText = "before a resect-and-discard figure gets a verdict (local policy)"
	form := widget.NewForm(
		widget.NewFormItem("Unit name", s.name),
		widget.NewFormItem("Default standard", s.standard),
		widget.NewFormItem("Surveillance guideline", s.guideline),
		widget.NewFormItem("Optical diagnosis rule set", s.rules),
		minItem,
	)
	s.roster = container.NewVBox()
	s.newID = newEntry("id, e.g. E09")
	s.newName = newEntry("name as printed on reports")
	s.newRole = newChoice(logbook.Roles, roleWords, false, nil)
	s.newRole.Set(logbook.RoleEndoscopist)
	u.name(s.newRole, "Role")
	add := newButton("Add to the roster", s.addPerson)
	s.newName.OnSubmitted = func(string) { s.addPerson() }
	keyNote := widget.NewLabel("Patient codes are made with the unit key kept in the settings folder, not in the database. Back the key up together with the database, but keep the two apart.")
	keyNote.Wrapping = fyne.TextWrapWord
	dbNote := widget.NewLabel("Database: " + u.st.Path())
	dbNote.Wrapping = fyne.TextWrapBreak
	left := container.NewVBox(heading("The unit"), form, container.NewHBox(save), s.message,
		heading("The database"), dbNote, container.NewHBox(openOther, backup), container.NewHBox(imp), keyNote)
	right := container.NewVBox(heading("Roster"), s.roster,
		container.NewGridWithColumns(2, s.newID, s.newName), container.NewGridWithColumns(2, s.newRole, add))
	cols, layout := newColumns(470, left, right)
	scroll := container.NewVScroll(container.NewPadded(cols))
	layout.onChange = scroll.Refresh
	s.content = scroll
	return s
}

// load shows the stored settings and roster.
func (s *unitScreen) load() {
	st := s.u.settings
	s.name.SetText(st.UnitName)
	var stds []string
	sel := -1
	for i, p := range s.u.profiles {
		stds = append(stds, p.Title)
		if p.ID == st.DefaultStandard {
			sel = i
		}
	}
	s.standard.SetOptions(stds)
	s.standard.SetSelectedIndex(sel)
	s.guideline.ClearSelected()
	for i, g := range surveillance.Guidelines {
		if string(g) == st.DefaultGuideline {
			s.guideline.SetSelectedIndex(i)
		}
	}
	s.rules.ClearSelected()
	for i, r := range audit.RuleSets {
		if r == st.EligibilityRules {
			s.rules.SetSelectedIndex(i)
		}
	}
	s.minCases.SetText(strconv.Itoa(st.DiscardMinCases))
	s.showRoster()
}

func (s *unitScreen) showRoster() {
	s.roster.RemoveAll()
	for _, r := range s.u.roster {
		r := r
		s.roster.Add(container.NewBorder(nil, nil, nil, s.rosterButtons(r), rosterLine(r)))
	}
}

// rosterLine names a person and their role once: "T01 – Dr Name",
// then "trainee" (and "retired") in smaller type.
func rosterLine(r logbook.RosterEntry) fyne.CanvasObject {
	name := r.ID
	if r.Name != "" {
		name += " – " + r.Name
	}
	role := strings.ToLower(roleWords[r.Role])
	if r.Retired {
		role += ", retired"
	}
	l := widget.NewLabel(name)
	l.Wrapping = fyne.TextWrapWord
	sub := widget.NewLabel(role)
	sub.SizeName = theme.SizeNameCaptionText
	if r.Retired {
		l.Importance = widget.LowImportance
		sub.Importance = widget.LowImportance
	}
	return container.New(stackLayout{}, l, sub)
}

// rosterButtons are a roster entry's buttons: change the role, retire or
// bring back.
func (s *unitScreen) rosterButtons(r logbook.RosterEntry) fyne.CanvasObject {
	retire := newButton("Retire "+r.ID, func() { r.Retired = true; s.storePerson(r) })
	if r.Retired {
		retire = newButton("Bring back "+r.ID, func() { r.Retired = false; s.storePerson(r) })
	}
	role := newButton("Make trainee", func() { r.Role = logbook.RoleTrainee; s.storePerson(r) })
	if r.Role == logbook.RoleTrainee {
		role = newButton("Make endoscopist", func() { r.Role = logbook.RoleEndoscopist; s.storePerson(r) })
	}
	return container.NewVBox(container.NewHBox(role, retire))
}

// storePerson stores a roster entry off the UI thread.
func (s *unitScreen) storePerson(r logbook.RosterEntry) {
	s.message.SetText("Saving the roster…")
	s.u.jobs.background(func() error { return s.u.st.SaveRosterEntry(s.u.ctx, r) }, func(err error) {
		if err != nil {
			s.message.SetText("Roster: " + err.Error())
			return
		}
		s.message.SetText("Roster saved.")
		s.u.rosterChanged()
		s.showRoster()
	})
}

func (s *unitScreen) addPerson() {
	r := logbook.RosterEntry{ID: strings.TrimSpace(s.newID.Text), Name: strings.TrimSpace(s.newName.Text), Role: s.newRole.Value()}
	for _, x := range s.u.roster {
		if x.ID == r.ID {
			s.message.SetText("Roster: " + r.ID + " is already on the roster.")
			return
		}
	}
	if ps := logbook.ValidateRosterEntry(r); len(ps) > 0 {
		s.message.SetText("Roster: " + ps[0].Error())
		return
	}
	s.newID.SetText("")
	s.newName.SetText("")
	s.storePerson(r)
}

// save stores the unit settings.
func (s *unitScreen) save() {
	st := s.u.settings
	st.UnitName = strings.TrimSpace(s.name.Text)
	if i := s.standard.SelectedIndex(); i >= 0 {
		st.DefaultStandard = s.u.profiles[i].ID
	}
	if i := s.guideline.SelectedIndex(); i >= 0 {
		st.DefaultGuideline = string(surveillance.Guidelines[i])
	}
	if i := s.rules.SelectedIndex(); i >= 0 {
		st.EligibilityRules = audit.RuleSets[i]
	}
	n, err := strconv.Atoi(strings.TrimSpace(s.minCases.Text))
	if err != nil || n < 1 {
		s.message.SetText("The fewest cases must be a whole number of 1 or more.")
		return
	}
	st.DiscardMinCases = n
	s.message.SetText("Saving the settings…")
	s.u.jobs.background(func() error { return s.u.st.SaveSettings(s.u.ctx, st) }, func(err error) {
		var ve *store.ValidationError
		switch {
		case errors.As(err, &ve):
			s.message.SetText(ve.Error())
			return
		case err != nil:
			s.message.SetText("Not saved: " + err.Error())
			return
		}
		s.message.SetText("Settings saved.")
		s.u.rosterChanged()
	})
}

// backup writes a consistent copy of the database where the person chooses.
func (s *unitScreen) backup() {
	s.u.saveFile("unit-backup-"+logbook.FormatDate(s.u.today())+".db", s.backupTo)
}

// backupTo writes the backup off the UI thread with a progress window.
func (s *unitScreen) backupTo(path string) {
	s.u.jobs.run("Backing up the database", func(ctx context.Context, progress progressFunc) error {
		progress(-1, "Copying to "+path)
		return s.u.st.Backup(ctx, path, true)
	}, func(err error) {
		if err != nil {
			s.message.SetText("Backup failed: " + err.Error())
			return
		}
		s.message.SetText("Backed up to " + path + ".")
	})
}
