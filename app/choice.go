package app

import (
	"strings"
	"unicode"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
)

// keySelect is a drop-down that is quick from the keyboard: a letter picks
// the next option starting with it, left and right step through the
// options, and Enter calls OnSubmit (the form's save).
type keySelect struct {
	widget.Select
	OnSubmit func()
}

func newKeySelect(options []string, changed func(string)) *keySelect {
	s := &keySelect{}
	s.Options = options
	s.OnChanged = changed
	s.PlaceHolder = "choose…"
	s.ExtendBaseWidget(s)
	return s
}

// TypedKey saves on Enter and otherwise behaves as a drop-down.
func (s *keySelect) TypedKey(e *fyne.KeyEvent) {
	if (e.Name == fyne.KeyReturn || e.Name == fyne.KeyEnter) && s.OnSubmit != nil {
		s.OnSubmit()
		return
	}
	s.Select.TypedKey(e)
}

// TypedRune picks the next option whose first letter or digit is r.
func (s *keySelect) TypedRune(r rune) {
	r = unicode.ToLower(r)
	n := len(s.Options)
	start := s.SelectedIndex()
	for step := 1; step <= n; step++ {
		i := (start + step + n) % n
		o := strings.TrimLeft(strings.ToLower(s.Options[i]), "( ")
		if o != "" && []rune(o)[0] == r {
			s.SetSelectedIndex(i)
			return
		}
	}
}

// notRecorded is the first option of every optional choice.
const notRecorded = "(not recorded)"

// choice is a drop-down over one code set: people pick plain words, the
// program reads and writes the code.
type choice[T ~string] struct {
	*keySelect
	codes []T
	words []string
}

// newChoice makes a choice over codes, labelled by words (the code itself
// where words has none). optional adds a "not recorded" option first.
func newChoice[T ~string](codes []T, words map[T]string, optional bool, changed func()) *choice[T] {
	c := &choice[T]{}
	if optional {
		c.codes = append(c.codes, "")
		c.words = append(c.words, notRecorded)
	}
	for _, code := range codes {
		w := words[code]
		if w == "" {
			w = string(code)
		}
		c.codes = append(c.codes, code)
		c.words = append(c.words, w)
	}
	c.keySelect = newKeySelect(c.words, func(string) {
		if changed != nil {
			changed()
		}
	})
	return c
}

// Value returns the chosen code, "" when nothing or "not recorded" is chosen.
func (c *choice[T]) Value() T {
	i := c.SelectedIndex()
	if i < 0 {
		return ""
	}
	return c.codes[i]
}

// Set chooses code v; "" chooses "not recorded" or clears the choice.
func (c *choice[T]) Set(v T) {
	for i, code := range c.codes {
		if code == v {
			c.SetSelectedIndex(i)
			return
		}
	}
	c.ClearSelected()
}

// yesNoChoice is a yes/no (and optionally "not applicable") drop-down.
type yesNoChoice struct {
	*keySelect
	values []logbook.YesNo
}

func newYesNo(allowNA bool, naWords string, changed func()) *yesNoChoice {
	c := &yesNoChoice{values: []logbook.YesNo{logbook.Unrecorded, logbook.Yes, logbook.No}}
	opts := []string{notRecorded, "Yes", "No"}
	if allowNA {
		c.values = append(c.values, logbook.NotApplicable)
		opts = append(opts, naWords)
	}
	c.keySelect = newKeySelect(opts, func(string) {
		if changed != nil {
			changed()
		}
	})
	return c
}

// Value returns the answer chosen (Unrecorded when none).
func (c *yesNoChoice) Value() logbook.YesNo {
	i := c.SelectedIndex()
	if i < 0 {
		return logbook.Unrecorded
	}
	return c.values[i]
}

// Set chooses answer v.
func (c *yesNoChoice) Set(v logbook.YesNo) {
	for i, x := range c.values {
		if x == v {
			c.SetSelectedIndex(i)
			return
		}
	}
	c.ClearSelected()
}
