package app

import (
	"fmt"
	"strings"
	"time"
	"unicode"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"
)

// keySelect is a drop-down that is quick from the keyboard: a letter picks
// the next option starting with it, left and right step through the
// options, space or the arrow keys open the list, and Enter calls OnSubmit
// (the form's save).
//
// A type that embeds keySelect must register itself with ExtendBaseWidget
// before it is shown (see choice): the drop-down finds its window, redraws
// and lays itself out through the object registered, so it must be the very
// object placed on screen.
type keySelect struct {
	widget.Select
	OnSubmit func()
	// opened is when the list was last opened, so that the layout file
	// can tell whose list is open.
	opened time.Time
}

// Tapped opens the list.
func (s *keySelect) Tapped(ev *fyne.PointEvent) {
	s.opened = time.Now()
	s.Select.Tapped(ev)
}

// newKeySelect returns a keyboard-friendly drop-down over options.
func newKeySelect(options []string, changed func(string)) *keySelect {
	s := &keySelect{}
	s.init(options, changed)
	s.ExtendBaseWidget(s)
	return s
}

// init sets the options, the change handler and the placeholder; it does
// not register the widget.
func (s *keySelect) init(options []string, changed func(string)) {
	s.Options = options
	s.OnChanged = changed
	s.PlaceHolder = "choose…"
}

// selector is every keyboard-friendly drop-down: a keySelect or a type
// that embeds one.
type selector interface {
	fyne.Widget
	base() *keySelect
}

// base returns the drop-down itself (for a type that embeds it, the
// embedded keySelect).
func (s *keySelect) base() *keySelect { return s }

// FocusGained shows the focus and brings the drop-down into view.
func (s *keySelect) FocusGained() {
	s.Select.FocusGained()
	revealFocused()
}

// TypedKey saves on Enter and otherwise behaves as a drop-down.
func (s *keySelect) TypedKey(e *fyne.KeyEvent) {
	if (e.Name == fyne.KeyReturn || e.Name == fyne.KeyEnter) && s.OnSubmit != nil {
		s.OnSubmit()
		return
	}
	if e.Name == fyne.KeySpace || e.Name == fyne.KeyUp || e.Name == fyne.KeyDown {
		s.opened = time.Now()
	}
	s.Select.TypedKey(e)
}

// TypedRune picks the next option whose first letter or digit is r. An
// option in brackets ("(not recorded)", "(no trainee)") is picked by its
// letter only when no other option starts with it, so that "n" means "No"
// and left/right reach the bracketed options.
func (s *keySelect) TypedRune(r rune) {
	r = unicode.ToLower(r)
	n := len(s.Options)
	start := s.SelectedIndex()
	for _, bracketed := range []bool{false, true} {
		for step := 1; step <= n; step++ {
			i := (start + step + n) % n
			o := strings.ToLower(s.Options[i])
			if strings.HasPrefix(o, "(") != bracketed {
				continue
			}
			o = strings.TrimLeft(o, "( ")
			if o != "" && []rune(o)[0] == r {
				s.SetSelectedIndex(i)
				return
			}
		}
	}
}

// notRecorded is the first option of every optional choice.
const notRecorded = "(not recorded)"

// choice is a drop-down over one code set: people pick plain words, the
// program reads and writes the code. The zero value of T means "not
// recorded".
type choice[T comparable] struct {
	keySelect
	codes []T
	words []string
}

// newChoice makes a choice over codes, labelled by words (the code itself
// where words has none). optional adds a "not recorded" option first.
func newChoice[T comparable](codes []T, words map[T]string, optional bool, changed func()) *choice[T] {
	zero := ""
	if optional {
		zero = notRecorded
	}
	return newChoiceZero(codes, words, zero, changed)
}

// newChoiceZero makes a choice over codes, labelled by words; zeroWords,
// when not empty, is a first option standing for the zero code ("(not
// recorded)", "(no trainee)").
func newChoiceZero[T comparable](codes []T, words map[T]string, zeroWords string, changed func()) *choice[T] {
	c := &choice[T]{}
	c.offer(codes, words, zeroWords)
	c.init(c.words, func(string) {
		if changed != nil {
			changed()
		}
	})
	c.ExtendBaseWidget(c)
	return c
}

// offer sets the codes and their words, without touching the drop-down.
func (c *choice[T]) offer(codes []T, words map[T]string, zeroWords string) {
	var zero T
	c.codes, c.words = nil, nil
	if zeroWords != "" {
		c.codes = append(c.codes, zero)
		c.words = append(c.words, zeroWords)
	}
	for _, code := range codes {
		w, ok := words[code]
		if !ok || w == "" {
			w = fmt.Sprint(code)
		}
		c.codes = append(c.codes, code)
		c.words = append(c.words, w)
	}
}

// setCodes offers other codes (the roster's people), keeping the code
// chosen when it is still offered.
func (c *choice[T]) setCodes(codes []T, words map[T]string, zeroWords string) {
	v := c.Value()
	c.offer(codes, words, zeroWords)
	c.SetOptions(c.words)
	c.Set(v)
}

// wordsOf returns the option's words for code v, "" when no option has it.
func (c *choice[T]) wordsOf(v T) string {
	for i, code := range c.codes {
		if code == v {
			return c.words[i]
		}
	}
	return ""
}

// codeOf returns the code of the option worded w, the zero value when no
// option is.
func (c *choice[T]) codeOf(w string) T {
	for i, words := range c.words {
		if words == w {
			return c.codes[i]
		}
	}
	var zero T
	return zero
}

// Value returns the chosen code, the zero value when nothing or "not
// recorded" is chosen.
func (c *choice[T]) Value() T {
	i := c.SelectedIndex()
	if i < 0 {
		var zero T
		return zero
	}
	return c.codes[i]
}

// Set chooses code v; the zero value chooses "not recorded" or clears the
// choice.
func (c *choice[T]) Set(v T) {
	for i, code := range c.codes {
		if code == v {
			c.SetSelectedIndex(i)
			return
		}
	}
	c.ClearSelected()
}
