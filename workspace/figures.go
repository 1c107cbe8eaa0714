package workspace

import (
	"context"
	"time"

	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
)

// Population chooses whose figures are looked at: the whole unit (both ids
// empty), one accountable endoscopist, or one trainee (the cases the trainee
// held the scope for).
type Population struct {
	OperatorID string
	TraineeID  string
}

// Includes reports whether a case belongs to the population.
func (p Population) Includes(c *logbook.Case) bool {
	switch {
	case p.TraineeID != "":
		return c.TraineeID == p.TraineeID
	case p.OperatorID != "":
		return c.OperatorID == p.OperatorID
	}
	return true
}

// Figures is everything a scorecard shows for one period, computed in one
// streaming pass: the indicators of the unit and every operator, their
// quarterly trends and rolling ADR, every trainee's progress, and the
// optical-diagnosis audit of the chosen population.
type Figures struct {
	Guideline report.Guideline
	Metrics   report.MetricsResult
	Trends    report.TrendsResult
	Trainees  []report.TraineeResult
	Optical   report.OpticalDetail
	// Cases is how many procedures of the period were read.
	Cases int
}

// progressEvery is how many cases pass between progress reports.
const progressEvery = 5000

// ComputeFigures reads the period's cases once and feeds every accumulator a
// scorecard needs. progress, when set, is called with the number of cases
// read so far every few thousand cases; cancelling ctx stops the pass.
func (a *Audit) ComputeFigures(ctx context.Context, from, to time.Time, g report.Guideline, pop Population, progress func(cases int)) (Figures, error) {
	opt := report.MetricsOptions{From: from, To: to}
	m := report.NewMetrics(a.Profile, report.MetricsOptions{From: from, To: to, Extra: a.ExtraFigures(g)})
	tr := report.NewTrends(a.Profile, opt)
	tp, err := report.NewTraineeProgress(a.Profile, report.DefaultCUSUM(), opt)
	if err != nil {
		return Figures{}, err
	}
	oa := report.NewOpticalAudit(g, a.Eligibility())
	n := 0
	err = a.Store.ForEachCase(ctx, store.CaseFilter{From: from, To: to}, func(c *logbook.Case) error {
		m.Add(c)
		tr.Add(c)
		tp.Add(c)
		if pop.Includes(c) {
			oa.Add(c)
		}
		n++
		if n%progressEvery == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
			if progress != nil {
				progress(n)
			}
		}
		return nil
	})
	if err != nil {
		return Figures{}, err
	}
	return Figures{Guideline: g, Metrics: m.Result(), Trends: tr.Result(), Trainees: tp.Result(), Optical: oa.Detail(), Cases: n}, nil
}
