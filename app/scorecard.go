package app

import (
	"context"
	"fmt"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/report"
	"polypledger/workspace"
)

// scorecard is the "Scorecards" screen: choose a period, a standard and
// whose figures (the unit, an endoscopist or a trainee), and see each
// indicator as a tile with its value, interval, target and verdict in
// words, the charts the PDF report draws, the optical diagnosis and
// eligibility panel and the interval figures, each with its caution.
type scorecard struct {
	u     *ui
	stale bool

	period   *periodPicker
	standard *widget.Select
	whose    *widget.Select
	whoIDs   []workspace.Population
	show     *widget.Button
	message  *widget.Label
	body     *fyne.Container
	content  fyne.CanvasObject

	// shownFor is what the figures on screen were computed for.
	shownFor string
	// tiles holds the tiles on screen by indicator id (tests read them).
	tiles map[string]*tile
}

func newScorecard(u *ui) *scorecard {
	s := &scorecard{u: u, stale: true, tiles: map[string]*tile{}}
	s.period = newPeriodPicker(u)
	s.standard = widget.NewSelect(nil, nil)
	s.whose = widget.NewSelect(nil, nil)
	s.show = widget.NewButton("Show the figures", s.compute)
	s.show.Importance = widget.HighImportance
	s.message = widget.NewLabel("")
	s.message.Wrapping = fyne.TextWrapWord
	s.body = container.NewVBox()
	s.refreshChoices()
	controls := container.NewVBox(container.NewHBox(widget.NewLabel("Period"), s.period.content), container.NewHBox(widget.NewLabel("Standard"), sized(s.standard, 330),
		widget.NewLabel("Whose figures"), sized(s.whose, 300), s.show))
	s.content = container.NewBorder(container.NewVBox(controls, s.message), nil, nil, nil, container.NewVScroll(s.body))
	return s
}

// refreshChoices offers the profiles and the roster.
func (s *scorecard) refreshChoices() {
	s.u.offerStandards(s.standard)

	opts := []string{"The whole unit"}
	s.whoIDs = []workspace.Population{{}}
	for _, r := range s.u.roster {
		if r.Role == logbook.RoleEndoscopist {
			opts = append(opts, s.u.rosterLabel(r.ID))
			s.whoIDs = append(s.whoIDs, workspace.Population{OperatorID: r.ID})
		}
	}
	for _, r := range s.u.roster {
		if r.Role == logbook.RoleTrainee {
			opts = append(opts, "Trainee "+s.u.rosterLabel(r.ID))
			s.whoIDs = append(s.whoIDs, workspace.Population{TraineeID: r.ID})
		}
	}
	who := s.whose.SelectedIndex()
	s.whose.SetOptions(opts)
	if who < 0 || who >= len(opts) {
		who = 0
	}
	s.whose.SetSelectedIndex(who)
}

// shown computes the figures the first time the screen is opened, and again
// when records changed since.
func (s *scorecard) shown() {
	if s.stale {
		s.compute()
	}
}

// population returns whose figures are chosen.
func (s *scorecard) population() workspace.Population {
	if i := s.whose.SelectedIndex(); i >= 0 && i < len(s.whoIDs) {
		return s.whoIDs[i]
	}
	return workspace.Population{}
}

// compute reads the period once off the UI thread and shows the result.
func (s *scorecard) compute() {
	from, to, err := s.period.read()
	if err != nil {
		s.message.SetText(err.Error())
		return
	}
	i := s.standard.SelectedIndex()
	if i < 0 || i >= len(s.u.profiles) {
		s.message.SetText("Choose a standard.")
		return
	}
	prof := s.u.profiles[i]
	pop := s.population()
	audit := &workspace.Audit{Store: s.u.st, Settings: s.u.settings, Profile: prof}
	g, _ := audit.Guideline("")
	s.stale = false
	s.show.Disable()
	var figs workspace.Figures
	var charts []chartImage
	s.u.jobs.run("Working out the figures", func(ctx context.Context, progress progressFunc) error {
		var err error
		figs, err = audit.ComputeFigures(ctx, from, to, g, func(n int) {
			progress(-1, fmt.Sprintf("%d cases read", n))
		})
		if err != nil {
			return err
		}
		progress(-1, "Drawing the charts")
		charts = scorecardCharts(figs, prof, pop)
		return ctx.Err()
	}, func(err error) {
		s.show.Enable()
		if err != nil {
			s.stale = true
			if cancelled(err) {
				s.message.SetText("Stopped before the figures were ready.")
			} else {
				s.message.SetText("The figures could not be worked out: " + err.Error())
			}
			return
		}
		s.display(figs, prof, pop, charts)
	})
}

// indicatorsOf returns the indicators of a population from the figures.
func indicatorsOf(figs workspace.Figures, pop workspace.Population) ([]report.Indicator, bool) {
	m := figs.Data.Metrics
	switch {
	case pop.TraineeID != "":
		for _, t := range figs.Data.Trainees {
			if t.TraineeID == pop.TraineeID {
				return t.Indicators, true
			}
		}
		return nil, false
	case pop.OperatorID != "":
		for _, o := range m.Operators {
			if o.OperatorID == pop.OperatorID {
				return o.Indicators, true
			}
		}
		return nil, false
	}
	return m.Unit.Indicators, true
}

// opticalIDs are shown in the optical panel rather than with the tiles.
func isOpticalID(id string) bool {
	return strings.HasPrefix(id, "pivi") || strings.HasPrefix(id, "optical_") || strings.HasPrefix(id, "aid_") ||
		id == "high_confidence_rate" || strings.HasPrefix(id, "esge2022_")
}

// display lays out the tiles, charts and panels.
func (s *scorecard) display(figs workspace.Figures, prof *report.Profile, pop workspace.Population, charts []chartImage) {
	s.body.RemoveAll()
	s.tiles = map[string]*tile{}
	who := s.whose.Selected
	s.shownFor = fmt.Sprintf("%s, %s to %s, %s", who, figs.Data.Metrics.From, figs.Data.Metrics.To, prof.Title)
	inds, ok := indicatorsOf(figs, pop)
	if !ok || figs.Cases == 0 {
		s.message.SetText(fmt.Sprintf("%s: no procedures in this period.", who))
		return
	}
	s.message.SetText(fmt.Sprintf("%s  ·  %d procedures of the unit read  ·  %s", s.shownFor, figs.Cases, report.AuditCaution()))

	var main, optical []fyne.CanvasObject
	var adherence *report.Indicator
	for _, ind := range inds {
		t := newTile(ind)
		s.tiles[ind.ID] = t
		switch {
		case ind.ID == "interval_adherence":
			ind := ind
			adherence = &ind
		case isOpticalID(ind.ID):
			optical = append(optical, t.content)
		default:
			main = append(main, t.content)
		}
	}
	s.body.Add(heading("Quality indicators"))
	s.body.Add(container.NewGridWrap(tileSize, main...))
	if len(charts) > 0 {
		s.body.Add(heading("Charts"))
		var imgs []fyne.CanvasObject
		for _, c := range charts {
			imgs = append(imgs, c.object())
		}
		s.body.Add(container.NewGridWrap(fyne.NewSize(620, 350), imgs...))
	}
	if pop.TraineeID == "" {
		s.body.Add(heading("Optical diagnosis and resect-and-discard eligibility"))
		if len(optical) > 0 {
			s.body.Add(container.NewGridWrap(tileSize, optical...))
		}
		detail := figs.Data.Detail(pop.OperatorID)
		if detail.Optical != nil {
			s.body.Add(eligibilityPanel(detail.Optical.Eligibility))
		}
		s.body.Add(caution(report.EligibilityCaution()))
		s.body.Add(heading("Surveillance intervals under " + figs.Guideline.Title()))
		if adherence != nil {
			s.body.Add(container.NewGridWrap(tileSize, s.tiles["interval_adherence"].content))
		}
		s.body.Add(caution(report.IntervalCaution(figs.Guideline)))
	}
}

func heading(text string) fyne.CanvasObject {
	return widget.NewLabelWithStyle(text, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
}

func caution(text string) fyne.CanvasObject {
	l := widget.NewLabel(text)
	l.Wrapping = fyne.TextWrapWord
	l.Importance = widget.WarningImportance
	return l
}

// eligibilityPanel lists each eligibility threshold in words.
func eligibilityPanel(e report.EligibilityFigures) fyne.CanvasObject {
	box := container.NewVBox()
	box.Add(widget.NewLabel(fmt.Sprintf("Rule set: %s. Local minimum: %d cases behind a figure.", e.RuleSet, e.MinCases)))
	for _, c := range e.Checks {
		verdict := "not met"
		switch {
		case !c.EnoughCases:
			verdict = fmt.Sprintf("too few cases to judge (%d of the %d needed)", c.Cases, c.MinCases)
		case c.MetOnLowerLimit:
			verdict = "met, and the lower 95% limit clears it too"
		case c.MetOnValue:
			verdict = "met on the figure, but the lower 95% limit falls short"
		}
		strategy := strings.ReplaceAll(c.Strategy, "_", " ")
		line := widget.NewLabel(fmt.Sprintf("%s – %s: %s %s from %s cases – %s",
			strategy, c.Rule, report.FormatValue(c.Figure), report.FormatInterval(c.Figure), report.FormatCases(c.Figure), verdict))
		line.Wrapping = fyne.TextWrapWord
		if !c.EnoughCases {
			line.Importance = widget.LowImportance
		}
		box.Add(line)
	}
	box.Add(widget.NewLabel(fmt.Sprintf("Diminutive polyps that could have been discarded: %d; left in place: %d; pathology specimens that would have been saved: %d.",
		e.DiscardEligible, e.LeaveEligible, e.SpecimensSaved)))
	box.Add(widget.NewLabel(fmt.Sprintf("Patients whose interval would change under optical diagnosis: %d compared, %d shorter, %d longer (the unsafe direction), %d outside the guideline.",
		e.IntervalsCompared, e.IntervalShorter, e.IntervalLonger, e.IntervalOutside)))
	for _, o := range box.Objects {
		if l, ok := o.(*widget.Label); ok {
			l.Wrapping = fyne.TextWrapWord
		}
	}
	return box
}

// periodPicker is a pair of dates with quick choices.
type periodPicker struct {
	from, to *widget.Entry
	content  fyne.CanvasObject
}

// newPeriodPicker starts at the twelve months up to the newest case.
func newPeriodPicker(u *ui) *periodPicker {
	p := &periodPicker{from: widget.NewEntry(), to: widget.NewEntry()}
	p.from.SetPlaceHolder("from YYYY-MM-DD")
	p.to.SetPlaceHolder("to YYYY-MM-DD")
	_, last, err := u.st.Span(u.ctx)
	if err != nil || last.IsZero() {
		last = u.today()
	}
	p.setYearTo(last)
	quick := widget.NewSelect([]string{"Last 12 months", "Last quarter", "This calendar year", "Everything"}, nil)
	quick.PlaceHolder = "quick choice…"
	quick.OnChanged = func(v string) {
		first, last, _ := u.st.Span(u.ctx)
		if last.IsZero() {
			last = u.today()
		}
		switch v {
		case "Last 12 months":
			p.setYearTo(last)
		case "Last quarter":
			q := time.Date(last.Year(), time.Month((int(last.Month())-1)/3*3+1), 1, 0, 0, 0, 0, time.UTC)
			p.from.SetText(logbook.FormatDate(q))
			p.to.SetText(logbook.FormatDate(q.AddDate(0, 3, -1)))
		case "This calendar year":
			p.from.SetText(fmt.Sprintf("%d-01-01", last.Year()))
			p.to.SetText(fmt.Sprintf("%d-12-31", last.Year()))
		case "Everything":
			p.from.SetText(logbook.FormatDate(first))
			p.to.SetText(logbook.FormatDate(last))
		}
	}
	p.content = container.NewHBox(sized(p.from, 120), widget.NewLabel("to"), sized(p.to, 120), sized(quick, 170))
	return p
}

func (p *periodPicker) setYearTo(last time.Time) {
	p.to.SetText(logbook.FormatDate(last))
	p.from.SetText(logbook.FormatDate(last.AddDate(-1, 0, 1)))
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

// chartImage is one chart drawn as PNG.
type chartImage struct {
	name string
	png  []byte
	err  error
}

func (c chartImage) object() fyne.CanvasObject {
	if c.err != nil {
		l := widget.NewLabel(c.name + ": the chart could not be drawn: " + c.err.Error())
		l.Wrapping = fyne.TextWrapWord
		return l
	}
	img := canvas.NewImageFromResource(fyne.NewStaticResource(c.name+".png", c.png))
	img.FillMode = canvas.ImageFillContain
	img.SetMinSize(fyne.NewSize(600, 340))
	return img
}

// offerStandards fills a picker with the standard profiles' titles, keeping
// the current choice and starting from the unit's default standard.
func (u *ui) offerStandards(pick *widget.Select) {
	var titles []string
	def := 0
	for i, p := range u.profiles {
		titles = append(titles, p.Title)
		if p.ID == u.settings.DefaultStandard {
			def = i
		}
	}
	sel := pick.SelectedIndex()
	pick.SetOptions(titles)
	if sel < 0 {
		sel = def
	}
	pick.SetSelectedIndex(sel)
}
