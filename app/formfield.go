package app

import (
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/data/binding"

	"polypledger/logbook"
)

// A record form — the case form and the lesion form — declares each field
// once, as one entry of a table: the label beside it, the CSV column whose
// problems it shows, the widget that edits it and the record field it holds.
// The widget is bound (Fyne data binding) to a string holding the text it
// shows: filling the form sets those strings from a record, reading it
// parses them back into one, and laying it out places the widgets in table
// order. Nothing else names a field.

// formField is one field of a form over records of type R.
type formField[R any] struct {
	label, column string
	// input is the widget that edits the field, bound to text.
	input fyne.CanvasObject
	// cell is what is laid out beside the label: the input, or the input
	// with a line under it.
	cell fyne.CanvasObject
	// text is what the widget shows: an entry's text, or the chosen
	// option's words ("" for none).
	text binding.String
	// show is the text a record's value shows as; read sets the record's
	// value from the text, failing when it cannot be read (a date that is
	// not a date). A field the record does not hold has neither.
	show func(r *R) string
	read func(r *R, text string) error
}

// under lays a line (a note, a total) out under the field's input.
func (f *formField[R]) under(o fyne.CanvasObject) *formField[R] {
	f.cell = container.NewVBox(f.input, o)
	return f
}

// focus is the field's input, to give the keyboard to.
func (f *formField[R]) focus() fyne.Focusable { return f.input.(fyne.Focusable) }

// formHooks are what every input of a form calls: changed on any edit,
// submit on Enter.
type formHooks struct {
	changed, submit func()
}

// recordForm is the table of fields of one form and the fieldSet that lays
// them out and shows their problems.
type recordForm[R any] struct {
	fields []*formField[R]
	set    *fieldSet
}

func newRecordForm[R any]() *recordForm[R] { return &recordForm[R]{set: newFieldSet()} }

// group lays out the fields under a title, in the order given, and adds
// them to the form.
func (rf *recordForm[R]) group(title string, fields ...*formField[R]) fyne.CanvasObject {
	rows := make([]fieldRow, len(fields))
	for i, f := range fields {
		cell := f.cell
		if cell == nil {
			cell = f.input
		}
		rows[i] = fieldRow{f.label, f.column, cell}
		rf.fields = append(rf.fields, f)
	}
	return rf.set.group(title, rows...)
}

// fill shows record r in every field without marking any touched.
func (rf *recordForm[R]) fill(r R) {
	rf.set.fill(func() {
		for _, f := range rf.fields {
			text := ""
			if f.show != nil {
				text = f.show(&r)
			}
			rf.set.filled[f.column] = text
			f.text.Set(text)
		}
	})
}

// read parses every field into r, with a problem for each value that could
// not be read at all, named by its column.
func (rf *recordForm[R]) read(r *R) logbook.Problems {
	var ps logbook.Problems
	for _, f := range rf.fields {
		if f.read == nil {
			continue
		}
		text, _ := f.text.Get()
		if err := f.read(r, text); err != nil {
			ps = append(ps, logbook.FieldError{Field: f.column, Reason: err.Error()})
		}
	}
	return ps
}

// field returns the form's field for a column, nil when there is none.
func (rf *recordForm[R]) field(column string) *formField[R] {
	for _, f := range rf.fields {
		if f.column == column {
			return f
		}
	}
	return nil
}

// textInput makes an entry bound to a new text, calling the hooks.
func textInput(placeholder string, h formHooks) (*entry, binding.String) {
	e := submitEntry(placeholder, h.changed, h.submit)
	text := binding.NewString()
	e.Bind(text)
	e.Validator = nil // the form shows its own messages, not a tick beside every field
	return e, text
}

// textField is a field typed as text and read by parse, shown by format.
func textField[R, V any](label, column, placeholder string, h formHooks, value func(*R) *V,
	format func(V) string, parse func(string) (V, error)) *formField[R] {
	e, text := textInput(placeholder, h)
	return &formField[R]{label: label, column: column, input: e, text: text,
		show: func(r *R) string { return format(*value(r)) },
		read: func(r *R, s string) error {
			v, err := parse(strings.TrimSpace(s))
			*value(r) = v
			return err
		}}
}

// idField is free text, such as a procedure number.
func idField[R any](label, column, placeholder string, h formHooks, value func(*R) *string) *formField[R] {
	return textField(label, column, placeholder, h, value, func(s string) string { return s },
		func(s string) (string, error) { return s, nil })
}

// dateField is a date typed as YYYY-MM-DD.
func dateField[R any](label, column, placeholder string, h formHooks, value func(*R) *time.Time) *formField[R] {
	return textField(label, column, placeholder, h, value, logbook.FormatDate, logbook.ParseDate)
}

// countField is a whole number (age, size).
func countField[R any](label, column, placeholder string, h formHooks, value func(*R) *int) *formField[R] {
	return textField(label, column, placeholder, h, value, logbook.FormatCount, logbook.ParseCount)
}

// doseField is a dose in its unit.
func doseField[R any](label, column, placeholder string, h formHooks, value func(*R) *float64) *formField[R] {
	return textField(label, column, placeholder, h, value, logbook.FormatDose, logbook.ParseDose)
}

// minSecField is a time typed as minutes:seconds, held in seconds.
func minSecField[R any](label, column, placeholder string, h formHooks, value func(*R) *int) *formField[R] {
	return textField(label, column, placeholder, h, value, logbook.FormatMinSec, logbook.ParseMinSec)
}

// bindSelect binds a drop-down to text, the chosen option's words: a new
// text chooses its option (none for ""), and choosing an option sets the
// text before the drop-down's own handler runs.
func bindSelect(s *keySelect, text binding.String) {
	text.AddListener(binding.NewDataListener(func() {
		v, _ := text.Get()
		switch {
		case v == s.Selected:
		case v == "":
			s.ClearSelected()
		default:
			s.SetSelected(v)
		}
	}))
	changed := s.OnChanged
	s.OnChanged = func(v string) {
		if cur, _ := text.Get(); cur != v {
			text.Set(v)
		}
		if changed != nil {
			changed(v)
		}
	}
}

// codeField is a drop-down over one code set (see choice); zeroWords, when
// not empty, is a first option for the zero code ("(not recorded)").
func codeField[R any, T comparable](label, column string, codes []T, words map[T]string, zeroWords string, h formHooks,
	value func(*R) *T) *formField[R] {
	c := newChoiceZero(codes, words, zeroWords, h.changed)
	c.OnSubmit = h.submit
	text := binding.NewString()
	bindSelect(&c.keySelect, text)
	return &formField[R]{label: label, column: column, input: c, text: text,
		show: func(r *R) string { return c.wordsOf(*value(r)) },
		read: func(r *R, s string) error {
			*value(r) = c.codeOf(s)
			return nil
		}}
}

// yesNoField is a yes/no drop-down (not recorded first), with a fourth
// answer worded naWords when naWords is not empty.
func yesNoField[R any](label, column, naWords string, h formHooks, value func(*R) *logbook.YesNo) *formField[R] {
	codes := []logbook.YesNo{logbook.Yes, logbook.No}
	words := map[logbook.YesNo]string{logbook.Yes: "Yes", logbook.No: "No"}
	if naWords != "" {
		codes = append(codes, logbook.NotApplicable)
		words[logbook.NotApplicable] = naWords
	}
	return codeField(label, column, codes, words, notRecorded, h, value)
}

// scoreField is a drop-down of graded scores (not recorded first), the
// option words[i] scoring first+i.
func scoreField[R any](label, column string, words []string, first int, h formHooks, value func(*R) *int) *formField[R] {
	options := append([]string{notRecorded}, words...)
	s := newKeySelect(options, func(string) {
		if h.changed != nil {
			h.changed()
		}
	})
	s.OnSubmit = h.submit
	text := binding.NewString()
	bindSelect(s, text)
	return &formField[R]{label: label, column: column, input: s, text: text,
		show: func(r *R) string {
			if i := *value(r) - first; i >= 0 && i < len(words) {
				return words[i]
			}
			return notRecorded
		},
		read: func(r *R, text string) error {
			*value(r) = logbook.NotRecorded
			for i, w := range words {
				if w == text {
					*value(r) = first + i
				}
			}
			return nil
		}}
}

// noteField is an entry the record does not hold (a hospital number, coded
// only when the case is saved); fill empties it.
func noteField[R any](label, column, placeholder string, h formHooks) *formField[R] {
	e, text := textInput(placeholder, h)
	return &formField[R]{label: label, column: column, input: e, text: text}
}
