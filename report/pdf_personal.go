package report

import (
	"cmp"
	"fmt"
	"slices"
	"strconv"

	"polypledger/audit"
	"polypledger/logbook"
)

// anonymise returns a copy of a personal report's input in which the
// subject keeps their id and every other operator is "peer 1" … "peer n",
// numbered by procedure volume (largest first, ties by a stable order), so
// that the numbering tells nothing the funnel plots do not already show.
// Everything that could name another operator is dropped: their names,
// their optical-diagnosis and adherence detail, the unit's lists of
// individual procedures (which carry operator ids) and the trainees.
func anonymise(in ReportInput) ReportInput {
	subject := in.SubjectID
	type vol struct {
		id string
		n  float64
	}
	var peers []vol
	for _, o := range in.Data.Metrics.Operators {
		if o.OperatorID == subject {
			continue
		}
		v, _ := audit.Find(o.Indicators, "volume")
		peers = append(peers, vol{o.OperatorID, v.Numerator})
	}
	slices.SortFunc(peers, func(a, b vol) int {
		if c := cmp.Compare(b.n, a.n); c != 0 {
			return c
		}
		return cmp.Compare(a.id, b.id)
	})
	label := map[string]string{subject: subject}
	order := map[string]int{subject: 0}
	for i, p := range peers {
		label[p.id] = "peer " + strconv.Itoa(i+1)
		order[p.id] = i + 1
	}
	relabel := func(ops []audit.OperatorResult) []audit.OperatorResult {
		out := make([]audit.OperatorResult, 0, len(ops))
		for _, o := range ops {
			l, ok := label[o.OperatorID]
			if !ok {
				continue
			}
			out = append(out, audit.OperatorResult{OperatorID: l, Indicators: o.Indicators})
		}
		slices.SortStableFunc(out, func(a, b audit.OperatorResult) int {
			return cmp.Compare(orderOf(order, label, a.OperatorID), orderOf(order, label, b.OperatorID))
		})
		return out
	}
	src := in.Data
	var d audit.Figures
	d.Metrics = src.Metrics
	d.Metrics.Operators = relabel(src.Metrics.Operators)
	d.Trends = audit.TrendsResult{Standard: src.Trends.Standard}
	for _, q := range src.Trends.Quarters {
		m := q.Metrics
		m.Operators = relabel(q.Metrics.Operators)
		d.Trends.Quarters = append(d.Trends.Quarters, audit.QuarterResult{Quarter: q.Quarter, Metrics: m})
	}
	for _, s := range src.Trends.RollingADR {
		if s.OperatorID == "" || s.OperatorID == subject {
			d.Trends.RollingADR = append(d.Trends.RollingADR, s)
		}
	}
	for _, p := range src.Details {
		switch p.OperatorID {
		case "":
			u := audit.PopulationDetail{}
			if p.Optical != nil {
				o := *p.Optical
				o.PIVI1.Disagreements = nil
				u.Optical = &o
			}
			d.Details = append(d.Details, u)
		case subject:
			d.Details = append(d.Details, p)
		}
	}
	d.Completeness = src.Completeness
	d.OperatorCompleteness = map[string]audit.Completeness{}
	if c, ok := src.OperatorCompleteness[subject]; ok {
		d.OperatorCompleteness[subject] = c
	}
	in.Data = d
	names := in.Names
	in.Names = map[string]string{}
	if n := names[subject]; n != "" {
		in.Names[subject] = n
	}
	return in
}

// orderOf returns the sort position of a relabelled operator.
func orderOf(order map[string]int, label map[string]string, l string) int {
	for id, lab := range label {
		if lab == l {
			return order[id]
		}
	}
	return len(order)
}

// subjectResult returns the subject's indicators, if they have any
// procedure in the period.
func (d *doc) subjectResult() (audit.OperatorResult, bool) {
	for _, o := range d.in.Data.Metrics.Operators {
		if o.OperatorID == d.in.SubjectID {
			return o, true
		}
	}
	return audit.OperatorResult{}, false
}

// personalReport lays out one endoscopist's own report.
func (d *doc) personalReport() {
	d.cover()
	me, ok := d.subjectResult()
	if !ok {
		d.noProcedures("by this endoscopist")
		return
	}
	d.reserveContents()
	d.newPage("Your figures: every indicator", true)
	d.note("Your value beside the whole unit's. Verdicts in words and by shape: ● meets the target, ▼ below it, " +
		"○ too few cases to judge, ■ reported without a target. Other endoscopists appear in this report only as " +
		"anonymous peers.")
	unit := d.in.Data.Metrics.Unit.Indicators
	cols := []column{{"Indicator", 48, "L"}, {"Cases", 22, "R"}, {"Value", 18, "R"}, {"95% interval", 26, "R"},
		{"Unit", 17, "R"}, {"Target", 17, "R"}, {"Verdict", 32, "L"}}
	d.periodNote()
	d.compact = true
	d.table(cols, d.groupedRows(me.Indicators, func(ind audit.Indicator) []string {
		u, _ := audit.Find(unit, ind.ID)
		return []string{audit.IndicatorTitle(ind.ID), audit.FormatCases(ind), notedValue(ind), audit.FormatInterval(ind), audit.FormatValue(u), audit.FormatTarget(ind), d.verdictText(ind)}
	}))
	d.indicatorNotes(me.Indicators)
	d.compact = false
	d.newPage("Your trends by quarter", true)
	for _, id := range trendIDs() {
		d.trend(me.OperatorID, "you ("+me.OperatorID+")", id, 72)
	}
	d.funnels(me.OperatorID)
	d.aidComparison()
	d.optical()
	d.adherence()
}

// trainee returns the subject's progress, nil when they held the scope for
// no case in the period.
func (d *doc) trainee() *audit.TraineeResult {
	for i := range d.in.Data.Trainees {
		if d.in.Data.Trainees[i].TraineeID == d.in.SubjectID {
			return &d.in.Data.Trainees[i]
		}
	}
	return nil
}

// traineeReport lays out a trainee's logbook.
func (d *doc) traineeReport() {
	d.cover()
	tr := d.trainee()
	if tr == nil {
		d.noProcedures("performed by this trainee")
		return
	}
	d.newPage("Cases by supervision level", true)
	periodStart := d.in.From.Format("2006-01")
	if tr.CasesBefore > 0 {
		d.note(fmt.Sprintf("From the trainee's first case, so that the running total counts every case: %s cases before the period "+
			"and %s in it.", audit.GroupThousands(int64(tr.CasesBefore)), audit.GroupThousands(int64(tr.CasesInPeriod))))
	}
	var rows [][]string
	group := ""
	for _, m := range tr.Months {
		g := "In the period"
		if !d.in.From.IsZero() && m.Month < periodStart {
			g = "Before the period"
		}
		if g != group && tr.CasesBefore > 0 {
			rows = append(rows, []string{groupMark + g})
			group = g
		}
		rows = append(rows, []string{m.Month, strconv.Itoa(m.Independent), strconv.Itoa(m.SupervisedHandsOn),
			strconv.Itoa(m.SupervisedObserved), strconv.Itoa(m.Unrecorded), strconv.Itoa(m.Total), audit.GroupThousands(int64(m.Cumulative))})
	}
	d.table([]column{{"Month", 30, "L"}, {logbook.Independent.Words(), 25, "R"}, {logbook.SupervisedHandsOn.Words(), 28, "R"},
		{logbook.SupervisedObserved.Words(), 28, "R"}, {logbook.Supervision("").Words(), 25, "R"}, {"Total", 20, "R"}, {"Running total", 24, "R"}}, rows)
	d.chart(80, func(o ChartOptions) ([]byte, error) { return TraineeCasesChart(tr.Months, o) }, ChartOptions{})

	d.newPage("Learning curve: unassisted caecal intubation (CUSUM)", true)
	c := tr.CUSUM
	d.note("Each case where the trainee reached the caecum without the trainer taking over subtracts s; each case where " +
		"they did not adds 1 − s. Cases without the outcome recorded are left out. The curve starts at the trainee's first " +
		"case, before the period where there are earlier cases, and case numbers count from there. " + c.Note)
	if len(c.Points) == 0 {
		d.para("No case up to the end of this period records whether the trainee reached the caecum unassisted, so no learning curve can be drawn.")
	} else {
		d.chart(95, func(o ChartOptions) ([]byte, error) { return CUSUMChart(c, o) }, ChartOptions{})
	}
	at := func(n int) string {
		if n == 0 {
			return "not reached by the end of the period"
		}
		return fmt.Sprintf("at case %d (%s), counted from the first case", n, c.Points[n-1].Date)
	}
	d.keyValues([][2]string{
		{"Acceptable failure rate p0", fmt.Sprintf("%.2f", c.Params.P0)},
		{"Unacceptable failure rate p1", fmt.Sprintf("%.2f", c.Params.P1)},
		{"Error rates α and β", fmt.Sprintf("α = %.2f, β = %.2f (a local choice: no colonoscopy paper fixes them)", c.Params.Alpha, c.Params.Beta)},
		{"Step s", fmt.Sprintf("%.4f  (P = ln(p1/p0), Q = ln((1−p0)/(1−p1)), s = Q/(P+Q))", c.S)},
		{"Decision limits", fmt.Sprintf("h0 = %.4f (crossing below −h0 suggests acceptable), h1 = %.4f (crossing above +h1 suggests unacceptable)", c.H0, c.H1)},
		{"Cases with an outcome", strconv.Itoa(len(c.Points))},
		{"Crossed −h0", at(c.AcceptableAt)},
		{"Crossed +h1", at(c.UnacceptableAt)},
	}, 55)

	d.subheading("The trainee's own indicators", 40)
	d.note("Over the cases the trainee performed (held the scope), whoever was the accountable endoscopist.")
	d.periodNote()
	d.table(indicatorColumns(), d.withNotes(tr.Indicators, d.indicatorRow))
	d.indicatorNotes(tr.Indicators)
}
