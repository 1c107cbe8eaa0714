package app

import (
	"fmt"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
)

// periodPicker is a pair of dates with quick choices. The quick choices
// mean whole periods that are over: the last complete quarter, year or
// twelve months before today (an unfinished period's figures are
// provisional), and everything recorded.
type periodPicker struct {
	u        *ui
	from, to *entry
	quick    *keySelect
	content  fyne.CanvasObject
}

// Quick period choices.
const (
	quickYear12   = "Last 12 complete months"
	quickQuarter  = "Last complete quarter"
	quickYear     = "Last complete calendar year"
	quickSoFar    = "This quarter so far"
	quickAllCases = "Everything recorded"
)

// newPeriodPicker starts at the last twelve complete months.
func newPeriodPicker(u *ui) *periodPicker {
	p := &periodPicker{u: u, from: newEntry("from YYYY-MM-DD"), to: newEntry("to YYYY-MM-DD")}
	p.quick = newKeySelect([]string{quickYear12, quickQuarter, quickYear, quickSoFar, quickAllCases}, func(v string) { p.choose(v) })
	p.quick.PlaceHolder = "quick choice…"
	p.choose(quickYear12)
	p.content = container.NewHBox(sized(p.from, 125), widget.NewLabel("to"), sized(p.to, 125), sized(p.quick, 230))
	return p
}

// completePeriod returns the period a quick choice means on the civil
// date today: whole months, quarters and years that ended before today.
func completePeriod(choice string, today time.Time) (from, to time.Time, ok bool) {
	month := time.Date(today.Year(), today.Month(), 1, 0, 0, 0, 0, time.UTC)
	quarter := time.Date(today.Year(), time.Month((int(today.Month())-1)/3*3+1), 1, 0, 0, 0, 0, time.UTC)
	switch choice {
	case quickYear12:
		return month.AddDate(-1, 0, 0), month.AddDate(0, 0, -1), true
	case quickQuarter:
		return quarter.AddDate(0, -3, 0), quarter.AddDate(0, 0, -1), true
	case quickYear:
		return time.Date(today.Year()-1, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(today.Year()-1, 12, 31, 0, 0, 0, 0, time.UTC), true
	case quickSoFar:
		return quarter, quarter.AddDate(0, 3, -1), true
	}
	return time.Time{}, time.Time{}, false
}

// choose fills the dates from a quick choice.
func (p *periodPicker) choose(v string) {
	from, to, ok := completePeriod(v, p.u.today())
	if !ok && v == quickAllCases {
		first, last, err := p.u.st.Span(p.u.ctx)
		if err != nil || first.IsZero() {
			first, last = p.u.today(), p.u.today()
		}
		from, to, ok = first, last, true
	}
	if ok {
		p.from.SetText(logbook.FormatDate(from))
		p.to.SetText(logbook.FormatDate(to))
	}
}

// read returns the chosen period.
func (p *periodPicker) read() (from, to time.Time, err error) {
	from, err = logbook.ParseDate(strings.TrimSpace(p.from.Text))
	if err == nil {
		to, err = logbook.ParseDate(strings.TrimSpace(p.to.Text))
	}
	if err != nil {
		return from, to, fmt.Errorf("period: %v", err)
	}
	if from.IsZero() || to.IsZero() {
		return from, to, fmt.Errorf("period: give both the first and the last day")
	}
	if to.Before(from) {
		return from, to, fmt.Errorf("period: the last day %s is before the first %s", logbook.FormatDate(to), logbook.FormatDate(from))
	}
	return from, to, nil
}

// sized gives an object a fixed minimum width inside a row.
func sized(o fyne.CanvasObject, w float32) fyne.CanvasObject {
	return container.NewGridWrap(fyne.NewSize(w, o.MinSize().Height), o)
}
