package app

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
)

// fieldSet lays out labelled fields in two columns, each with the message
// line that validation writes beside it (named by the field's CSV column so
// that logbook.Problems.Field finds it). A field's message shows once the
// field has been changed, or once a save has been tried (revealAll): an
// empty form is not covered in "is required" before anything is typed.
type fieldSet struct {
	msgs    map[string]*widget.Label
	inputs  map[string]fyne.Focusable
	names   map[fyne.CanvasObject]string
	touched map[string]bool
	order   []string
	// revealAll shows every field's message, touched or not; set when a
	// save is tried.
	revealAll bool
	// filling is set while the program itself fills the fields, which
	// touches none of them.
	filling bool
	// filled is the text each column was last filled with: a field shown
	// a little later by its data binding, as the desktop driver does, is
	// not touched by it.
	filled map[string]string
}

// fill runs set, which fills fields in, without marking them touched.
func (fs *fieldSet) fill(set func()) {
	was := fs.filling
	fs.filling = true
	defer func() { fs.filling = was }()
	set()
}

func newFieldSet() *fieldSet {
	return &fieldSet{msgs: map[string]*widget.Label{}, inputs: map[string]fyne.Focusable{},
		names: map[fyne.CanvasObject]string{}, touched: map[string]bool{}, filled: map[string]string{}}
}

// untouched forgets which fields were changed and hides the messages again
// until a field is changed or a save is tried (a new or freshly loaded
// record).
func (fs *fieldSet) untouched() {
	fs.touched = map[string]bool{}
	fs.revealAll = false
}

// watch marks column as touched whenever an input inside o changes, and
// remembers the first input as the column's, to be focused when its value
// is refused, and its label, for the layout file of the end-to-end tests.
func (fs *fieldSet) watch(o fyne.CanvasObject, column, label string) {
	if f, ok := o.(fyne.Focusable); ok && column != "" {
		if _, seen := fs.inputs[column]; !seen {
			fs.inputs[column] = f
		}
	}
	touch := func(changed *func(string)) {
		prev := *changed
		*changed = func(v string) {
			fs.touched[column] = fs.touched[column] || (!fs.filling && v != fs.filled[column])
			if prev != nil {
				prev(v)
			}
		}
	}
	switch w := o.(type) {
	case *entry:
		fs.names[w] = label
		touch(&w.OnChanged)
		return
	case selector:
		fs.names[o] = label
		touch(&w.base().OnChanged)
		return
	}
	for _, c := range children(o) {
		fs.watch(c, column, label)
	}
}

// focusFirst gives the keyboard to the first field on screen with a
// problem in ps; it reports whether there was one.
func (fs *fieldSet) focusFirst(c fyne.Canvas, ps logbook.Problems) bool {
	for _, col := range fs.order {
		if ps.Field(col) != "" {
			if f := fs.inputs[col]; f != nil {
				c.Focus(f)
				return true
			}
		}
	}
	return false
}

// group returns a titled block of fields: label, then the widget with its
// message underneath. column is the CSV column whose problems it shows
// ("" for none).
func (fs *fieldSet) group(title string, rows ...fieldRow) fyne.CanvasObject {
	var objs []fyne.CanvasObject
	for _, r := range rows {
		l := widget.NewLabel(r.label)
		l.Alignment = fyne.TextAlignTrailing
		fs.watch(r.obj, r.column, r.label)
		cell := r.obj
		if r.column != "" {
			m := widget.NewLabel("")
			m.Importance = widget.DangerImportance
			m.Wrapping = fyne.TextWrapWord
			m.Hide()
			fs.msgs[r.column] = m
			fs.order = append(fs.order, r.column)
			cell = container.NewVBox(r.obj, m)
		}
		objs = append(objs, l, cell)
	}
	head := widget.NewLabelWithStyle(title, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	return container.NewVBox(head, container.New(layout.NewFormLayout(), objs...))
}

// fieldRow is one labelled field of a group.
type fieldRow struct {
	label  string
	column string
	obj    fyne.CanvasObject
}

// show writes each field's first problem beside it (for fields touched,
// or all once revealAll is set) and hides the rest; it returns the
// problems that belong to no field on screen.
func (fs *fieldSet) show(ps logbook.Problems) logbook.Problems {
	for _, col := range fs.order {
		m := fs.msgs[col]
		if why := ps.Field(col); why != "" && (fs.revealAll || fs.touched[col]) {
			m.SetText(why)
			m.Show()
		} else {
			m.SetText("")
			m.Hide()
		}
	}
	var rest logbook.Problems
	for _, p := range ps {
		if _, ok := fs.msgs[p.Field]; !ok {
			rest = append(rest, p)
		}
	}
	return rest
}

// message returns the text shown beside a field (tests).
func (fs *fieldSet) message(column string) string {
	if m := fs.msgs[column]; m != nil {
		return m.Text
	}
	return ""
}

// submitEntry returns a one-line entry that calls changed on every edit
// and submit on Enter.
func submitEntry(placeholder string, changed func(), submit func()) *entry {
	e := newEntry(placeholder)
	e.OnChanged = func(string) {
		if changed != nil {
			changed()
		}
	}
	e.OnSubmitted = func(string) {
		if submit != nil {
			submit()
		}
	}
	return e
}
