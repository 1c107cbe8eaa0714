package app

import (
	"time"

	"polypledger/audit"
	"polypledger/report"
	"polypledger/workspace"
)

// chartOptions is the size the figures screen draws its charts at.
var chartOptions = report.ChartOptions{WidthMM: 160, HeightMM: 90, DPI: 96}

// figureCharts draws the charts of one population with the report's own
// chart functions: for the unit or an endoscopist the quarterly ADR trend
// (a quarter not over on today, or still waiting for much histology, drawn
// as provisional), the ADR funnel and the detection-aid comparison; for a
// trainee the cases by supervision and the CUSUM learning curve from the
// trainee's first case.
func figureCharts(figs audit.Figures, prof *audit.Profile, pop workspace.Population, today time.Time) []chartImage {
	var out []chartImage
	add := func(name string, png []byte, err error) {
		out = append(out, chartImage{name: name, png: png, err: err})
	}
	if pop.TraineeID != "" {
		for _, t := range figs.Trainees {
			if t.TraineeID != pop.TraineeID {
				continue
			}
			png, err := report.TraineeCasesChart(t.Months, chartOptions)
			add("trainee-cases", png, err)
			png, err = report.CUSUMChart(t.CUSUM, chartOptions)
			add("cusum", png, err)
		}
		return out
	}
	name := "unit"
	if pop.OperatorID != "" {
		name = pop.OperatorID
	}
	td := report.TrendData{IndicatorID: "adr", Name: name}
	for _, q := range figs.Trends.Quarters {
		inds := q.Metrics.Unit.Indicators
		if pop.OperatorID != "" {
			inds = nil
			for _, o := range q.Metrics.Operators {
				if o.OperatorID == pop.OperatorID {
					inds = o.Indicators
				}
			}
			unit, _ := audit.Find(q.Metrics.Unit.Indicators, "adr")
			td.ComparisonName = "unit"
			td.Comparison = append(td.Comparison, report.TrendPoint{Label: q.Quarter, Indicator: unit})
		}
		ind, ok := audit.Find(inds, "adr")
		if !ok {
			ind = audit.Indicator{ID: "adr", Status: audit.TooFew}
		}
		td.Points = append(td.Points, report.TrendPoint{Label: q.Quarter, Indicator: ind,
			Provisional: audit.ProvisionalNote(ind, q.Unfinished(today))})
	}
	png, err := report.TrendChart(td, chartOptions)
	add("trend", png, err)

	if f, err := audit.NewFunnel(figs.Metrics, "adr"); err == nil {
		var target *float64
		if t := prof.Target("adr"); t != nil {
			target = t.Minimum
		}
		opt := chartOptions
		opt.Highlight = pop.OperatorID
		png, err := report.FunnelChart(report.FunnelData{Funnel: f, Target: target}, opt)
		add("funnel", png, err)
	} else {
		add("funnel", nil, err)
	}

	for _, c := range audit.AidComparisons(figs.Metrics) {
		if c.OperatorID != pop.OperatorID {
			continue
		}
		fd := report.ForestData{IndicatorID: "adr", Rows: []report.ForestRow{
			{Label: "with computer aid", Indicator: c.With},
			{Label: "without", Indicator: c.Without},
		}, ReferenceLabel: "ADR target"}
		if t := prof.Target("adr"); t != nil {
			fd.Reference = t.Minimum
		}
		opt := chartOptions
		opt.Title = "ADR with and without computer-aided detection (difference " + audit.FormatValue(c.Difference) + ")"
		png, err := report.ForestChart(fd, opt)
		add("aid", png, err)
	}
	return out
}
