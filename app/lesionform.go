package app

import (
	"fmt"
	"strings"
	"time"
	"unicode"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
)

// lesionSummary is one line describing a lesion in plain words.
func lesionSummary(l logbook.Lesion) string {
	parts := []string{fmt.Sprintf("%d. %s", l.LesionNo, wordOr(segmentWords[l.Segment], "segment?"))}
	if l.SizeMM != logbook.NotRecorded {
		parts = append(parts, fmt.Sprintf("%d mm", l.SizeMM))
	}
	if l.Paris != "" {
		parts = append(parts, "Paris "+string(l.Paris))
	}
	if l.OpticalClass != "" {
		s := "looks like " + lowerFirst(opticalWords[l.OpticalClass])
		if l.Confidence != "" {
			s += " (" + lowerFirst(confidenceWords[l.Confidence]) + " confidence)"
		}
		parts = append(parts, s)
	}
	if l.Resection != "" {
		parts = append(parts, lowerFirst(resectionWords[l.Resection]))
	}
	if l.Retrieved == logbook.Yes {
		parts = append(parts, "retrieved")
	}
	switch {
	case l.Histology == logbook.HistPending:
		parts = append(parts, "histology awaited")
	case l.Histology != "":
		h := lowerFirst(histologyWords[l.Histology])
		if l.Dysplasia != "" && l.Dysplasia != logbook.DysplasiaNone {
			h += ", " + lowerFirst(dysplasiaWords[l.Dysplasia]) + " dysplasia"
		}
		parts = append(parts, h)
	case l.SentToPathology == logbook.No:
		parts = append(parts, "not sent to pathology")
	}
	return strings.Join(parts, ", ")
}

// lowerFirst lower-cases the first letter of words for use inside a
// sentence, leaving an abbreviation ("EMR", "NBI") as it is.
func lowerFirst(w string) string {
	r := []rune(w)
	if len(r) == 0 || (len(r) > 1 && unicode.IsUpper(r[1])) {
		return w
	}
	r[0] = unicode.ToLower(r[0])
	return string(r)
}

// upperFirst capitalises the first letter of words, for a choice or a
// heading.
func upperFirst(w string) string {
	r := []rune(w)
	if len(r) == 0 {
		return w
	}
	r[0] = unicode.ToUpper(r[0])
	return string(r)
}

func wordOr(w, fallback string) string {
	if w == "" {
		return fallback
	}
	return w
}

// showLesions redraws the form's list of lesions with Edit and Remove.
func (f *caseForm) showLesions() {
	f.lesionBox.RemoveAll()
	if len(f.lesions) == 0 {
		none := widget.NewLabel("No lesions recorded. Add one for each polyp or other finding.")
		none.Importance = widget.LowImportance
		f.lesionBox.Add(none)
		return
	}
	today := f.u.today()
	for i, l := range f.lesions {
		i := i
		l.ProcedureID = "x" // checked with the case's id on save
		line := widget.NewLabel(lesionSummary(l))
		line.Wrapping = fyne.TextWrapWord
		row := container.NewBorder(nil, nil, nil, container.NewHBox(
			newButton(fmt.Sprintf("Edit lesion %d", l.LesionNo), func() { f.editLesion(i) }),
			newButton(fmt.Sprintf("Remove lesion %d", l.LesionNo), func() {
				f.lesions = append(f.lesions[:i:i], f.lesions[i+1:]...)
				f.showLesions()
				f.changed()
			})), line)
		f.lesionBox.Add(row)
		if ps := logbook.ValidateLesion(l, today); len(ps) > 0 {
			m := widget.NewLabel(ps[0].Error())
			m.Importance = widget.DangerImportance
			f.lesionBox.Add(m)
		}
	}
}

// editLesion opens the lesion editor for lesion i, or for a new lesion when
// i is negative.
func (f *caseForm) editLesion(i int) {
	l := logbook.NewLesion()
	if i >= 0 {
		l = f.lesions[i]
	} else {
		for _, x := range f.lesions {
			l.LesionNo = max(l.LesionNo, x.LesionNo)
		}
		l.LesionNo++
	}
	ed := newLesionEditor(f.u, l)
	f.editor = ed
	var d dialog.Dialog
	ed.onDone = func(keep bool) {
		d.Hide()
		f.editor = nil
		if !keep {
			return
		}
		if i >= 0 {
			f.lesions[i] = ed.lesion()
		} else {
			f.lesions = append(f.lesions, ed.lesion())
		}
		f.showLesions()
		f.changed()
	}
	d = dialog.NewCustomWithoutButtons(fmt.Sprintf("Lesion %d", l.LesionNo), ed.content, f.u.win)
	size := f.u.win.Canvas().Size()
	d.Resize(fyne.NewSize(min(680, size.Width-40), min(680, size.Height-40)))
	d.Show()
	f.u.win.Canvas().Focus(ed.firstInput())
}

// lesionEditor is the form for one lesion, validated as the import does.
type lesionEditor struct {
	u    *ui
	base logbook.Lesion
	// form is the table of the lesion's fields; fields lays them out and
	// shows their problems.
	form   *recordForm[logbook.Lesion]
	fields *fieldSet
	ready  bool // every field is made

	keep     *button
	message  *widget.Label
	onDone   func(keep bool)
	content  fyne.CanvasObject
	problems logbook.Problems
}

func newLesionEditor(u *ui, l logbook.Lesion) *lesionEditor {
	type L = logbook.Lesion
	e := &lesionEditor{u: u, base: l, form: newRecordForm[L]()}
	e.fields = e.form.set
	done := func() {
		if len(e.problems) > 0 {
			// Show every problem and give the keyboard to the first.
			e.fields.revealAll = true
			e.changed()
			e.message.SetText(fmt.Sprintf("Not kept yet: %d of the values need attention.", len(e.problems)))
			e.fields.focusFirst(e.u.win.Canvas(), e.problems)
			return
		}
		if e.onDone != nil {
			e.onDone(true)
		}
	}
	h := formHooks{changed: e.changed, submit: done}
	histology := codeField("Histology", "histology", logbook.Histologies, histologyWords, notRecorded, h, func(l *L) *logbook.Histology { return &l.Histology })
	// A specimen sent is waiting for its result until one is entered.
	sent := yesNoField("Sent to pathology", "sent_to_pathology", "", formHooks{changed: func() {
		if cur, _ := e.read(); cur.SentToPathology == logbook.Yes && cur.Histology == "" {
			histology.text.Set(histology.input.(*choice[logbook.Histology]).wordsOf(logbook.HistPending))
		}
		e.changed()
	}, submit: done}, func(l *L) *logbook.YesNo { return &l.SentToPathology })

	fm := e.form
	form := fm.group("Where and what",
		codeField("Segment", "segment", logbook.Segments, segmentWords, "", h, func(l *L) *logbook.Segment { return &l.Segment }),
		countField("Size (mm)", "size_mm", "mm", h, func(l *L) *int { return &l.SizeMM }),
		codeField("Paris class", "paris", logbook.ParisClasses, parisWords, notRecorded, h, func(l *L) *logbook.Paris { return &l.Paris }),
		codeField("Optical diagnosis", "optical_class", logbook.OpticalClasses, opticalWords, notRecorded, h, func(l *L) *logbook.OpticalClass { return &l.OpticalClass }),
		codeField("Confidence", "confidence", logbook.Confidences, confidenceWords, notRecorded, h, func(l *L) *logbook.Confidence { return &l.Confidence }),
		codeField("Imaging used", "imaging", logbook.ImagingModes, imagingWords, notRecorded, h, func(l *L) *logbook.Imaging { return &l.Imaging }),
		codeField("Computer-aided call", "aid_class", logbook.OpticalClasses, opticalWords, notRecorded, h, func(l *L) *logbook.OpticalClass { return &l.AidClass }),
	)
	removal := fm.group("Removal and pathology",
		codeField("Resection", "resection", logbook.Resections, resectionWords, notRecorded, h, func(l *L) *logbook.Resection { return &l.Resection }),
		yesNoField("Retrieved", "retrieved", "", h, func(l *L) *logbook.YesNo { return &l.Retrieved }),
		sent,
		yesNoField("Tattoo", "tattoo", "", h, func(l *L) *logbook.YesNo { return &l.Tattoo }),
		histology,
		codeField("Dysplasia", "dysplasia", logbook.Dysplasias, dysplasiaWords, notRecorded, h, func(l *L) *logbook.Dysplasia { return &l.Dysplasia }),
		dateField("Result reported on", "reported_on", "YYYY-MM-DD", h, func(l *L) *time.Time { return &l.ReportedOn }),
	)
	fm.fill(l)

	e.keep = newButton("Keep this lesion  (Enter)", done)
	e.keep.Importance = widget.HighImportance
	cancel := newButton("Cancel", func() {
		if e.onDone != nil {
			e.onDone(false)
		}
	})
	e.message = widget.NewLabel("")
	e.message.Importance = widget.DangerImportance
	e.message.Wrapping = fyne.TextWrapWord
	e.content = container.NewBorder(nil, container.NewVBox(e.message, container.NewHBox(e.keep, cancel)), nil, nil,
		container.NewVScroll(container.NewVBox(form, removal)))
	e.fields.untouched()
	if l.Segment != "" {
		e.fields.revealAll = true // an existing lesion's problems show at once
	}
	e.ready = true
	e.changed()
	return e
}

// firstInput is the lesion form's first field (the segment), which gets
// the keyboard when the form opens.
func (e *lesionEditor) firstInput() fyne.Focusable { return e.form.fields[0].focus() }

// lesion returns the lesion as the editor holds it (values that cannot be
// read are left not recorded; changed reports them).
func (e *lesionEditor) lesion() logbook.Lesion {
	l, _ := e.read()
	return l
}

// read builds the lesion from the form, with the problems of values that
// could not be read at all.
func (e *lesionEditor) read() (logbook.Lesion, logbook.Problems) {
	l := logbook.NewLesion()
	l.ProcedureID, l.LesionNo = e.base.ProcedureID, e.base.LesionNo
	ps := e.form.read(&l)
	return l, ps
}

func (e *lesionEditor) changed() {
	if !e.ready {
		return
	}
	l, ps := e.read()
	check := l
	check.ProcedureID = "x" // the case's id is checked with the case
	ps = append(ps, logbook.ValidateLesion(check, e.u.today())...)
	e.problems = ps
	e.fields.show(ps)
	if e.message != nil && len(ps) == 0 {
		e.message.SetText("")
	}
}
