package app

import (
	"fmt"
	"strings"
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
	f.u.win.Canvas().Focus(ed.segment)
}

// lesionEditor is the form for one lesion, validated as the import does.
type lesionEditor struct {
	u      *ui
	base   logbook.Lesion
	fields *fieldSet

	segment               *choice[logbook.Segment]
	size, reported        *entry
	paris                 *choice[logbook.Paris]
	optical, aidClass     *choice[logbook.OpticalClass]
	confidence            *choice[logbook.Confidence]
	imaging               *choice[logbook.Imaging]
	resection             *choice[logbook.Resection]
	retrieved, sent, tatt *choice[logbook.YesNo]
	histology             *choice[logbook.Histology]
	dysplasia             *choice[logbook.Dysplasia]
	keep                  *button
	message               *widget.Label
	onDone                func(keep bool)
	content               fyne.CanvasObject
	problems              logbook.Problems
}

func newLesionEditor(u *ui, l logbook.Lesion) *lesionEditor {
	e := &lesionEditor{u: u, base: l, fields: newFieldSet()}
	ch := e.changed
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
	e.segment = newChoice(logbook.Segments, segmentWords, false, ch)
	e.size = submitEntry("mm", ch, done)
	e.paris = newChoice(logbook.ParisClasses, parisWords, true, ch)
	e.optical = newChoice(logbook.OpticalClasses, opticalWords, true, ch)
	e.confidence = newChoice(logbook.Confidences, confidenceWords, true, ch)
	e.imaging = newChoice(logbook.ImagingModes, imagingWords, true, ch)
	e.aidClass = newChoice(logbook.OpticalClasses, opticalWords, true, ch)
	e.resection = newChoice(logbook.Resections, resectionWords, true, ch)
	e.retrieved = newYesNo(false, "", ch)
	e.sent = newYesNo(false, "", func() {
		// A specimen sent is waiting for its result until one is entered.
		if e.sent.Value() == logbook.Yes && e.histology.Value() == "" {
			e.histology.Set(logbook.HistPending)
		}
		ch()
	})
	e.tatt = newYesNo(false, "", ch)
	e.histology = newChoice(logbook.Histologies, histologyWords, true, ch)
	e.dysplasia = newChoice(logbook.Dysplasias, dysplasiaWords, true, ch)
	e.reported = submitEntry("YYYY-MM-DD", ch, done)
	for _, s := range []*keySelect{&e.segment.keySelect, &e.paris.keySelect, &e.optical.keySelect, &e.confidence.keySelect,
		&e.imaging.keySelect, &e.aidClass.keySelect, &e.resection.keySelect, &e.retrieved.keySelect, &e.sent.keySelect,
		&e.tatt.keySelect, &e.histology.keySelect, &e.dysplasia.keySelect} {
		s.OnSubmit = done
	}

	fs := e.fields
	form := fs.group("Where and what",
		fieldRow{"Segment", "segment", e.segment},
		fieldRow{"Size (mm)", "size_mm", e.size},
		fieldRow{"Paris class", "paris", e.paris},
		fieldRow{"Optical diagnosis", "optical_class", e.optical},
		fieldRow{"Confidence", "confidence", e.confidence},
		fieldRow{"Imaging used", "imaging", e.imaging},
		fieldRow{"Computer-aided call", "aid_class", e.aidClass},
	)
	removal := fs.group("Removal and pathology",
		fieldRow{"Resection", "resection", e.resection},
		fieldRow{"Retrieved", "retrieved", e.retrieved},
		fieldRow{"Sent to pathology", "sent_to_pathology", e.sent},
		fieldRow{"Tattoo", "tattoo", e.tatt},
		fieldRow{"Histology", "histology", e.histology},
		fieldRow{"Dysplasia", "dysplasia", e.dysplasia},
		fieldRow{"Result reported on", "reported_on", e.reported},
	)
	fs.fill(func() { e.set(l) })

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
	e.changed()
	return e
}

// set writes a lesion's values into the widgets.
func (e *lesionEditor) set(l logbook.Lesion) {
	e.segment.Set(l.Segment)
	e.size.SetText(logbook.FormatCount(l.SizeMM))
	e.paris.Set(l.Paris)
	e.optical.Set(l.OpticalClass)
	e.confidence.Set(l.Confidence)
	e.imaging.Set(l.Imaging)
	e.aidClass.Set(l.AidClass)
	e.resection.Set(l.Resection)
	e.retrieved.Set(l.Retrieved)
	e.sent.Set(l.SentToPathology)
	e.tatt.Set(l.Tattoo)
	e.histology.Set(l.Histology)
	e.dysplasia.Set(l.Dysplasia)
	e.reported.SetText(logbook.FormatDate(l.ReportedOn))
}

// lesion returns the lesion as the editor holds it (values that cannot be
// read are left not recorded; changed reports them).
func (e *lesionEditor) lesion() logbook.Lesion {
	l, _ := e.read()
	return l
}

func (e *lesionEditor) read() (logbook.Lesion, logbook.Problems) {
	var ps logbook.Problems
	l := logbook.NewLesion()
	l.ProcedureID, l.LesionNo = e.base.ProcedureID, e.base.LesionNo
	var err error
	l.Segment = e.segment.Value()
	if l.SizeMM, err = logbook.ParseCount(strings.TrimSpace(e.size.Text)); err != nil {
		ps = append(ps, logbook.FieldError{Field: "size_mm", Reason: err.Error()})
	}
	l.Paris = e.paris.Value()
	l.OpticalClass = e.optical.Value()
	l.Confidence = e.confidence.Value()
	l.Imaging = e.imaging.Value()
	l.AidClass = e.aidClass.Value()
	l.Resection = e.resection.Value()
	l.Retrieved = e.retrieved.Value()
	l.SentToPathology = e.sent.Value()
	l.Tattoo = e.tatt.Value()
	l.Histology = e.histology.Value()
	l.Dysplasia = e.dysplasia.Value()
	if l.ReportedOn, err = logbook.ParseDate(strings.TrimSpace(e.reported.Text)); err != nil {
		ps = append(ps, logbook.FieldError{Field: "reported_on", Reason: err.Error()})
	}
	return l, ps
}

func (e *lesionEditor) changed() {
	if e.dysplasia == nil || e.reported == nil {
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
