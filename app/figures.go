package app

import (
	"context"
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/surveillance"
	"polypledger/workspace"
)

// figuresScreen is the "Audit figures" screen: choose a period, a
// standard and whose figures (the unit, an endoscopist or a trainee), and
// see each indicator as a row (figureRow) grouped as the report groups
// them, the charts the PDF report draws, the optical diagnosis and
// eligibility figures and the interval figures, each with its caution.
type figuresScreen struct {
	u     *ui
	stale bool

	period   *periodPicker
	standard *keySelect
	whose    *keySelect
	whoIDs   []workspace.Population
	show     *button
	message  *widget.Label
	status   *widget.Label
	body     *fyne.Container
	scroll   *container.Scroll
	content  fyne.CanvasObject

	// shownFor is what the figures on screen were computed for.
	shownFor string
	// last holds the figures of the last pass, for every population, so
	// that choosing whose figures redraws without reading the cases again.
	last    audit.Figures
	lastFor string
	// busy is set while figures are being worked out; again asks for
	// another run once they are, when the choices changed meanwhile.
	busy, again bool
	// rows holds the rows on screen by indicator id (tests read them).
	rows map[string]*figureRow
}

func newFiguresScreen(u *ui) *figuresScreen {
	s := &figuresScreen{u: u, stale: true, rows: map[string]*figureRow{}}
	s.period = newPeriodPicker(u)
	s.standard = newKeySelect(nil, nil)
	// Another population is drawn from the figures already worked out.
	s.whose = newKeySelect(nil, func(string) {
		if s.lastFor != "" {
			s.compute()
		}
	})
	s.show = newButton("Show the figures", s.compute)
	s.show.Importance = widget.HighImportance
	s.message = widget.NewLabel("")
	s.message.Wrapping = fyne.TextWrapWord
	s.status = widget.NewLabel("")
	s.status.Wrapping = fyne.TextWrapWord
	s.status.TextStyle.Bold = true
	s.status.Hide()
	s.body = container.NewVBox()
	s.refreshChoices()
	u.name(s.standard, "Standard")
	u.name(s.whose, "Whose figures")
	controls := container.NewVBox(
		container.NewHBox(widget.NewLabel("Period"), s.period.content),
		container.NewBorder(nil, nil, widget.NewLabel("Standard"), nil, s.standard),
		container.NewBorder(nil, nil, widget.NewLabel("Whose figures"), s.show, s.whose))
	s.scroll = container.NewVScroll(container.NewPadded(s.body))
	s.content = container.NewBorder(container.NewVBox(controls, s.message, s.status), nil, nil, nil, s.scroll)
	return s
}

// refreshChoices offers the profiles and the roster.
func (s *figuresScreen) refreshChoices() {
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
	changed := s.whose.OnChanged
	s.whose.OnChanged = nil
	s.whose.SetOptions(opts)
	if who < 0 || who >= len(opts) {
		who = 0
	}
	s.whose.SetSelectedIndex(who)
	s.whose.OnChanged = changed
}

// shown computes the figures the first time the screen is opened, and again
// when records changed since.
func (s *figuresScreen) shown() {
	if s.stale {
		s.compute()
	}
}

// population returns whose figures are chosen.
func (s *figuresScreen) population() workspace.Population {
	if i := s.whose.SelectedIndex(); i >= 0 && i < len(s.whoIDs) {
		return s.whoIDs[i]
	}
	return workspace.Population{}
}

// compute reads the period once off the UI thread and shows the result.
// Asked again while it runs, it runs once more afterwards.
func (s *figuresScreen) compute() {
	if s.busy {
		s.again = true
		return
	}
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
	ws := &workspace.Audit{Store: s.u.st, Settings: s.u.settings, Profile: prof}
	req := workspace.Request{From: from, To: to, Whose: pop, Now: s.u.now()}
	g, _ := ws.Guideline("")
	today := s.u.today()
	// One pass serves the unit and every endoscopist; a trainee's figures
	// come from a pass over the trainee's own cases.
	key := logbook.FormatDate(from) + " " + logbook.FormatDate(to) + " " + prof.ID + " " + string(g) + " " + pop.TraineeID
	reuse := !s.stale && key == s.lastFor
	cached := s.last
	s.stale = false
	s.busy = true
	s.show.Disable()
	var figs audit.Figures
	var charts []chartImage
	s.u.jobs.run("Working out the figures", func(ctx context.Context, progress progressFunc) error {
		if reuse {
			figs = cached
		} else {
			var err error
			figs, err = ws.Figures(ctx, req, func(n int) {
				progress(-1, countOf(n, "case", "cases")+" read")
			})
			if err != nil {
				return err
			}
		}
		progress(-1, "Drawing the charts")
		charts = figureCharts(figs, prof, pop, today)
		return ctx.Err()
	}, func(err error) {
		s.busy = false
		s.show.Enable()
		if s.again {
			s.again = false
			defer s.compute()
		}
		if err != nil {
			s.stale = true
			if cancelled(err) {
				s.message.SetText("Stopped before the figures were ready.")
			} else {
				s.message.SetText("The figures could not be worked out: " + err.Error())
			}
			return
		}
		s.last, s.lastFor = figs, key
		s.display(figs, prof, pop, charts)
	})
}

// display lays out the rows, charts and panels, from the top.
func (s *figuresScreen) display(figs audit.Figures, prof *audit.Profile, pop workspace.Population, charts []chartImage) {
	s.body.RemoveAll()
	s.rows = map[string]*figureRow{}
	s.scroll.ScrollToTop()
	who := s.whose.Selected
	period := figs.Metrics.From + " to " + figs.Metrics.To
	s.shownFor = fmt.Sprintf("%s, %s, %s", who, period, prof.Title)
	from, to, _ := s.period.read()
	unfinished := audit.PeriodUnfinished(to, s.u.today())
	s.status.Hide()
	if unfinished {
		s.status.SetText(fmt.Sprintf("This period ends on %s, after today: cases are still being added, so every figure may change and every verdict is provisional. "+
			"Choose %q for a period that is over.", logbook.FormatDate(to), quickQuarter))
		s.status.Show()
	}
	inds, ok := pop.Indicators(figs)
	cases := figs.Completeness.Procedures
	if !ok || cases == 0 {
		what := "no procedures"
		if pop.TraineeID != "" {
			what = "no procedures with this trainee holding the scope"
		}
		s.message.SetText(fmt.Sprintf("%s: %s between %s and %s.", who, what, logbook.FormatDate(from), logbook.FormatDate(to)))
		hint := widget.NewLabel(fmt.Sprintf("Choose %q to take in every case recorded, or enter cases under Enter a case (Alt+2) "+
			"or import a file of procedures (File ▸ Import records, Ctrl+I).", quickAllCases))
		hint.Wrapping = fyne.TextWrapWord
		s.body.Add(hint)
		return
	}
	whose := "procedures of the unit in the period"
	if pop.TraineeID != "" {
		whose = "procedures with the trainee holding the scope in the period"
	}
	s.message.SetText(fmt.Sprintf("%s  ·  %s %s", s.shownFor, groupedCount(cases), whose))
	s.body.Add(cautionBox(audit.AuditCaution()))
	s.body.Add(legend())

	// The optical-diagnosis and surveillance figures have panels of their
	// own, with their cautions; the rest are listed by catalogue group.
	var main, optical, adherence []audit.Indicator
	for _, ind := range inds {
		switch def, _ := audit.Lookup(ind.ID); def.Group {
		case audit.GroupSurveillance:
			adherence = append(adherence, ind)
		case audit.GroupOptical:
			optical = append(optical, ind)
		default:
			main = append(main, ind)
		}
	}
	s.addGroups(main, unfinished)
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
		s.addRows(optical, unfinished)
		detail := figs.Detail(pop.OperatorID)
		if detail.Optical != nil {
			s.body.Add(discardPanel(detail.Optical.Discard))
		}
		s.body.Add(cautionBox(audit.DiscardCaution()))
		s.body.Add(heading("Surveillance intervals under " + figs.Guideline.Title()))
		s.addRows(adherence, unfinished)
		s.body.Add(cautionBox(surveillance.IntervalCaution(figs.Guideline)))
	}
}

// addGroups adds the indicators under the catalogue's group headings, as
// the report lists them.
func (s *figuresScreen) addGroups(inds []audit.Indicator, unfinished bool) {
	for _, g := range audit.Grouped(inds) {
		s.body.Add(heading(g.Title))
		s.addRows(g.Indicators, unfinished)
	}
}

// addRows adds one row per indicator with a line between rows.
func (s *figuresScreen) addRows(inds []audit.Indicator, unfinished bool) {
	for i, ind := range inds {
		if i > 0 {
			s.body.Add(widget.NewSeparator())
		}
		r := newFigureRow(ind, unfinished)
		s.rows[ind.ID] = r
		s.body.Add(r.content)
	}
}

// legend explains the rows' marks in words.
func legend() fyne.CanvasObject {
	l := widget.NewLabel("Each row: the value with its 95% interval; on the bar, the dot is the value, the shaded span the " +
		"interval and the upright tick the target (a short tick the aim). Verdict shapes: filled circle meets the target, " +
		"downward triangle below it, open circle too few cases to judge, square reported without a target.")
	l.Wrapping = fyne.TextWrapWord
	return l
}

func heading(text string) fyne.CanvasObject {
	return widget.NewLabelWithStyle(text, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
}

// groupedCount prints a count with thousands separated.
func groupedCount(n int) string { return audit.GroupThousands(int64(n)) }

// countOf prints a count and the word that matches it: "1 case",
// "4,000 cases".
func countOf(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return groupedCount(n) + " " + many
}

// discardPanel lists each eligibility threshold in words.
func discardPanel(e audit.DiscardFigures) fyne.CanvasObject {
	box := container.NewVBox()
	box.Add(para(fmt.Sprintf("Rule set: %s. Local minimum: %d cases behind a figure.", e.RuleSet, e.MinCases)))
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
		line := para(fmt.Sprintf("%s – %s: %s %s from %s – %s",
			strategy, c.Rule, audit.FormatValue(c.Figure), audit.FormatInterval(c.Figure), audit.FormatCount(c.Figure), verdict))
		if !c.EnoughCases {
			line.Importance = widget.LowImportance
		}
		box.Add(line)
	}
	box.Add(para(fmt.Sprintf("Diminutive polyps that could have been discarded: %d; left in place: %d; pathology specimens that would have been saved: %d.",
		e.DiscardEligible, e.LeaveEligible, e.SpecimensSaved)))
	box.Add(para(fmt.Sprintf("Patients whose interval would change under optical diagnosis: %d compared, %d shorter, %d longer (the unsafe direction), %d outside the guideline.",
		e.IntervalsCompared, e.IntervalShorter, e.IntervalLonger, e.IntervalOutside)))
	return box
}

// para is a paragraph of text that wraps to its width.
func para(text string) *widget.Label {
	l := widget.NewLabel(text)
	l.Wrapping = fyne.TextWrapWord
	return l
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
func (u *ui) offerStandards(pick *keySelect) {
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
