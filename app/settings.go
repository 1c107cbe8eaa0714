package app

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
)

// unitScreen is the "Unit settings" screen: the unit's name, the roster
// (add, retire, mark as trainee), the default standard and surveillance
// guideline, the local minimum for resect-and-discard figures, and backup.
type unitScreen struct {
	u         *ui
	name      *widget.Entry
	standard  *widget.Select
	guideline *widget.Select
	rules     *widget.Select
	minCases  *widget.Entry
	message   *widget.Label
	roster    *fyne.Container
	newID     *widget.Entry
	newName   *widget.Entry
	newRole   *choice[logbook.Role]
	content   fyne.CanvasObject
}

func newUnitScreen(u *ui) *unitScreen {
	s := &unitScreen{u: u}
	s.name = widget.NewEntry()
	s.standard = widget.NewSelect(nil, nil)
	var gls []string
	for _, g := range report.Guidelines {
		gls = append(gls, g.Title())
	}
	s.guideline = widget.NewSelect(gls, nil)
	s.rules = widget.NewSelect([]string{"PIVI (ASGE 2011)", "ESGE competence standards (2022)"}, nil)
	s.minCases = widget.NewEntry()
	s.message = widget.NewLabel("")
	s.message.Wrapping = fyne.TextWrapWord
	save := widget.NewButton("Save the settings", s.save)
	save.Importance = widget.HighImportance
	backup := widget.NewButton("Back up now…", s.backup)
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
	s.newID = widget.NewEntry()
	s.newID.SetPlaceHolder("id, e.g. E09")
	s.newName = widget.NewEntry()
	s.newName.SetPlaceHolder("name")
	s.newRole = newChoice(logbook.Roles, roleWords, false, nil)
	s.newRole.Set(logbook.RoleEndoscopist)
	add := widget.NewButton("Add to the roster", s.addPerson)
	s.newName.OnSubmitted = func(string) { s.addPerson() }
	keyNote := widget.NewLabel("Patient codes are made with the unit key kept in the settings folder, not in the database. Back the key up together with the database, but keep the two apart.")
	keyNote.Wrapping = fyne.TextWrapWord
	keyNote.Importance = widget.LowImportance
	left := container.NewVBox(heading("The unit"), form, container.NewHBox(save, backup), s.message, keyNote)
	right := container.NewVBox(heading("Roster"), s.roster,
		container.NewGridWithColumns(4, s.newID, s.newName, s.newRole, add))
	s.content = container.NewVScroll(container.NewPadded(container.NewGridWithColumns(2, left, right)))
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
	for i, g := range report.Guidelines {
		if string(g) == st.DefaultGuideline {
			s.guideline.SetSelectedIndex(i)
		}
	}
	s.rules.ClearSelected()
	for i, r := range report.RuleSets {
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
		text := fmt.Sprintf("%s – %s (%s)", r.ID, r.Name, strings.ToLower(roleWords[r.Role]))
		if r.Retired {
			text += ", retired"
		}
		line := widget.NewLabel(text)
		if r.Retired {
			line.Importance = widget.LowImportance
		}
		retire := widget.NewButton("Retire", func() { r.Retired = true; s.storePerson(r) })
		if r.Retired {
			retire = widget.NewButton("Bring back", func() { r.Retired = false; s.storePerson(r) })
		}
		role := widget.NewButton("Mark as trainee", func() { r.Role = logbook.RoleTrainee; s.storePerson(r) })
		if r.Role == logbook.RoleTrainee {
			role = widget.NewButton("Mark as endoscopist", func() { r.Role = logbook.RoleEndoscopist; s.storePerson(r) })
		}
		s.roster.Add(container.NewBorder(nil, nil, nil, container.NewHBox(role, retire), line))
	}
}

func (s *unitScreen) storePerson(r logbook.RosterEntry) {
	if err := s.u.st.SaveRosterEntry(s.u.ctx, r); err != nil {
		s.message.SetText("Roster: " + err.Error())
		return
	}
	s.message.SetText("Roster saved.")
	s.u.rosterChanged()
	s.showRoster()
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
		st.DefaultGuideline = string(report.Guidelines[i])
	}
	if i := s.rules.SelectedIndex(); i >= 0 {
		st.EligibilityRules = report.RuleSets[i]
	}
	n, err := strconv.Atoi(strings.TrimSpace(s.minCases.Text))
	if err != nil || n < 1 {
		s.message.SetText("The fewest cases must be a whole number of 1 or more.")
		return
	}
	st.DiscardMinCases = n
	err = s.u.st.SaveSettings(s.u.ctx, st)
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
}

// backup writes a consistent copy of the database where the person chooses.
func (s *unitScreen) backup() {
	d := dialog.NewFileSave(func(w fyne.URIWriteCloser, err error) {
		if err != nil || w == nil {
			return
		}
		path := w.URI().Path()
		w.Close()
		s.backupTo(path)
	}, s.u.win)
	d.SetFileName("unit-backup-" + logbook.FormatDate(s.u.today()) + ".db")
	d.Show()
}

func (s *unitScreen) backupTo(path string) {
	removeDatabase(path) // the save dialog created an empty file; Backup wants a new name
	if err := s.u.st.Backup(s.u.ctx, path, false); err != nil {
		s.message.SetText("Backup failed: " + err.Error())
		return
	}
	s.message.SetText("Backed up to " + path + ".")
}
