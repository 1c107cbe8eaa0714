package workspace

import (
	"context"
	"time"

	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
)

// Figures is everything a scorecard or report shows for one period,
// computed in one streaming pass (report.ReportPass): the indicators of the
// unit and every operator with the optical-diagnosis and interval figures,
// the quarterly trends, every trainee's progress and the data completeness.
type Figures struct {
	Guideline report.Guideline
	Data      report.ReportData
	// Cases is how many procedures of the period were read.
	Cases int
}

// progressEvery is how many cases pass between progress reports.
const progressEvery = 5000

// ComputeFigures reads the period's cases once (both ends included; a zero
// time leaves that end open) and feeds every accumulator a scorecard needs.
// progress, when set, is called with the number of cases read so far every
// few thousand cases; cancelling ctx stops the pass.
func (a *Audit) ComputeFigures(ctx context.Context, from, to time.Time, g report.Guideline, progress func(cases int)) (Figures, error) {
	pass, err := report.NewReportPass(a.Profile, report.ReportPassOptions{From: from, To: to, Extra: a.ExtraFigures(g)})
	if err != nil {
		return Figures{}, err
	}
	n := 0
	err = a.Store.ForEachCase(ctx, store.CaseFilter{From: from, To: to}, func(c *logbook.Case) error {
		pass.Add(c)
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
	return Figures{Guideline: g, Data: pass.Result(), Cases: n}, nil
}

// Population chooses whose figures are looked at: the whole unit (both ids
// empty), one accountable endoscopist, or one trainee (the cases the trainee
// held the scope for).
type Population struct {
	OperatorID string
	TraineeID  string
}
