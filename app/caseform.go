package app

import (
	"errors"
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/store"
)

// caseForm is the "Enter a case" screen: every procedure field with its
// validation message beside it (shown once the field is changed or a save
// is tried), the Boston score as three pickers with the total, the lesions
// as an editable list, and Save (also Enter in any field). The hospital
// number is turned into its pseudonym only when the case is saved, off the
// UI thread with the save itself, so typing never waits for the database.
type caseForm struct {
	u      *ui
	fields *fieldSet

	isNew      bool
	storedKey  string // the pseudonym of the case being edited
	saving     bool   // a save is under way
	lesions    []logbook.Lesion
	lesionBox  *fyne.Container
	problems   logbook.Problems
	heading    *widget.Label
	notice     *widget.Label
	otherProbs *widget.Label
	progress   *widget.ProgressBarInfinite
	scroll     *container.Scroll
	editor     *lesionEditor // the lesion dialog open now, if any

	id, date, patient, age, withdrawal *entry
	midazolam, fentanyl, pethidine     *entry
	patientCode                        *widget.Label
	operator, trainee, comfort         *keySelect
	operatorIDs, traineeIDs            []string
	supervision                        *choice[logbook.Supervision]
	reached, photo, retro, propofol    *choice[logbook.YesNo]
	aid                                *choice[logbook.YesNo]
	sex                                *choice[logbook.Sex]
	indication                         *choice[logbook.Indication]
	setting                            *choice[logbook.Setting]
	exclusion                          *choice[logbook.Exclusion]
	extent                             *choice[logbook.Extent]
	incomplete                         *choice[logbook.IncompleteReason]
	adverse                            *choice[logbook.AdverseEvent]
	interval                           *choice[logbook.Interval]
	bbps                               [3]*keySelect
	bbpsTotal                          *widget.Label

	save, del, fresh *button
	content          fyne.CanvasObject
}

func newCaseForm(u *ui) *caseForm {
	f := &caseForm{u: u, fields: newFieldSet(), isNew: true}
	ch := f.changed
	sub := f.submit
	f.id = submitEntry("e.g. C2026-0142", ch, sub)
	f.date = submitEntry("YYYY-MM-DD", ch, sub)
	f.patient = submitEntry("hospital number (only a code made from it is kept)", ch, sub)
	f.patientCode = widget.NewLabel("")
	f.age = submitEntry("years", ch, sub)
	f.withdrawal = submitEntry("minutes:seconds, e.g. 7:30", ch, sub)
	f.midazolam = submitEntry("mg", ch, sub)
	f.fentanyl = submitEntry("µg", ch, sub)
	f.pethidine = submitEntry("mg", ch, sub)
	f.operator = newKeySelect(nil, func(string) { ch() })
	f.trainee = newKeySelect(nil, func(string) { ch() })
	f.comfort = newKeySelect(append([]string{notRecorded}, comfortWords...), func(string) { ch() })
	f.supervision = newChoice(logbook.Supervisions, supervisionWords, true, ch)
	f.reached = newYesNo(false, "", ch)
	f.photo = newYesNo(false, "", ch)
	f.retro = newYesNo(true, "Not possible", ch)
	f.propofol = newYesNo(false, "", ch)
	f.aid = newYesNo(false, "", ch)
	f.sex = newChoice(logbook.Sexes, sexWords, false, ch)
	f.indication = newChoice(logbook.Indications, indicationWords, false, ch)
	f.setting = newChoice(logbook.Settings, settingWords, true, ch)
	f.exclusion = newChoice(logbook.Exclusions, exclusionWords, true, ch)
	f.extent = newChoice(logbook.Extents, extentWords, false, ch)
	f.incomplete = newChoice(logbook.IncompleteReasons, incompleteWords, true, ch)
	f.adverse = newChoice(logbook.AdverseEvents, adverseWords, true, ch)
	f.interval = newChoice(logbook.Intervals, intervalWords, true, ch)
	for _, s := range []*keySelect{f.operator, f.trainee, f.comfort, &f.supervision.keySelect, &f.reached.keySelect,
		&f.photo.keySelect, &f.retro.keySelect, &f.propofol.keySelect, &f.aid.keySelect, &f.sex.keySelect,
		&f.indication.keySelect, &f.setting.keySelect, &f.exclusion.keySelect, &f.extent.keySelect,
		&f.incomplete.keySelect, &f.adverse.keySelect, &f.interval.keySelect} {
		s.OnSubmit = sub
	}
	for i := range f.bbps {
		f.bbps[i] = newKeySelect(append([]string{notRecorded}, bostonWords...), func(string) { ch() })
		f.bbps[i].OnSubmit = sub
	}
	f.bbpsTotal = widget.NewLabel("")
	f.bbpsTotal.Wrapping = fyne.TextWrapWord
	f.heading = widget.NewLabelWithStyle("New case", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	f.notice = widget.NewLabel("")
	f.otherProbs = widget.NewLabel("")
	f.otherProbs.Importance = widget.DangerImportance
	f.otherProbs.Wrapping = fyne.TextWrapWord
	f.progress = widget.NewProgressBarInfinite()
	f.progress.Stop()
	f.progress.Hide()
	f.save = newButton("Save the case  (Enter)", sub)
	f.save.Importance = widget.HighImportance
	f.del = newButton("Delete this case…", f.confirmDelete)
	f.del.Importance = widget.DangerImportance
	f.fresh = newButton("Start a new case", func() { f.startNew(true) })
	f.lesionBox = container.NewVBox()

	fs := f.fields
	left := fs.group("The procedure",
		fieldRow{"Procedure number", "procedure_id", f.id},
		fieldRow{"Date", "performed_on", f.date},
		fieldRow{"Endoscopist", "operator_id", f.operator},
		fieldRow{"Trainee holding the scope", "trainee_id", f.trainee},
		fieldRow{"Supervision", "supervision", f.supervision},
		fieldRow{"Trainee reached the caecum unaided", "trainee_reached_caecum", f.reached},
		fieldRow{"Patient", "patient_ref", container.NewVBox(f.patient, f.patientCode)},
		fieldRow{"Age", "age", f.age},
		fieldRow{"Sex", "sex", f.sex},
		fieldRow{"Reason for the test", "indication", f.indication},
		fieldRow{"Setting", "setting", f.setting},
		fieldRow{"Excluded from detection figures", "exclusion", f.exclusion},
	)
	right := fs.group("The examination",
		fieldRow{"Furthest point reached", "extent", f.extent},
		fieldRow{"Why it stopped short", "incomplete_reason", f.incomplete},
		fieldRow{"Photo of the caecum", "caecal_photo", f.photo},
		fieldRow{"Withdrawal time", "withdrawal_seconds", f.withdrawal},
		fieldRow{"Boston score, right colon", "bbps_right", f.bbps[0]},
		fieldRow{"Boston score, transverse", "bbps_transverse", f.bbps[1]},
		fieldRow{"Boston score, left colon", "bbps_left", container.NewVBox(f.bbps[2], f.bbpsTotal)},
		fieldRow{"Rectal retroversion", "retroversion", f.retro},
		fieldRow{"Computer-aided detection used", "detection_aid", f.aid},
	)
	sedation := fs.group("Sedation and comfort",
		fieldRow{"Midazolam (mg)", "midazolam_mg", f.midazolam},
		fieldRow{"Fentanyl (µg)", "fentanyl_ug", f.fentanyl},
		fieldRow{"Pethidine (mg)", "pethidine_mg", f.pethidine},
		fieldRow{"Propofol", "propofol", f.propofol},
		fieldRow{"Comfort (nurse's score)", "comfort", f.comfort},
	)
	outcome := fs.group("Afterwards",
		fieldRow{"Complication within 30 days", "adverse_event", f.adverse},
		fieldRow{"Next colonoscopy advised", "recommended_interval", f.interval},
	)
	addLesion := newButton("Add a lesion", func() { f.editLesion(-1) })
	lesions := container.NewVBox(
		widget.NewLabelWithStyle("Lesions", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}),
		f.lesionBox, container.NewHBox(addLesion))
	cols, layout := newColumns(560, left, container.NewVBox(right, sedation, outcome))
	buttons := container.NewHBox(f.save, f.fresh, f.del)
	f.notice.Wrapping = fyne.TextWrapWord
	f.notice.TextStyle.Bold = true
	body := container.NewVBox(f.heading, f.notice, f.progress, cols, lesions, f.otherProbs, buttons)
	f.scroll = container.NewVScroll(container.NewPadded(body))
	layout.onChange = f.scroll.Refresh
	f.content = f.scroll
	f.startNew(false)
	return f
}

// refreshRoster offers the roster's current endoscopists and trainees.
func (f *caseForm) refreshRoster() {
	f.fields.fill(f.offerRoster)
}

func (f *caseForm) offerRoster() {
	opSel, trSel := f.operatorValue(), f.traineeValue()
	f.operatorIDs, f.traineeIDs = nil, []string{""}
	var ops []string
	trs := []string{"(no trainee)"}
	for _, r := range f.u.roster {
		keep := !r.Retired || r.ID == opSel || r.ID == trSel
		if !keep {
			continue
		}
		label := r.ID
		if r.Name != "" {
			label += " – " + r.Name
		}
		if r.Role == logbook.RoleTrainee {
			f.traineeIDs = append(f.traineeIDs, r.ID)
			trs = append(trs, label)
		} else {
			f.operatorIDs = append(f.operatorIDs, r.ID)
			ops = append(ops, label)
		}
	}
	f.operator.SetOptions(ops)
	f.trainee.SetOptions(trs)
	f.setOperator(opSel)
	f.setTrainee(trSel)
}

func (f *caseForm) operatorValue() string {
	if i := f.operator.SelectedIndex(); i >= 0 && i < len(f.operatorIDs) {
		return f.operatorIDs[i]
	}
	return ""
}

func (f *caseForm) traineeValue() string {
	if i := f.trainee.SelectedIndex(); i >= 0 && i < len(f.traineeIDs) {
		return f.traineeIDs[i]
	}
	return ""
}

func (f *caseForm) setOperator(id string) {
	for i, x := range f.operatorIDs {
		if x == id {
			f.operator.SetSelectedIndex(i)
			return
		}
	}
	f.operator.ClearSelected()
}

func (f *caseForm) setTrainee(id string) {
	for i, x := range f.traineeIDs {
		if x == id {
			f.trainee.SetSelectedIndex(i)
			return
		}
	}
	f.trainee.SetSelectedIndex(0)
}

// say shows a line about the last save above the form; "" hides it.
func (f *caseForm) say(text string) { showText(f.notice, text) }

// showText sets a label's text and hides the label while it has none, so
// that an empty line takes no room.
func showText(l *widget.Label, text string) {
	l.SetText(text)
	if text == "" {
		l.Hide()
	} else {
		l.Show()
	}
}

// startNew clears the form for a new case. With keep, the date and the
// endoscopist stay as they were, for the next case of the same list.
func (f *caseForm) startNew(keep bool) {
	date, op := f.date.Text, f.operatorValue()
	f.isNew, f.storedKey, f.lesions = true, "", nil
	f.heading.SetText("New case")
	f.say("")
	f.fill(logbook.NewProcedure())
	f.fields.fill(func() {
		if keep {
			f.date.SetText(date)
			f.setOperator(op)
		} else {
			f.date.SetText(logbook.FormatDate(f.u.today()))
		}
	})
	f.del.Hide()
	f.fields.untouched()
	f.showLesions()
	f.changed()
}

// edit loads a stored case into the form.
func (f *caseForm) edit(c logbook.Case) {
	f.isNew, f.storedKey = false, c.PatientKey
	f.lesions = append([]logbook.Lesion(nil), c.Lesions...)
	f.heading.SetText("Case " + c.ID)
	f.say("")
	f.fill(c.Procedure)
	f.del.Show()
	f.showLesions()
	f.fields.untouched()
	f.fields.revealAll = true // a stored record's problems show at once
	f.changed()
	f.scroll.ScrollToTop()
}

// fill writes a procedure's values into the widgets (touching none).
func (f *caseForm) fill(p logbook.Procedure) {
	f.fields.fill(func() { f.fillNow(p) })
}

func (f *caseForm) fillNow(p logbook.Procedure) {
	f.refreshRoster()
	f.id.SetText(p.ID)
	f.id.Enable()
	if !f.isNew {
		f.id.Disable() // the id names the record; edit by deleting and entering anew
	}
	f.date.SetText(logbook.FormatDate(p.PerformedOn))
	f.setOperator(p.OperatorID)
	f.setTrainee(p.TraineeID)
	f.supervision.Set(p.Supervision)
	f.reached.Set(p.TraineeReachedCaecum)
	f.patient.SetText("")
	f.age.SetText(logbook.FormatCount(p.Age))
	f.sex.Set(p.Sex)
	f.indication.Set(p.Indication)
	f.setting.Set(p.Setting)
	f.exclusion.Set(p.Exclusion)
	f.extent.Set(p.Extent)
	f.incomplete.Set(p.IncompleteReason)
	f.photo.Set(p.CaecalPhoto)
	f.withdrawal.SetText(logbook.FormatMinSec(p.WithdrawalSeconds))
	for i, v := range []int{p.BBPSRight, p.BBPSTransverse, p.BBPSLeft} {
		if v >= 0 && v <= 3 {
			f.bbps[i].SetSelectedIndex(v + 1)
		} else {
			f.bbps[i].SetSelectedIndex(0)
		}
	}
	f.retro.Set(p.Retroversion)
	f.midazolam.SetText(logbook.FormatDose(p.MidazolamMg))
	f.fentanyl.SetText(logbook.FormatDose(p.FentanylUg))
	f.pethidine.SetText(logbook.FormatDose(p.PethidineMg))
	f.propofol.Set(p.Propofol)
	if p.Comfort >= logbook.MinComfort && p.Comfort <= logbook.MaxComfort {
		f.comfort.SetSelectedIndex(p.Comfort)
	} else {
		f.comfort.SetSelectedIndex(0)
	}
	f.aid.Set(p.DetectionAid)
	f.adverse.Set(p.AdverseEvent)
	f.interval.Set(p.RecommendedInterval)
}

// read builds the procedure from the widgets, with the problems of values
// that could not be read at all (a date that is not a date).
func (f *caseForm) read() (logbook.Procedure, logbook.Problems) {
	var ps logbook.Problems
	bad := func(field string, err error) {
		if err != nil {
			ps = append(ps, logbook.FieldError{Field: field, Reason: err.Error()})
		}
	}
	p := logbook.NewProcedure()
	p.ID = strings.TrimSpace(f.id.Text)
	var err error
	p.PerformedOn, err = logbook.ParseDate(strings.TrimSpace(f.date.Text))
	bad("performed_on", err)
	p.OperatorID = f.operatorValue()
	p.TraineeID = f.traineeValue()
	p.Supervision = f.supervision.Value()
	p.TraineeReachedCaecum = f.reached.Value()
	// The pseudonym is made on save (submit), not here: read runs on every
	// keystroke and must not touch the database.
	p.PatientKey = f.storedKey
	p.Age, err = logbook.ParseCount(strings.TrimSpace(f.age.Text))
	bad("age", err)
	p.Sex = f.sex.Value()
	p.Indication = f.indication.Value()
	p.Setting = f.setting.Value()
	p.Exclusion = f.exclusion.Value()
	p.Extent = f.extent.Value()
	p.IncompleteReason = f.incomplete.Value()
	p.CaecalPhoto = f.photo.Value()
	p.WithdrawalSeconds, err = logbook.ParseMinSec(f.withdrawal.Text)
	bad("withdrawal_seconds", err)
	scores := []*int{&p.BBPSRight, &p.BBPSTransverse, &p.BBPSLeft}
	for i, r := range f.bbps {
		if k := r.SelectedIndex(); k >= 1 {
			*scores[i] = k - 1
		}
	}
	p.Retroversion = f.retro.Value()
	p.MidazolamMg, err = logbook.ParseDose(strings.TrimSpace(f.midazolam.Text))
	bad("midazolam_mg", err)
	p.FentanylUg, err = logbook.ParseDose(strings.TrimSpace(f.fentanyl.Text))
	bad("fentanyl_ug", err)
	p.PethidineMg, err = logbook.ParseDose(strings.TrimSpace(f.pethidine.Text))
	bad("pethidine_mg", err)
	p.Propofol = f.propofol.Value()
	if i := f.comfort.SelectedIndex(); i > 0 {
		p.Comfort = i
	}
	p.DetectionAid = f.aid.Value()
	p.AdverseEvent = f.adverse.Value()
	p.RecommendedInterval = f.interval.Value()
	return p, ps
}

// current returns the case as the form holds it and every problem the
// import would find in it (roster membership is offered by the pickers).
func (f *caseForm) current() (logbook.Case, logbook.Problems) {
	p, ps := f.read()
	today := f.u.today()
	// A value that could not be read is reported once, by its parser.
	for _, q := range logbook.ValidateProcedure(p, today) {
		if ps.Field(q.Field) == "" || q.Field == "procedure_id" {
			ps = append(ps, q)
		}
	}
	c := logbook.Case{Procedure: p}
	for _, l := range f.lesions {
		l.ProcedureID = p.ID
		c.Lesions = append(c.Lesions, l)
	}
	if p.ID != "" {
		for _, l := range c.Lesions {
			for _, q := range logbook.ValidateLesion(l, today) {
				ps = append(ps, logbook.FieldError{Field: "lesions", Reason: fmt.Sprintf("lesion %d: %s: %s", l.LesionNo, q.Field, q.Reason)})
			}
		}
		ps = append(ps, logbook.ValidateLesionNumbers(c.Lesions)...)
	}
	return c, ps
}

// changed re-validates after any edit and updates the messages, the Boston
// total and the Save button.
func (f *caseForm) changed() {
	if f.save == nil {
		return // still being built
	}
	c, ps := f.current()
	f.problems = ps
	rest := f.fields.show(ps)
	var lines []string
	for _, p := range rest {
		lines = append(lines, p.Error())
	}
	if !f.fields.revealAll {
		lines = nil
	}
	f.otherProbs.SetText(strings.Join(lines, "\n"))
	switch {
	case strings.TrimSpace(f.patient.Text) != "":
		showText(f.patientCode, "A code is made from it when the case is saved; the number itself is not kept.")
	case c.PatientKey != "":
		showText(f.patientCode, "Kept as "+logbook.ShortCode(c.PatientKey)+". Type a hospital number only to change it.")
	default:
		showText(f.patientCode, "")
	}
	if c.BBPSRecorded() {
		words := "not adequate (a segment below 2)"
		if c.BBPSAdequate() {
			words = "adequate (every segment 2 or more)"
		}
		f.bbpsTotal.SetText(fmt.Sprintf("Total %d of 9 – %s", c.BBPSTotal(), words))
	} else {
		f.bbpsTotal.SetText("Total: score all three segments")
	}
}

// submit saves the case (Enter in any field, or Save). A case with
// problems is not saved: every message shows and the first field with a
// problem gets the keyboard. A valid case is saved off the UI thread,
// the hospital number turned into its pseudonym first, while the screen
// shows that it is saving and stays usable; a database busy with another
// program's writing delays only the save.
func (f *caseForm) submit() {
	if f.saving {
		return
	}
	c, ps := f.current()
	if len(ps) > 0 {
		f.fields.revealAll = true
		f.changed()
		f.say(fmt.Sprintf("Not saved: %d of the values need attention (shown beside each field).", len(ps)))
		f.fields.focusFirst(f.u.win.Canvas(), ps)
		return
	}
	ref := strings.TrimSpace(f.patient.Text)
	isNew := f.isNew
	f.saving = true
	f.save.Disable()
	f.say("Saving case " + c.ID + "…")
	f.progress.Show()
	f.progress.Start()
	f.u.jobs.background(func() error {
		if ref != "" {
			key, err := f.u.st.Pseudonymise(ref)
			if errors.Is(err, logbook.ErrNoKey) {
				err = errors.New("no unit key is loaded, so the hospital number cannot be coded")
			}
			if err != nil {
				return &store.ValidationError{Record: "procedure " + c.ID, Problems: logbook.Problems{{Field: "patient_ref", Reason: err.Error()}}}
			}
			c.PatientKey = key
		}
		return f.u.st.SaveCase(f.u.ctx, c, isNew)
	}, func(err error) { f.saved(c, isNew, err) })
}

// saved shows the outcome of a save on the UI thread.
func (f *caseForm) saved(c logbook.Case, isNew bool, err error) {
	f.saving = false
	f.progress.Stop()
	f.progress.Hide()
	f.save.Enable()
	var ve *store.ValidationError
	if errors.As(err, &ve) {
		f.fields.revealAll = true
		rest := f.fields.show(ve.Problems)
		var lines []string
		for _, p := range rest {
			lines = append(lines, p.Error())
		}
		f.otherProbs.SetText(strings.Join(lines, "\n"))
		f.say("Not saved: " + ve.Problems[0].Error())
		f.fields.focusFirst(f.u.win.Canvas(), ve.Problems)
		return
	}
	if err != nil {
		f.say("Not saved: " + err.Error())
		dialog.ShowError(fmt.Errorf("the case was not saved: %w", err), f.u.win)
		return
	}
	what := "Saved case " + c.ID
	if !isNew {
		what = "Saved the changes to case " + c.ID
	}
	if c.PatientKey != "" {
		what += " (patient " + logbook.ShortCode(c.PatientKey) + ")"
	}
	f.startNew(true)
	f.say(what + ". Ready for the next case.")
	f.scroll.ScrollToTop()
	f.u.win.Canvas().Focus(f.id)
	f.u.recordsChanged()
}

// confirmDelete asks before removing the case being edited.
func (f *caseForm) confirmDelete() {
	if f.isNew {
		return
	}
	id := strings.TrimSpace(f.id.Text)
	msg := fmt.Sprintf("Delete case %s and its %d lesions?\nThe change log keeps a copy of what is deleted.", id, len(f.lesions))
	dialog.ShowConfirm("Delete this case?", msg, func(yes bool) {
		if yes {
			f.deleteNow(id)
		}
	}, f.u.win)
}

// deleteNow deletes the case off the UI thread.
func (f *caseForm) deleteNow(id string) {
	f.del.Disable()
	f.u.jobs.background(func() error { return f.u.st.DeleteCase(f.u.ctx, id) }, func(err error) {
		f.del.Enable()
		if err != nil {
			dialog.ShowError(fmt.Errorf("case %s was not deleted: %w", id, err), f.u.win)
			return
		}
		f.startNew(true)
		f.say("Deleted case " + id + ".")
		f.u.recordsChanged()
	})
}
