package app

import (
	"encoding/json"
	"fmt"
	"os"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"
)

// The end-to-end tests drive the real program with mouse and keyboard
// events, and find what to click through a layout file: when the
// environment variable POLYPLEDGER_LAYOUT_FILE names a file, the program
// writes there, each time it is asked (see askForLayout), where every
// button, field, drop-down, check box and label of the window is and what
// it shows. Nothing is written otherwise.

// layoutItem is one thing on screen, in the window's pixels.
type layoutItem struct {
	// Kind is button, entry, select, check, label or option (a line of an
	// open drop-down list).
	Kind string `json:"kind"`
	// Name is what a person would call it: a button's or check box's
	// words, the label beside a field or drop-down, a label's text, an
	// option's words.
	Name string `json:"name"`
	// Text is what a field holds or a drop-down shows.
	Text     string   `json:"text,omitempty"`
	Options  []string `json:"options,omitempty"`
	X        float32  `json:"x"`
	Y        float32  `json:"y"`
	W        float32  `json:"w"`
	H        float32  `json:"h"`
	Disabled bool     `json:"disabled,omitempty"`
	Focused  bool     `json:"focused,omitempty"`
}

// layoutDump is the whole layout file.
type layoutDump struct {
	// Seq counts the files written, so that a reader can wait for a new
	// one.
	Seq    int          `json:"seq"`
	Title  string       `json:"title"`
	Width  float32      `json:"width"`
	Height float32      `json:"height"`
	Items  []layoutItem `json:"items"`
}

// layoutWriter writes the layout file of one window.
type layoutWriter struct {
	u    *ui
	path string
	seq  int
}

// write records the window as it is now; it runs on the UI thread.
func (lw *layoutWriter) write() {
	c := lw.u.win.Canvas()
	scale := c.Scale()
	d := fyne.CurrentApp().Driver()
	lw.seq++
	dump := layoutDump{Seq: lw.seq, Title: lw.u.win.Title(), Width: c.Size().Width * scale, Height: c.Size().Height * scale}
	names := lw.u.fieldNames()
	focused := c.Focused()
	add := func(o fyne.CanvasObject, it layoutItem) {
		pos := d.AbsolutePositionForObject(o)
		it.X, it.Y = pos.X*scale, pos.Y*scale
		it.W, it.H = o.Size().Width*scale, o.Size().Height*scale
		if f, ok := o.(fyne.Focusable); ok && focused == f {
			it.Focused = true
		}
		if dis, ok := o.(fyne.Disableable); ok {
			it.Disabled = dis.Disabled()
		}
		dump.Items = append(dump.Items, it)
	}
	type openList struct{ menu *widget.PopUpMenu }
	var lists []openList
	var selects []selector
	var walk func(o fyne.CanvasObject, formLabel string)
	walk = func(o fyne.CanvasObject, formLabel string) {
		if o == nil || !o.Visible() {
			return
		}
		name := names[o]
		if name == "" {
			name = formLabel
		}
		switch w := o.(type) {
		case *button:
			add(o, layoutItem{Kind: "button", Name: w.Text})
		case *widget.Button:
			add(o, layoutItem{Kind: "button", Name: w.Text})
		case *entry:
			if name == "" {
				name = w.PlaceHolder
			}
			add(o, layoutItem{Kind: "entry", Name: name, Text: w.Text})
		case *widget.Entry:
			if name == "" {
				name = w.PlaceHolder
			}
			add(o, layoutItem{Kind: "entry", Name: name, Text: w.Text})
		case selector:
			s := w.base()
			if name == "" {
				name = s.PlaceHolder
			}
			selects = append(selects, w)
			add(o, layoutItem{Kind: "select", Name: name, Text: s.Selected, Options: s.Options})
		case *widget.Check:
			add(o, layoutItem{Kind: "check", Name: w.Text, Text: fmt.Sprint(w.Checked)})
		case *widget.Label:
			if w.Text != "" {
				add(o, layoutItem{Kind: "label", Name: w.Text})
			}
		case *widget.Form:
			for _, it := range w.Items {
				walk(it.Widget, it.Text)
			}
			return
		case *widget.PopUpMenu:
			lists = append(lists, openList{w})
			return
		}
		for _, c := range children(o) {
			walk(c, "")
		}
	}
	walk(c.Content(), "")
	for _, o := range c.Overlays().List() {
		walk(o, "")
	}
	// An open drop-down list is that of the drop-down opened last; its
	// lines are that one's options.
	var opts []string
	var last time.Time
	for _, s := range selects {
		if k := s.base(); k.opened.After(last) {
			last, opts = k.opened, k.Options
		}
	}
	for _, l := range lists {
		for i, o := range l.menu.Items {
			it := layoutItem{Kind: "option"}
			if i < len(opts) {
				it.Name = opts[i]
			}
			add(o, it)
		}
	}
	b, err := json.MarshalIndent(dump, "", " ")
	if err == nil {
		tmp := lw.path + ".partial"
		if err = os.WriteFile(tmp, b, 0o600); err == nil {
			err = os.Rename(tmp, lw.path)
		}
	}
	if err != nil {
		fyne.LogError("layout file "+lw.path, err)
	}
}

// fieldNames maps each field and drop-down of the open forms to the label
// beside it.
func (u *ui) fieldNames() map[fyne.CanvasObject]string {
	out := map[fyne.CanvasObject]string{}
	sets := []*fieldSet{}
	if u.form != nil {
		sets = append(sets, u.form.fields)
		if u.form.editor != nil {
			sets = append(sets, u.form.editor.fields)
		}
	}
	for _, fs := range sets {
		for o, n := range fs.names {
			out[o] = n
		}
	}
	for o, n := range u.names {
		out[o] = n
	}
	return out
}

// name records what a field or drop-down outside a form is called, for
// the layout file.
func (u *ui) name(o fyne.CanvasObject, n string) {
	if u.names == nil {
		u.names = map[fyne.CanvasObject]string{}
	}
	u.names[o] = n
}

// startLayoutFile arranges for the layout file to be written on request
// when POLYPLEDGER_LAYOUT_FILE is set.
func (u *ui) startLayoutFile() {
	path := os.Getenv("POLYPLEDGER_LAYOUT_FILE")
	if path == "" {
		return
	}
	lw := &layoutWriter{u: u, path: path}
	askForLayout(func() { fyne.Do(lw.write) })
}
