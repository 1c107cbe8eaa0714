package app

import (
	"reflect"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
)

// entry is a one-line text field that scrolls itself into view when it
// gets the keyboard, so that a form filled with Tab follows the focus.
type entry struct {
	widget.Entry
}

// newEntry returns an empty field showing placeholder until something is
// typed.
func newEntry(placeholder string) *entry {
	e := &entry{}
	e.PlaceHolder = placeholder
	e.ExtendBaseWidget(e)
	return e
}

// FocusGained brings the field into view.
func (e *entry) FocusGained() {
	e.Entry.FocusGained()
	revealFocused()
}

// button is a push button that Enter presses as well as Space, and that
// scrolls itself into view when it gets the keyboard.
type button struct {
	widget.Button
}

// newButton returns a button labelled text that calls tapped.
func newButton(text string, tapped func()) *button {
	b := &button{}
	b.Text = text
	b.OnTapped = tapped
	b.ExtendBaseWidget(b)
	return b
}

// TypedKey presses the button on Enter or Space.
func (b *button) TypedKey(ev *fyne.KeyEvent) {
	switch ev.Name {
	case fyne.KeyReturn, fyne.KeyEnter:
		b.Tapped(nil)
	default:
		b.Button.TypedKey(ev)
	}
}

// FocusGained brings the button into view.
func (b *button) FocusGained() {
	b.Button.FocusGained()
	revealFocused()
}

// revealFocused scrolls every window so that the object holding its
// keyboard focus is in view: the innermost scrolling area around it moves
// just enough to show it whole.
func revealFocused() {
	app := fyne.CurrentApp()
	if app == nil {
		return
	}
	for _, w := range app.Driver().AllWindows() {
		c := w.Canvas()
		f, ok := c.Focused().(fyne.CanvasObject)
		if !ok || f == nil {
			continue
		}
		roots := append([]fyne.CanvasObject{c.Content()}, c.Overlays().List()...)
		for _, r := range roots {
			if path := pathTo(r, f); path != nil {
				revealIn(path, f)
				break
			}
		}
	}
}

// revealIn scrolls the innermost vertical scroll on path so that o shows.
func revealIn(path []fyne.CanvasObject, o fyne.CanvasObject) {
	for i := len(path) - 1; i >= 0; i-- {
		s, ok := path[i].(*container.Scroll)
		if !ok || s.Direction == container.ScrollHorizontalOnly || s.Direction == container.ScrollNone {
			continue
		}
		d := fyne.CurrentApp().Driver()
		top := d.AbsolutePositionForObject(o).Y - d.AbsolutePositionForObject(s).Y
		const margin = 12
		off := s.Offset
		switch {
		case top < 0:
			off.Y += top - margin
		case top+o.Size().Height > s.Size().Height:
			off.Y += top + o.Size().Height - s.Size().Height + margin
		default:
			return
		}
		off.Y = max(0, min(off.Y, s.Content.Size().Height-s.Size().Height))
		s.ScrollToOffset(off)
		return
	}
}

// children returns the objects a screen holds inside o, for the kinds of
// container the screens are built from.
func children(o fyne.CanvasObject) []fyne.CanvasObject {
	switch c := o.(type) {
	case *fyne.Container:
		return c.Objects
	case *container.Scroll:
		return []fyne.CanvasObject{c.Content}
	case *container.AppTabs:
		if t := c.Selected(); t != nil {
			return []fyne.CanvasObject{t.Content}
		}
	case *widget.Card:
		return []fyne.CanvasObject{c.Content}
	case *widget.PopUp:
		return []fyne.CanvasObject{c.Content}
	case *widget.Form:
		var out []fyne.CanvasObject
		for _, it := range c.Items {
			out = append(out, it.Widget)
		}
		return out
	case *container.Split:
		return []fyne.CanvasObject{c.Leading, c.Trailing}
	}
	// Toolkit containers of other kinds (the overlay holding an open
	// drop-down list) keep what they hold in an exported Content field.
	if v := reflect.ValueOf(o); v.Kind() == reflect.Pointer && !v.IsNil() && v.Elem().Kind() == reflect.Struct {
		if f := v.Elem().FieldByName("Content"); f.IsValid() && f.CanInterface() {
			if c, ok := f.Interface().(fyne.CanvasObject); ok && c != nil {
				return []fyne.CanvasObject{c}
			}
		}
	}
	return nil
}

// pathTo returns the objects from root down to target, nil when target is
// not shown under root.
func pathTo(root, target fyne.CanvasObject) []fyne.CanvasObject {
	if root == nil {
		return nil
	}
	if root == target {
		return []fyne.CanvasObject{root}
	}
	if !root.Visible() {
		return nil
	}
	for _, c := range children(root) {
		if p := pathTo(c, target); p != nil {
			return append([]fyne.CanvasObject{root}, p...)
		}
	}
	return nil
}

// cautionBox shows a caution in full-strength text with a warning sign
// and a frame, so that it reads as part of the figures, not as small print.
func cautionBox(text string) fyne.CanvasObject {
	l := widget.NewLabel(text)
	l.Wrapping = fyne.TextWrapWord
	icon := widget.NewIcon(theme.WarningIcon())
	frame := canvas.NewRectangle(theme.Color(theme.ColorNameInputBackground))
	frame.StrokeColor = theme.Color(theme.ColorNameWarning)
	frame.StrokeWidth = 1
	frame.CornerRadius = 4
	return container.NewStack(frame, container.NewBorder(nil, nil, container.NewCenter(icon), nil, l))
}

// columns lays its objects side by side in equal columns when the width
// gives each at least colWidth, and one under another otherwise, so that a
// form uses a wide window and still fits a narrow one. Its minimum width is
// that of its widest object. A change between the two arrangements calls
// onChange (set it to the surrounding scroll's Refresh, which measures the
// new height).
type columns struct {
	colWidth float32
	side     bool
	onChange func()
}

// newColumns returns a container of objs arranged by a columns layout.
func newColumns(colWidth float32, objs ...fyne.CanvasObject) (*fyne.Container, *columns) {
	l := &columns{colWidth: colWidth, side: true}
	return container.New(l, objs...), l
}

// Layout implements fyne.Layout.
func (l *columns) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	pad := theme.Padding()
	n := float32(len(objs))
	side := n > 0 && size.Width >= n*l.colWidth+(n-1)*pad
	if side != l.side {
		l.side = side
		if l.onChange != nil {
			// fyne.Do from the window's own thread queues the call until
			// this layout is done; a goroutine of our own would instead
			// run it beside the window's thread (the headless test
			// driver runs fyne.Do at once, on whichever goroutine calls it).
			fyne.Do(l.onChange)
		}
	}
	if side {
		w := (size.Width - (n-1)*pad) / n
		x := float32(0)
		for _, o := range objs {
			o.Move(fyne.NewPos(x, 0))
			o.Resize(fyne.NewSize(w, size.Height))
			x += w + pad
		}
		return
	}
	y := float32(0)
	for _, o := range objs {
		h := o.MinSize().Height
		o.Move(fyne.NewPos(0, y))
		o.Resize(fyne.NewSize(size.Width, h))
		y += h + pad
	}
}

// MinSize implements fyne.Layout.
func (l *columns) MinSize(objs []fyne.CanvasObject) fyne.Size {
	var w, h, sum float32
	for i, o := range objs {
		m := o.MinSize()
		w = max(w, m.Width)
		h = max(h, m.Height)
		sum += m.Height
		if i > 0 {
			sum += theme.Padding()
		}
	}
	if l.side {
		return fyne.NewSize(w, h)
	}
	return fyne.NewSize(w, sum)
}
