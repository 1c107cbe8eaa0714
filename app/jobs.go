package app

import (
	"context"
	"errors"
	"sync"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
)

// jobs runs work off the UI thread. Long work shows a progress window with
// a Cancel button that cancels its context; every UI change from the work
// goes through fyne.Do. Tests wait for all work with wait.
type jobs struct {
	win fyne.Window
	wg  sync.WaitGroup
}

// progressFunc reports how far a job has come: a fraction 0–1 (below 0 when
// unknown) and a line of text.
type progressFunc func(fraction float64, text string)

// background runs fn on its own goroutine and then done (on the UI thread).
// It shows nothing; the case list loads its pages this way.
func (j *jobs) background(fn func() error, done func(error)) {
	j.wg.Add(1)
	go func() {
		defer j.wg.Done()
		err := fn()
		fyne.DoAndWait(func() {
			if done != nil {
				done(err)
			}
		})
	}()
}

// run starts long work with a progress window titled title. work receives a
// context that Cancel cancels, and a function to report progress. done is
// called on the UI thread once the window has closed; a cancelled job's
// error satisfies errors.Is(err, context.Canceled).
func (j *jobs) run(title string, work func(ctx context.Context, report progressFunc) error, done func(error)) {
	ctx, cancel := context.WithCancel(context.Background())
	bar := widget.NewProgressBar()
	spinner := widget.NewProgressBarInfinite()
	bar.Hide()
	text := widget.NewLabel("Starting…")
	stop := widget.NewButton("Cancel", nil)
	stop.OnTapped = func() {
		cancel()
		stop.Disable()
		text.SetText("Stopping…")
	}
	d := dialog.NewCustomWithoutButtons(title, container.NewVBox(text, bar, spinner, stop), j.win)
	d.Resize(fyne.NewSize(420, 160))
	d.Show()
	report := func(f float64, line string) {
		fyne.Do(func() {
			if f >= 0 {
				spinner.Hide()
				spinner.Stop()
				bar.Show()
				bar.SetValue(f)
			}
			if line != "" {
				text.SetText(line)
			}
		})
	}
	j.wg.Add(1)
	go func() {
		defer j.wg.Done()
		err := work(ctx, report)
		if err == nil && ctx.Err() != nil {
			err = ctx.Err()
		}
		cancel()
		fyne.DoAndWait(func() {
			spinner.Stop()
			d.Hide()
			if done != nil {
				done(err)
			}
		})
	}()
}

// wait blocks until every job started so far has finished (tests).
func (j *jobs) wait() { j.wg.Wait() }

// cancelled reports whether err says the person cancelled the work.
func cancelled(err error) bool { return errors.Is(err, context.Canceled) }
