package app

import (
	"image/color"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
)

// shownText is the text a drop-down draws on screen (its renderer's label),
// which is what a person sees, not merely what it holds.
func shownText(t *testing.T, o fyne.Widget) string {
	t.Helper()
	for _, c := range test.WidgetRenderer(o).Objects() {
		if rt, ok := c.(*widget.RichText); ok {
			return rt.String()
		}
	}
	t.Fatal("the drop-down draws no text")
	return ""
}

// shownBackground is the colour of a drop-down's background, which turns to
// the theme's focus colour while the drop-down has the keyboard.
func shownBackground(o fyne.Widget) color.Color {
	return test.WidgetRenderer(o).Objects()[0].(*canvas.Rectangle).FillColor
}

// TestDropDownsOpenShowAndFollowTheWindow clicks every kind of drop-down the
// screens use in a window, chooses with the mouse and with the keyboard, and
// checks what is drawn: the list opens (a click used to end the program),
// the chosen words are shown, focus is visible and the drop-down takes the
// width its column gives it when the window grows.
func TestDropDownsOpenShowAndFollowTheWindow(t *testing.T) {
	a := test.NewTempApp(t)
	kinds := []struct {
		name   string
		make   func() (fyne.Widget, func() string)
		letter rune   // a key that picks an option
		want   string // the words shown after that key
	}{
		{"coded choice", func() (fyne.Widget, func() string) {
			c := newChoice(logbook.Sexes, sexWords, false, nil)
			return c, func() string { return string(c.Value()) }
		}, 'm', "Male"},
		{"optional coded choice", func() (fyne.Widget, func() string) {
			c := newChoice(logbook.Extents, extentWords, true, nil)
			return c, func() string { return string(c.Value()) }
		}, 't', "Terminal ileum"},
		{"yes/no", func() (fyne.Widget, func() string) {
			f := yesNoField("Rectal retroversion", "retroversion", "Not possible", formHooks{},
				func(p *logbook.Procedure) *logbook.YesNo { return &p.Retroversion })
			c := f.input.(*choice[logbook.YesNo])
			return c, func() string { return c.Value().String() }
		}, 'n', "No"},
		{"plain", func() (fyne.Widget, func() string) {
			s := newKeySelect([]string{"E01 – Dr One", "E02 – Dr Two"}, nil)
			return s, func() string { return s.Selected }
		}, 'e', "E01 – Dr One"},
	}
	for _, k := range kinds {
		t.Run(k.name, func(t *testing.T) {
			o, value := k.make()
			w := a.NewWindow("drop-down")
			defer w.Close()
			// A two-column grid, as the forms use, so that the width follows the window.
			w.SetContent(container.NewGridWithColumns(2, widget.NewLabel("field"), o))
			w.Resize(fyne.NewSize(400, 120))

			if got := shownText(t, o); got != "choose…" {
				t.Errorf("before any choice it shows %q", got)
			}
			test.Tap(o.(fyne.Tappable))
			if w.Canvas().Overlays().Top() == nil {
				t.Fatal("a click did not open the list")
			}
			w.Canvas().Overlays().Top().Hide()
			w.Canvas().Overlays().Remove(w.Canvas().Overlays().Top())

			// The click gave it the keyboard, and that shows.
			if w.Canvas().Focused() != o.(fyne.Focusable) {
				t.Fatal("a click did not give the drop-down the keyboard")
			}
			if got, want := shownBackground(o), theme.Color(theme.ColorNameFocus); got != want {
				t.Errorf("focused drop-down drawn with %v, want the focus colour %v", got, want)
			}
			test.Type(w.Canvas().Focused(), string(k.letter))
			if got := shownText(t, o); got != k.want {
				t.Errorf("after the key %q it shows %q, want %q (holds %q)", k.letter, got, k.want, value())
			}
			w.Canvas().Unfocus()
			if got := shownBackground(o); got == theme.Color(theme.ColorNameFocus) {
				t.Error("the focus colour stays after the focus left")
			}

			before := o.Size().Width
			w.Resize(fyne.NewSize(800, 120))
			if after := o.Size().Width; after <= before {
				t.Errorf("width %v after the window grew, %v before", after, before)
			}
			if bg := test.WidgetRenderer(o).Objects()[0]; bg.Size().Width != o.Size().Width {
				t.Errorf("drawn %v wide in a %v wide drop-down", bg.Size().Width, o.Size().Width)
			}
		})
	}
}
