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
// that logbook.Problems.Field finds it).
type fieldSet struct {
	msgs  map[string]*widget.Label
	order []string
}

func newFieldSet() *fieldSet { return &fieldSet{msgs: map[string]*widget.Label{}} }

// group returns a titled block of fields: label, then the widget with its
// message underneath. column is the CSV column whose problems it shows
// ("" for none).
func (fs *fieldSet) group(title string, rows ...fieldRow) fyne.CanvasObject {
	var objs []fyne.CanvasObject
	for _, r := range rows {
		l := widget.NewLabel(r.label)
		l.Alignment = fyne.TextAlignTrailing
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

// show writes each field's first problem beside it and hides the rest; it
// returns the problems that belong to no field on screen.
func (fs *fieldSet) show(ps logbook.Problems) logbook.Problems {
	for _, col := range fs.order {
		m := fs.msgs[col]
		if why := ps.Field(col); why != "" {
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

// submitEntry returns a one-line entry that calls submit on Enter.
func submitEntry(placeholder string, changed func(), submit func()) *widget.Entry {
	e := widget.NewEntry()
	e.SetPlaceHolder(placeholder)
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
