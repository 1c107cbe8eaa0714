package app

import (
	"errors"
	"fmt"
	"strings"
	"time"

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
	u *ui
	// form is the table of the procedure's fields; fields lays them out
	// and shows their problems.
	form   *recordForm[logbook.Procedure]
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

	// The fields the form treats specially: the number is fixed once
	// stored, the hospital number is coded on save, the people come from
	// the roster, and the Boston score shows its total.
	id, patient       *formField[logbook.Procedure]
	operator, trainee *formField[logbook.Procedure]
	patientCode       *widget.Label
	bbpsTotal         *widget.Label

	save, del, fresh *button
	content          fyne.CanvasObject
}

func newCaseForm(u *ui) *caseForm {
	type P = logbook.Procedure
	f := &caseForm{u: u, form: newRecordForm[P](), isNew: true}
	f.fields = f.form.set
	h := formHooks{changed: f.changed, submit: f.submit}
	f.id = idField("Procedure number", "procedure_id", "e.g. C2026-0142", h, func(p *P) *string { return &p.ID })
	f.patient = noteField[P]("Patient", "patient_ref", "hospital number (only a code made from it is kept)", h)
	f.operator = codeField("Endoscopist", "operator_id", []string(nil), nil, "", h, func(p *P) *string { return &p.OperatorID })
	f.trainee = codeField("Trainee holding the scope", "trainee_id", []string(nil), nil, noTrainee, h, func(p *P) *string { return &p.TraineeID })
	f.patientCode = widget.NewLabel("")
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
	f.save = newButton("Save the case  (Enter)", f.submit)
	f.save.Importance = widget.HighImportance
	f.del = newButton("Delete this case…", f.confirmDelete)
	f.del.Importance = widget.DangerImportance
	f.fresh = newButton("Start a new case", func() { f.startNew(true) })
	f.lesionBox = container.NewVBox()

	fm := f.form
	left := fm.group("The procedure",
		f.id,
		dateField("Date", "performed_on", "YYYY-MM-DD", h, func(p *P) *time.Time { return &p.PerformedOn }),
		f.operator,
		f.trainee,
		codeField("Supervision", "supervision", logbook.Supervisions, supervisionWords, notRecorded, h, func(p *P) *logbook.Supervision { return &p.Supervision }),
		yesNoField("Trainee reached the caecum unaided", "trainee_reached_caecum", "", h, func(p *P) *logbook.YesNo { return &p.TraineeReachedCaecum }),
		f.patient.under(f.patientCode),
		countField("Age", "age", "years", h, func(p *P) *int { return &p.Age }),
		codeField("Sex", "sex", logbook.Sexes, sexWords, "", h, func(p *P) *logbook.Sex { return &p.Sex }),
		codeField("Reason for the test", "indication", logbook.Indications, indicationWords, "", h, func(p *P) *logbook.Indication { return &p.Indication }),
		codeField("Setting", "setting", logbook.Settings, settingWords, notRecorded, h, func(p *P) *logbook.Setting { return &p.Setting }),
		codeField("Excluded from detection figures", "exclusion", logbook.Exclusions, exclusionWords, notRecorded, h, func(p *P) *logbook.Exclusion { return &p.Exclusion }),
	)
	right := fm.group("The examination",
		codeField("Furthest point reached", "extent", logbook.Extents, extentWords, "", h, func(p *P) *logbook.Extent { return &p.Extent }),
		codeField("Why it stopped short", "incomplete_reason", logbook.IncompleteReasons, incompleteWords, notRecorded, h, func(p *P) *logbook.IncompleteReason { return &p.IncompleteReason }),
		yesNoField("Photo of the caecum", "caecal_photo", "", h, func(p *P) *logbook.YesNo { return &p.CaecalPhoto }),
		minSecField("Withdrawal time", "withdrawal_seconds", "minutes:seconds, e.g. 7:30", h, func(p *P) *int { return &p.WithdrawalSeconds }),
		scoreField("Boston score, right colon", "bbps_right", bostonWords, 0, h, func(p *P) *int { return &p.BBPSRight }),
		scoreField("Boston score, transverse", "bbps_transverse", bostonWords, 0, h, func(p *P) *int { return &p.BBPSTransverse }),
		scoreField("Boston score, left colon", "bbps_left", bostonWords, 0, h, func(p *P) *int { return &p.BBPSLeft }).under(f.bbpsTotal),
		yesNoField("Rectal retroversion", "retroversion", "Not possible", h, func(p *P) *logbook.YesNo { return &p.Retroversion }),
		yesNoField("Computer-aided detection used", "detection_aid", "", h, func(p *P) *logbook.YesNo { return &p.DetectionAid }),
	)
	sedation := fm.group("Sedation and comfort",
		doseField("Midazolam (mg)", "midazolam_mg", "mg", h, func(p *P) *float64 { return &p.MidazolamMg }),
		doseField("Fentanyl (µg)", "fentanyl_ug", "µg", h, func(p *P) *float64 { return &p.FentanylUg }),
		doseField("Pethidine (mg)", "pethidine_mg", "mg", h, func(p *P) *float64 { return &p.PethidineMg }),
		yesNoField("Propofol", "propofol", "", h, func(p *P) *logbook.YesNo { return &p.Propofol }),
		scoreField("Comfort (nurse's score)", "comfort", comfortWords, logbook.MinComfort, h, func(p *P) *int { return &p.Comfort }),
	)
	outcome := fm.group("Afterwards",
		codeField("Complication within 30 days", "adverse_event", logbook.AdverseEvents, adverseWords, notRecorded, h, func(p *P) *logbook.AdverseEvent { return &p.AdverseEvent }),
		codeField("Next colonoscopy advised", "recommended_interval", logbook.Intervals, intervalWords, notRecorded, h, func(p *P) *logbook.Interval { return &p.RecommendedInterval }),
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

// noTrainee is the trainee drop-down's first option.
const noTrainee = "(no trainee)"

// refreshRoster offers the roster's current endoscopists and trainees.
func (f *caseForm) refreshRoster() {
	f.fields.fill(f.offerRoster)
}

// offerRoster offers every endoscopist and trainee on the roster, leaving
// out the retired unless the case names them.
func (f *caseForm) offerRoster() {
	cur, _ := f.read()
	var ops, trs []string
	labels := map[string]string{}
	for _, r := range f.u.roster {
		if r.Retired && r.ID != cur.OperatorID && r.ID != cur.TraineeID {
			continue
		}
		labels[r.ID] = r.ID
		if r.Name != "" {
			labels[r.ID] += " – " + r.Name
		}
		if r.Role == logbook.RoleTrainee {
			trs = append(trs, r.ID)
		} else {
			ops = append(ops, r.ID)
		}
	}
	f.operator.input.(*choice[string]).setCodes(ops, labels, "")
	f.trainee.input.(*choice[string]).setCodes(trs, labels, noTrainee)
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
	cur, _ := f.read()
	p := logbook.NewProcedure()
	p.PerformedOn = f.u.today()
	if keep {
		p.PerformedOn, p.OperatorID = cur.PerformedOn, cur.OperatorID
	}
	f.isNew, f.storedKey, f.lesions = true, "", nil
	f.heading.SetText("New case")
	f.say("")
	f.fill(p)
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

// fill shows a procedure in the form (touching no field): the roster is
// offered first, so that the case's people are among the choices.
func (f *caseForm) fill(p logbook.Procedure) {
	f.refreshRoster()
	f.form.fill(p)
	id := f.id.input.(*entry)
	id.Enable()
	if !f.isNew {
		id.Disable() // the id names the record; edit by deleting and entering anew
	}
}

// read builds the procedure from the form, with the problems of values
// that could not be read at all (a date that is not a date). The pseudonym
// is made on save (submit), not here: read runs on every keystroke and
// must not touch the database.
func (f *caseForm) read() (logbook.Procedure, logbook.Problems) {
	p := logbook.NewProcedure()
	ps := f.form.read(&p)
	p.PatientKey = f.storedKey
	return p, ps
}

// patientText is the hospital number typed, if any.
func (f *caseForm) patientText() string {
	t, _ := f.patient.text.Get()
	return strings.TrimSpace(t)
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
	case f.patientText() != "":
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
	ref := f.patientText()
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
	f.u.win.Canvas().Focus(f.id.focus())
	f.u.recordsChanged()
}

// confirmDelete asks before removing the case being edited.
func (f *caseForm) confirmDelete() {
	if f.isNew {
		return
	}
	cur, _ := f.read()
	id := cur.ID
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
