package report

import (
	"fmt"
	"polypledger/audit"
	"polypledger/stats"
	"polypledger/surveillance"
	"slices"
	"strconv"
	"strings"
)

// groupedRows returns the rows of an indicator table under the catalogue's
// group headings (audit.Grouped), with each indicator's note row.
func (d *doc) groupedRows(inds []audit.Indicator, row func(audit.Indicator) []string) [][]string {
	var out [][]string
	for _, g := range audit.Grouped(inds) {
		out = append(out, []string{groupMark + g.Title})
		out = append(out, d.withNotes(g.Indicators, row)...)
	}
	return out
}

// empty reports whether the period held no procedure.
func (d *doc) empty() bool { return d.in.Data.Completeness.Procedures == 0 }

// noProcedures prints the page of a report over an empty period.
func (d *doc) noProcedures(what string) {
	d.newPage("No procedures in this period", true)
	d.para(fmt.Sprintf("There are no procedures %s between %s and %s, so no indicator, chart or verdict can be given. "+
		"Check the period asked for, or whether the records have been imported.", what, formatDay(d.in.From), formatDay(d.in.To)))
}

// unitReport lays out the unit audit.
func (d *doc) unitReport() {
	d.cover()
	if d.empty() {
		d.noProcedures("recorded for the unit")
		return
	}
	d.reserveContents()
	d.summary()
	d.operatorOverview()
	d.unitTrends()
	d.funnels("")
	for _, o := range d.in.Data.Metrics.Operators {
		d.operatorPage(o)
	}
	d.aidComparison()
	d.optical()
	d.adherence()
}

// cover prints the first page: what the report covers and how complete
// its records are.
func (d *doc) cover() {
	in := d.in
	d.pdf.AddPage()
	d.pdf.Bookmark("Cover", 0, -1)
	d.pdf.SetY(30)
	d.pdf.SetFont("go", "B", 22)
	d.pdf.MultiCell(contentW, 10, d.title, "", "L", false)
	d.pdf.SetFont("go", "", 14)
	d.pdf.MultiCell(contentW, 7, in.UnitName, "", "L", false)
	d.pdf.Ln(6)
	rows := [][2]string{}
	switch in.Kind {
	case PersonalReport:
		rows = append(rows, [2]string{"Endoscopist", d.name(in.SubjectID)})
	case TraineeReport:
		rows = append(rows, [2]string{"Trainee", d.name(in.SubjectID)})
	}
	period := d.periodText() + " (both days included)"
	if d.unfinished {
		period += ". Not over on the day this report was made: its figures will change, and verdicts are provisional"
	}
	rows = append(rows,
		[2]string{"Period", period},
		[2]string{"Standard", in.Profile.Title + " (" + in.Profile.ID + ")"},
		[2]string{"Source", in.Profile.Source},
		[2]string{"Surveillance guideline", in.Guideline.Title() + " (" + string(in.Guideline) + ")"},
		[2]string{"Optical diagnosis rules", discardRulesText(in.Discard)},
		[2]string{"Generated on", formatDay(in.GeneratedOn)},
	)
	c := in.Data.Completeness
	inds := in.Data.Metrics.Unit.Indicators
	switch in.Kind {
	case PersonalReport:
		c = in.Data.OperatorCompleteness[in.SubjectID]
		if me, ok := d.subjectResult(); ok {
			inds = me.Indicators
		} else {
			inds = nil
		}
		rows = append(rows, [2]string{"Records", fmt.Sprintf("%s procedures and %s lesions by this endoscopist in the period "+
			"(the unit's: %s procedures)", audit.GroupThousands(int64(c.Procedures)), audit.GroupThousands(int64(c.Lesions)),
			audit.GroupThousands(int64(in.Data.Completeness.Procedures)))})
	case TraineeReport:
		before := 0
		if tr := d.trainee(); tr != nil {
			before = tr.CasesBefore
		}
		rows = append(rows, [2]string{"Records", fmt.Sprintf("%s procedures and %s lesions with the trainee holding the scope in the period; "+
			"%s earlier procedures since the trainee's first case count in the learning curve", audit.GroupThousands(int64(c.Procedures)),
			audit.GroupThousands(int64(c.Lesions)), audit.GroupThousands(int64(before)))})
	default:
		rows = append(rows, [2]string{"Records", fmt.Sprintf("%s procedures, %s lesions", audit.GroupThousands(int64(c.Procedures)), audit.GroupThousands(int64(c.Lesions)))})
		rows = append(rows, [2]string{"Endoscopists", strconv.Itoa(len(in.Data.Metrics.Operators)) + " with at least one procedure in the period"})
	}
	d.keyValues(rows, 42)

	d.subheading("Data completeness", 60)
	pct := func(k, n int) string {
		if n == 0 {
			return "–"
		}
		return fmt.Sprintf("%.1f%%", 100*float64(k)/float64(n))
	}
	line := func(field string, k, n int, of string) []string {
		return []string{field, strconv.Itoa(k), fmt.Sprintf("%d %s", n, of), pct(k, n)}
	}
	complete := 0
	if ind, ok := audit.Find(inds, "cir"); ok {
		complete = int(ind.Numerator)
	}
	if in.Kind == TraineeReport {
		complete = -1
	}
	tbl := [][]string{
		line("Age", c.MissingAge, c.Procedures, "procedures"),
		line("Sex (not recorded or unknown)", c.MissingSex, c.Procedures, "procedures"),
		line("Indication", c.MissingIndication, c.Procedures, "procedures"),
		line("Extent reached", c.MissingExtent, c.Procedures, "procedures"),
		line("Boston bowel preparation score (any segment)", c.MissingBBPS, c.Procedures, "procedures"),
		line("Comfort score", c.MissingComfort, c.Procedures, "procedures"),
		line("Computer-aided detection used or not", c.MissingAidUse, c.Procedures, "procedures"),
		line("Recommended surveillance interval", c.MissingRecommended, c.Procedures, "procedures"),
	}
	if complete >= 0 {
		tbl = append(tbl,
			line("Caecal photo (complete procedures)", c.MissingCaecalPhoto, complete, "complete"),
			line("Withdrawal time (complete procedures)", c.MissingWithdrawal, complete, "complete"))
	}
	tbl = append(tbl,
		line("Lesion size", c.MissingSize, c.Lesions, "lesions"),
		line("Optical class", c.MissingOpticalClass, c.Lesions, "lesions"),
		line("Histology still pending (lesions sent)", c.PendingLesions, c.Lesions, "lesions"),
		line("Procedures awaiting any histology", c.PendingProcedures, c.Procedures, "procedures"),
	)
	d.table([]column{{"Field not recorded", 90, "L"}, {"Missing", 22, "R"}, {"Of", 40, "R"}, {"Share", 28, "R"}}, tbl)
	if adr, ok := audit.Find(inds, "adr"); ok && adr.AwaitingHistology > 0 && in.Kind != TraineeReport {
		d.note(fmt.Sprintf("%d detection-eligible procedures still await histology. Until it is reported they count as "+
			"having no adenoma, so detection rates may rise once results arrive.", adr.AwaitingHistology))
	}
	d.pdf.Ln(2)
	d.boxed(audit.AuditCaution() + " " + surveillance.IntervalCaution(in.Guideline))
}

// discardRulesText describes the unit's optical-diagnosis settings.
func discardRulesText(s audit.DiscardSettings) string {
	s = s.WithDefaults()
	rules := "PIVI thresholds (ASGE 2011)"
	if s.RuleSet == audit.RuleSetESGE2022 {
		rules = "ESGE 2022 competence standards"
	}
	return fmt.Sprintf("%s; at least %d cases before a figure is judged (a local choice)", rules, s.MinCases)
}

// summary prints every unit indicator on one page.
func (d *doc) summary() {
	d.newPage("Unit summary: every indicator", true)
	d.note("Rates are percentages with their 95% interval in brackets. Verdicts are given in words and by shape: " +
		"● meets the target, ▼ below it, ○ too few cases to judge, ■ reported without a target.")
	d.periodNote()
	d.compact = true
	d.table(indicatorColumns(), d.groupedRows(d.in.Data.Metrics.Unit.Indicators, d.indicatorRow))
	d.indicatorNotes(d.in.Data.Metrics.Unit.Indicators)
	d.compact = false
}

// overviewIDs are the columns of the endoscopist overview.
func overviewIDs() []string {
	return []string{"adr", "cir", "prep_adequate", "withdrawal_negative", "pivi1_agreement", "pivi2_npv", "interval_adherence"}
}

// operatorOverview prints one line per endoscopist with the key figures.
func (d *doc) operatorOverview() {
	d.newPage("Endoscopists at a glance", true)
	d.periodNote()
	d.note("Key figures per endoscopist: value and verdict mark (● meets, ▼ below, ○ too few cases to judge). " +
		"Each endoscopist's page gives cases, intervals and targets.")
	cols := []column{{"Endoscopist", 40, "L"}, {"Procedures", 17, "R"}}
	for _, id := range overviewIDs() {
		def, _ := audit.Lookup(id)
		cols = append(cols, column{def.Short, 17.5, "R"})
	}
	var rows [][]string
	line := func(label string, inds []audit.Indicator) []string {
		r := []string{label, ""}
		if v, ok := audit.Find(inds, "volume"); ok {
			r[1] = fmt.Sprintf("%.0f", v.Numerator)
		}
		for _, id := range overviewIDs() {
			ind, _ := audit.Find(inds, id)
			r = append(r, d.shortVerdict(ind))
		}
		return r
	}
	rows = append(rows, line("Whole unit", d.in.Data.Metrics.Unit.Indicators))
	forest := []ForestRow{{Label: "unit"}}
	forest[0].Indicator, _ = audit.Find(d.in.Data.Metrics.Unit.Indicators, "adr")
	for _, o := range d.in.Data.Metrics.Operators {
		rows = append(rows, line(d.name(o.OperatorID), o.Indicators))
		adr, _ := audit.Find(o.Indicators, "adr")
		forest = append(forest, ForestRow{Label: o.OperatorID, Indicator: adr})
	}
	d.table(cols, rows)
	d.overviewNotes(overviewIDs())
	fd := ForestData{IndicatorID: "adr", Rows: forest}
	if t := forest[0].Indicator.Target; t != nil {
		fd.Reference, fd.ReferenceLabel = t, "standard's target"
	}
	d.chart(min(150, 30+6.5*float64(len(forest))), func(o ChartOptions) ([]byte, error) { return ForestChart(fd, o) },
		ChartOptions{Title: "Adenoma detection rate by endoscopist"})
}

// funnelData builds the funnel of an indicator with the profile's target.
func (d *doc) funnelData(id string) (FunnelData, error) {
	f, err := audit.NewFunnel(d.in.Data.Metrics, id)
	if err != nil {
		return FunnelData{}, err
	}
	fd := FunnelData{Funnel: f}
	if t := d.in.Profile.Target(id); t != nil {
		if t.Minimum != nil {
			fd.Target = t.Minimum
		} else {
			fd.Target = t.Maximum
		}
	}
	return fd, nil
}

// funnels prints the funnel plots of FunnelIDs, with the endoscopists
// outside the limits named under each; highlight marks one point.
func (d *doc) funnels(highlight string) {
	d.newPage("Funnel plots", true)
	d.note("Each point is one endoscopist: the rate against the number of cases behind it. The solid line is the unit's " +
		"pooled rate; dashed and dotted curves are the 95% and 99.8% exact binomial control limits around it " +
		"(Spiegelhalter 2005). A point outside the 99.8% limits is unlikely to differ by chance alone; it is a prompt to look " +
		"at the records, not a verdict.")
	for _, id := range audit.FunnelIDs() {
		fd, err := d.funnelData(id)
		if err != nil {
			d.subheading(audit.IndicatorTitle(id), 10)
			d.note("No funnel plot: " + err.Error() + ".")
			continue
		}
		d.space(100)
		d.chart(92, func(o ChartOptions) ([]byte, error) { return FunnelChart(fd, o) }, ChartOptions{Highlight: highlight})
		var out []string
		for _, p := range fd.Funnel.Points {
			if p.Outside95 != stats.SideWithin {
				s := fmt.Sprintf("%s %s the 95%% limit (%d/%d, %.1f%%", p.OperatorID, p.Outside95, p.K, p.N, 100*p.Rate)
				if p.Outside998 != stats.SideWithin {
					s += fmt.Sprintf("; also %s the 99.8%% limit", p.Outside998)
				}
				out = append(out, s+")")
			}
		}
		if len(out) == 0 {
			d.note("Every endoscopist lies within the 95% limits.")
		} else {
			d.note("Outside the limits: " + strings.Join(out, "; ") + ".")
		}
	}
}

// scorecardIDs are the figures on an endoscopist's page.
func scorecardIDs() []string {
	return []string{"adr", "adr_male", "adr_female", "ssldr", "aadr", "apc", "cir", "cir_adjusted", "caecal_photo",
		"prep_adequate", "withdrawal_negative", "retroversion", "retrieval", "comfort_discomfort", "perforation", "bleeding",
		"volume", "pivi1_agreement", "pivi2_npv", "high_confidence_rate", "interval_adherence"}
}

// scorecard prints an operator's figures beside the unit's.
func (d *doc) scorecard(inds []audit.Indicator, ids []string) {
	unit := d.in.Data.Metrics.Unit.Indicators
	cols := []column{{"Indicator", 48, "L"}, {"Cases", 22, "R"}, {"Value", 18, "R"}, {"95% interval", 26, "R"},
		{"Unit", 17, "R"}, {"Target", 17, "R"}, {"Verdict", 32, "L"}}
	chosen := pick(inds, ids)
	d.table(cols, d.withNotes(chosen, func(ind audit.Indicator) []string {
		u, _ := audit.Find(unit, ind.ID)
		return []string{audit.IndicatorTitle(ind.ID), audit.FormatCases(ind), notedValue(ind), audit.FormatInterval(ind), audit.FormatValue(u), audit.FormatTarget(ind), d.verdictText(ind)}
	}))
	d.indicatorNotes(chosen)
}

// quarterSeries returns an indicator quarter by quarter for an operator
// ("" for the unit).
func (d *doc) quarterSeries(operatorID, id string) []TrendPoint {
	var out []TrendPoint
	for _, q := range d.in.Data.Trends.Quarters {
		inds := q.Metrics.Unit.Indicators
		if operatorID != "" {
			inds = nil
			for _, o := range q.Metrics.Operators {
				if o.OperatorID == operatorID {
					inds = o.Indicators
				}
			}
		}
		ind, ok := audit.Find(inds, id)
		if !ok {
			ind = audit.Indicator{ID: id, Status: audit.TooFew}
		}
		out = append(out, TrendPoint{Label: q.Quarter, Indicator: ind, Provisional: audit.ProvisionalNote(ind, q.Unfinished(d.today))})
	}
	return out
}

// trend charts an indicator by quarter for an operator against the unit.
func (d *doc) trend(operatorID, label, id string, h float64) {
	t := TrendData{IndicatorID: id, Name: label, Points: d.quarterSeries(operatorID, id),
		ComparisonName: "whole unit", Comparison: d.quarterSeries("", id)}
	d.chart(h, func(o ChartOptions) ([]byte, error) { return TrendChart(t, o) }, ChartOptions{})
}

// trendIDs are the indicators followed quarter by quarter.
func trendIDs() []string { return []string{"adr", "cir", "withdrawal_negative"} }

// unitTrends prints the unit's key figures quarter by quarter.
func (d *doc) unitTrends() {
	d.newPage("Unit trends by quarter", true)
	d.note("Each quarter's figure with its 95% interval; the verdict is told by the mark's shape. An open diamond marks a " +
		"quarter whose figure may still change: not over yet, or with a twentieth or more of its cases still awaiting histology " +
		"(which count as no adenoma until reported).")
	for _, id := range trendIDs() {
		t := TrendData{IndicatorID: id, Name: "whole unit", Points: d.quarterSeries("", id)}
		d.chart(72, func(o ChartOptions) ([]byte, error) { return TrendChart(t, o) }, ChartOptions{})
	}
}

// operatorPage prints one endoscopist's scorecard, quarterly ADR and place
// on the ADR funnel.
func (d *doc) operatorPage(o audit.OperatorResult) {
	d.newPage("Endoscopist "+d.name(o.OperatorID), true)
	d.periodNote()
	d.scorecard(o.Indicators, scorecardIDs())
	d.trend(o.OperatorID, o.OperatorID, "adr", 66)
	if fd, err := d.funnelData("adr"); err == nil {
		d.chart(72, func(c ChartOptions) ([]byte, error) { return FunnelChart(fd, c) },
			ChartOptions{Highlight: o.OperatorID, Title: "Position on the ADR funnel (" + o.OperatorID + " enlarged, bold label)"})
	}
}

// aidRows are the detection-aid comparison rows of the unit and operators.
func (d *doc) aidComparison() {
	d.newPage("Computer-aided detection: ADR with and without", true)
	d.note("ADR over detection-eligible procedures split by whether computer-aided detection was used; procedures with " +
		"its use not recorded are in neither group. The difference has Newcombe's hybrid score interval (method 10). " +
		"Endoscopists choose when to use the aid, so the groups are not randomised and the difference is not its effect.")
	cols := []column{{"Population", 48, "L"}, {"With aid", 40, "R"}, {"Without aid", 40, "R"}, {"Difference [95% interval]", 52, "R"}}
	var rows [][]string
	var forest []ForestRow
	for _, c := range audit.AidComparisons(d.in.Data.Metrics) {
		label := "Whole unit"
		if c.OperatorID != "" {
			label = d.name(c.OperatorID)
		}
		diff := audit.FormatValue(c.Difference)
		if iv := audit.FormatInterval(c.Difference); iv != "" {
			diff += " " + iv
		}
		rows = append(rows, []string{label, aidCell(c.With), aidCell(c.Without), diff})
		short := "unit"
		if c.OperatorID != "" {
			short = c.OperatorID
		}
		forest = append(forest, ForestRow{Label: short, Indicator: c.Difference})
	}
	d.table(cols, rows)
	zero := 0.0
	fd := ForestData{IndicatorID: "adr_aid_difference", Rows: forest, Reference: &zero, ReferenceLabel: "no difference"}
	d.chart(min(150, 30+6.5*float64(len(forest))), func(o ChartOptions) ([]byte, error) { return ForestChart(fd, o) }, ChartOptions{})
}

func aidCell(ind audit.Indicator) string {
	if ind.Denominator == 0 {
		return "no procedures"
	}
	return audit.FormatCases(ind) + "  " + audit.FormatValue(ind)
}

// opticalPopulations are the populations of the optical section: the unit
// then every operator with its detail.
func (d *doc) opticalPopulations() []audit.PopulationDetail {
	var out []audit.PopulationDetail
	for _, p := range d.in.Data.Details {
		if p.Optical != nil {
			out = append(out, p)
		}
	}
	return out
}

func (d *doc) populationLabel(id string) string {
	if id == "" {
		return "Whole unit"
	}
	return d.name(id)
}

// optical prints the optical-diagnosis audit: tables per endoscopist, PIVI 1
// with its safety split, PIVI 2, eligibility and the unsafe disagreements.
func (d *doc) optical() {
	pops := d.opticalPopulations()
	if len(pops) == 0 {
		return
	}
	d.newPage("Optical diagnosis and resect-and-discard eligibility", true)
	d.note("Lesions with an optical class other than uncertain and a final histology; a call of adenoma predicts an " +
		"adenoma (cancer included), hyperplastic or SSL predicts not. Every figure has its Wilson 95% interval; kappa is Cohen's.")
	cols := []column{{"Population", 32, "L"}, {"Lesions", 13, "R"}, {"Sensitivity", 25, "R"}, {"Specificity", 25, "R"},
		{"NPV", 25, "R"}, {"Kappa", 23, "R"}, {"High confidence", 25, "R"}, {"Aid lesions", 12, "R"}}
	var rows [][]string
	for _, p := range pops {
		o := p.Optical
		rows = append(rows, []string{d.populationLabel(p.OperatorID), strconv.Itoa(o.Endoscopist.Table.N()),
			withInterval(o.Endoscopist.Sensitivity), withInterval(o.Endoscopist.Specificity), withInterval(o.Endoscopist.NPV),
			withInterval(o.Endoscopist.Kappa), withInterval(o.HighConfidence), strconv.Itoa(o.Aid.Table.N())})
	}
	d.table(cols, rows)
	if u := pops[0]; u.OperatorID == "" {
		d.opticalTables(u.Optical)
	}

	d.subheading("PIVI 1: resect and discard, interval agreement ("+string(d.in.Guideline)+")", 40)
	d.note("Procedures whose diminutive polyps were called with high confidence and whose every lesion has histology: the " +
		"interval from the optical calls (histology for the rest) against the interval from histology for all. A longer " +
		"interval under optical diagnosis is the unsafe direction: the patient would have come back later than the pathology says.")
	cols = []column{{"Population", 44, "L"}, {"Compared", 16, "R"}, {"Agree", 13, "R"}, {"Optical shorter", 20, "R"},
		{"Optical longer (unsafe)", 28, "R"}, {"Optical outside", 18, "R"}, {"Agreement [95% interval]", 41, "R"}}
	rows = nil
	var p1, p2 []ForestRow
	for _, p := range pops {
		o := p.Optical
		a := o.PIVI1.Agreement
		rows = append(rows, []string{d.populationLabel(p.OperatorID), strconv.Itoa(a.Denominator), strconv.Itoa(o.PIVI1.Agree),
			strconv.Itoa(o.PIVI1.Shorter), strconv.Itoa(o.PIVI1.Longer), strconv.Itoa(o.PIVI1.Outside),
			strings.TrimSpace(d.shortVerdict(a) + " " + audit.FormatInterval(a))})
		label := "unit"
		if p.OperatorID != "" {
			label = p.OperatorID
		}
		p1 = append(p1, ForestRow{Label: label, Indicator: a})
		p2 = append(p2, ForestRow{Label: label, Indicator: o.PIVI2.NPV})
	}
	d.table(cols, rows)
	piviT := audit.PIVIThreshold
	fd := ForestData{IndicatorID: "pivi1_agreement", Rows: p1, Reference: &piviT, ReferenceLabel: "PIVI threshold 90%"}
	d.chart(min(140, 30+6.5*float64(len(p1))), func(o ChartOptions) ([]byte, error) { return ForestChart(fd, o) }, ChartOptions{})

	d.subheading("PIVI 2: diagnose and leave, negative predictive value", 40)
	d.note("Diminutive rectosigmoid polyps called hyperplastic with high confidence: the share whose histology is not an " +
		"adenoma. The stricter reading counts SSL and TSA as positive too.")
	cols = []column{{"Population", 44, "L"}, {"Lesions", 16, "R"}, {"NPV [95% interval]", 48, "R"}, {"Verdict", 32, "L"},
		{"NPV, SSL and TSA positive", 40, "R"}}
	rows = nil
	for _, p := range pops {
		n := p.Optical.PIVI2.NPV
		nn := p.Optical.PIVI2.NPVNeoplasia
		rows = append(rows, []string{d.populationLabel(p.OperatorID), strconv.Itoa(n.Denominator),
			strings.TrimSpace(audit.FormatValue(n) + " " + audit.FormatInterval(n)), d.verdictText(n), audit.FormatValue(nn)})
	}
	d.table(cols, rows)
	fd2 := ForestData{IndicatorID: "pivi2_npv", Rows: p2, Reference: &piviT, ReferenceLabel: "PIVI threshold 90%"}
	d.chart(min(140, 30+6.5*float64(len(p2))), func(o ChartOptions) ([]byte, error) { return ForestChart(fd2, o) }, ChartOptions{})

	d.eligibility(pops)
	d.disagreements(pops)
}

// opticalTables prints the unit's 2×2 and three-class tables.
func (d *doc) opticalTables(o *audit.OpticalDetail) {
	d.subheading("Whole unit: calls against histology", 30)
	t := o.Endoscopist.Table
	d.table([]column{{"Endoscopist's call", 50, "L"}, {"Histology adenoma", 35, "R"}, {"Histology not adenoma", 38, "R"}, {"Total", 25, "R"}},
		[][]string{
			{"adenoma", strconv.Itoa(t.TruePositive), strconv.Itoa(t.FalsePositive), strconv.Itoa(t.TruePositive + t.FalsePositive)},
			{"hyperplastic or SSL", strconv.Itoa(t.FalseNegative), strconv.Itoa(t.TrueNegative), strconv.Itoa(t.FalseNegative + t.TrueNegative)},
		})
	c := o.Endoscopist.Classes
	cls := []string{"adenoma", "serrated (SSL)", "hyperplastic"}
	var rows [][]string
	for i, row := range c.Counts {
		r := []string{cls[i]}
		for _, v := range row {
			r = append(r, strconv.Itoa(v))
		}
		rows = append(rows, r)
	}
	k := o.Endoscopist.ClassesKappa
	d.table([]column{{"Three classes: call", 50, "L"}, {"Adenoma", 25, "R"}, {"Serrated", 25, "R"}, {"Hyperplastic", 25, "R"}, {"Normal or other", 28, "R"}}, rows)
	d.note(fmt.Sprintf("Three-class agreement over lesions with adenoma, serrated or hyperplastic histology: kappa %s.", kappaText(k)))
}

// withInterval prints a value with its 95% interval under it.
func withInterval(ind audit.Indicator) string {
	if iv := audit.FormatInterval(ind); iv != "" {
		return audit.FormatValue(ind) + "\n" + iv
	}
	return audit.FormatValue(ind)
}

func kappaText(k stats.Kappa) string {
	if k.N == 0 || k.Kappa != k.Kappa {
		return "not defined"
	}
	return fmt.Sprintf("%.2f [%.2f to %.2f] over %d lesions", k.Kappa, k.CI.Low, k.CI.High, k.N)
}

// eligibility prints the threshold checks per population.
func (d *doc) eligibility(pops []audit.PopulationDetail) {
	d.subheading("Eligibility for resect-and-discard and diagnose-and-leave", 40)
	s := d.in.Discard.WithDefaults()
	d.note(fmt.Sprintf("Rule set: %s. A threshold is met on the value when the point estimate reaches it, and on the lower limit "+
		"when the lower end of the 95%% interval does too; fewer than %d cases (the unit's local minimum) are not judged.",
		discardRulesText(s), s.MinCases))
	cols := []column{{"Population", 40, "L"}, {"Strategy", 30, "L"}, {"Figure", 30, "R"}, {"Threshold", 16, "R"},
		{"Met on value", 18, "C"}, {"Met on lower limit", 24, "C"}, {"Enough cases", 22, "C"}}
	var rows [][]string
	yes := func(b bool) string {
		if b {
			return "yes"
		}
		return "no"
	}
	for _, p := range pops {
		for _, c := range p.Optical.Discard.Checks {
			rows = append(rows, []string{d.populationLabel(p.OperatorID), strings.ReplaceAll(c.Strategy, "_", " "),
				audit.FormatCases(c.Figure) + " " + audit.FormatValue(c.Figure), fmt.Sprintf("%.0f%%", 100*c.Threshold),
				yes(c.MetOnValue), yes(c.MetOnLowerLimit), fmt.Sprintf("%s (%d)", yes(c.EnoughCases), c.Cases)})
		}
	}
	d.table(cols, rows)
	cols = []column{{"Population", 50, "L"}, {"Could be discarded", 30, "R"}, {"Could be left", 28, "R"},
		{"Specimens saved", 28, "R"}, {"Interval shorter", 22, "R"}, {"Interval longer", 22, "R"}}
	rows = nil
	for _, p := range pops {
		e := p.Optical.Discard
		rows = append(rows, []string{d.populationLabel(p.OperatorID), strconv.Itoa(e.DiscardEligible), strconv.Itoa(e.LeaveEligible),
			strconv.Itoa(e.SpecimensSaved), strconv.Itoa(e.IntervalShorter), strconv.Itoa(e.IntervalLonger)})
	}
	d.table(cols, rows)
	d.boxed(audit.DiscardCaution())
}

// disagreements lists the procedures whose optical-based interval would
// have been longer (the unsafe direction) or outside the guideline.
func (d *doc) disagreements(pops []audit.PopulationDetail) {
	// The unit report lists the unit's procedures; a personal report only
	// the subject's own.
	want := ""
	if d.in.Kind == PersonalReport {
		want = d.in.SubjectID
	}
	var list []audit.IntervalDisagreement
	for _, p := range pops {
		if p.OperatorID != want {
			continue
		}
		for _, x := range p.Optical.PIVI1.Disagreements {
			if x.Kind != audit.PIVI1OpticalShorter {
				list = append(list, x)
			}
		}
	}
	d.subheading("Procedures where optical diagnosis would have lengthened the interval", 30)
	if len(list) == 0 {
		d.note("None in this period.")
		return
	}
	d.note("Unsafe direction first: each procedure's interval from optical diagnosis against the interval from histology. " +
		"Procedure ids and patient short codes only.")
	d.disagreementTable(list, 60)
}

func (d *doc) disagreementTable(list []audit.IntervalDisagreement, limit int) {
	cols := []column{{"Procedure", 26, "L"}, {"Patient code", 28, "L"}, {"Endoscopist", 22, "L"}, {"Date", 22, "L"},
		{"Optical interval", 24, "L"}, {"Histology interval", 26, "L"}, {"Direction", 32, "L"}}
	slices.SortStableFunc(list, func(a, b audit.IntervalDisagreement) int { return strings.Compare(string(a.Kind), string(b.Kind)) })
	var rows [][]string
	for i, x := range list {
		if i == limit {
			break
		}
		dir := "optical longer (unsafe)"
		if x.Kind == audit.PIVI1OpticalOutside {
			dir = "optical outside guideline"
		} else if x.Kind == audit.PIVI1OpticalShorter {
			dir = "optical shorter"
		}
		rows = append(rows, []string{x.ProcedureID, x.Patient, x.OperatorID, x.PerformedOn, string(x.Optical), string(x.Histology), dir})
	}
	d.table(cols, rows)
	if len(list) > limit {
		d.note(fmt.Sprintf("… and %d more not listed here; the desktop app lists them all.", len(list)-limit))
	}
}

// adherence prints surveillance interval adherence per endoscopist and the
// first procedures whose recorded interval differs.
func (d *doc) adherence() {
	inds := [][2]any{}
	unit, ok := audit.Find(d.in.Data.Metrics.Unit.Indicators, "interval_adherence")
	if !ok {
		return
	}
	d.newPage("Surveillance interval adherence", true)
	d.note(fmt.Sprintf("Procedures whose recorded recommendation is the interval the program works out under %s, over "+
		"procedures with a recorded recommendation; those whose interval still awaits histology are left out and counted in a note. Codes are compared as written, so a range and a single value differ.", d.in.Guideline.Title()))
	inds = append(inds, [2]any{"", unit})
	for _, o := range d.in.Data.Metrics.Operators {
		if ind, ok := audit.Find(o.Indicators, "interval_adherence"); ok {
			inds = append(inds, [2]any{o.OperatorID, ind})
		}
	}
	var rows [][]string
	var forest []ForestRow
	for _, x := range inds {
		id, ind := x[0].(string), x[1].(audit.Indicator)
		rows = append(rows, []string{d.populationLabel(id), audit.FormatCases(ind), notedValue(ind), audit.FormatInterval(ind), audit.FormatTarget(ind), d.verdictText(ind)})
		label := "unit"
		if id != "" {
			label = id
		}
		forest = append(forest, ForestRow{Label: label, Indicator: ind})
	}
	d.table([]column{{"Population", 52, "L"}, {"Cases", 24, "R"}, {"Value", 20, "R"}, {"95% interval", 30, "R"}, {"Target", 20, "R"}, {"Verdict", 34, "L"}}, rows)
	d.populationNotes(inds)
	fd := ForestData{IndicatorID: "interval_adherence", Rows: forest}
	if t := unit.Target; t != nil {
		fd.Reference, fd.ReferenceLabel = t, "target"
	}
	d.chart(min(140, 30+6.5*float64(len(forest))), func(o ChartOptions) ([]byte, error) { return ForestChart(fd, o) }, ChartOptions{})
	var list []audit.AdherenceMismatch
	for _, p := range d.in.Data.Details {
		if p.OperatorID == "" || d.in.Kind == PersonalReport {
			list = append(list, p.Mismatches...)
		}
	}
	d.mismatchTable(list, 40)
	d.boxed(surveillance.IntervalCaution(d.in.Guideline))
}

func (d *doc) mismatchTable(list []audit.AdherenceMismatch, limit int) {
	d.subheading("Procedures whose recorded interval differs", 30)
	if len(list) == 0 {
		d.note("None in this period.")
		return
	}
	var rows [][]string
	for i, m := range list {
		if i == limit {
			break
		}
		rows = append(rows, []string{m.ProcedureID, m.Patient, m.OperatorID, string(m.Recorded), string(m.Computed)})
	}
	d.table([]column{{"Procedure", 34, "L"}, {"Patient code", 34, "L"}, {"Endoscopist", 28, "L"}, {"Recorded", 36, "L"}, {"Worked out", 36, "L"}}, rows)
	if len(list) > limit {
		d.note(fmt.Sprintf("… and %d more not listed here.", len(list)-limit))
	}
}
