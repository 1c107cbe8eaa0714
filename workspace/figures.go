package workspace

import (
	"context"
	"time"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/surveillance"
)

// Figures is everything a screen of figures or a report shows for one
// period, computed in one streaming pass (audit.Pass): the
// indicators of the unit and every operator with the optical-diagnosis and
// interval figures, the quarterly trends, every trainee's progress and the
// data completeness.
type Figures struct {
	Guideline surveillance.Guideline
	Data      audit.Figures
	// Cases is how many procedures of the period were read.
	Cases int
}

// progressEvery is how many cases pass between progress reports.
const progressEvery = 5000

// ComputeFigures reads the period's cases once (both ends included; a zero
// time leaves that end open) and feeds every accumulator the figures
// screen needs, then each trainee's earlier cases, so that every learning
// curve runs from the trainee's first case. progress, when set, is called
// with the number of cases read so far every few thousand cases;
// cancelling ctx stops the pass.
func (a *Audit) ComputeFigures(ctx context.Context, from, to time.Time, g surveillance.Guideline, progress func(cases int)) (Figures, error) {
	roster, err := a.Store.Roster(ctx)
	if err != nil {
		return Figures{}, err
	}
	var trainees []string
	for _, r := range roster {
		if r.Role == logbook.RoleTrainee {
			trainees = append(trainees, r.ID)
		}
	}
	return a.figures(ctx, store.CaseFilter{From: from, To: to}, from, to, g, trainees, progress)
}

// ReportFigures computes what the report req asks for shows, the same for
// the command line and the app: the unit audit and a personal report read
// every case of the period (a personal report compares with the unit and
// anonymous peers); a trainee's logbook reads the cases the trainee held
// the scope for, from the trainee's first case to the period's end.
func (a *Audit) ReportFigures(ctx context.Context, req ReportRequest, progress func(cases int)) (Figures, error) {
	if req.Kind == report.TraineeReport {
		f := store.CaseFilter{From: req.From, To: req.To, TraineeID: req.SubjectID}
		return a.figures(ctx, f, req.From, req.To, req.Guideline, []string{req.SubjectID}, progress)
	}
	return a.figures(ctx, store.CaseFilter{From: req.From, To: req.To}, req.From, req.To, req.Guideline, nil, progress)
}

// figures feeds the cases selected by f to a report pass over from–to, and
// then the cases of each of trainees before from.
func (a *Audit) figures(ctx context.Context, f store.CaseFilter, from, to time.Time, g surveillance.Guideline, trainees []string,
	progress func(cases int)) (Figures, error) {
	pass, err := audit.NewPass(a.Profile, audit.PassOptions{From: from, To: to, Extra: a.ExtraFigures(g)})
	if err != nil {
		return Figures{}, err
	}
	n := 0
	count := func(c *logbook.Case) {
		pass.Add(c)
		n++
		if progress != nil && n%progressEvery == 0 {
			progress(n)
		}
	}
	if err := StreamCases(ctx, a.Store, f, count); err != nil {
		return Figures{}, err
	}
	read := n
	if !from.IsZero() {
		for _, id := range trainees {
			earlier := store.CaseFilter{To: from.AddDate(0, 0, -1), TraineeID: id}
			if err := StreamCases(ctx, a.Store, earlier, pass.Add); err != nil {
				return Figures{}, err
			}
		}
	}
	return Figures{Guideline: g, Data: pass.Result(), Cases: read}, nil
}

// StreamCases feeds every case f selects to add in one pass. Reading the
// database and counting run side by side: the reader copies cases into
// batches that a second goroutine counts, so the slower of the two sets
// the pace rather than their sum. add runs on one goroutine only; a
// cancelled ctx stops the read.
func StreamCases(ctx context.Context, st *store.Store, f store.CaseFilter, add func(*logbook.Case)) error {
	const batchSize, inFlight = 256, 4
	full := make(chan []logbook.Case, inFlight)
	free := make(chan []logbook.Case, inFlight+1)
	for range inFlight + 1 {
		free <- make([]logbook.Case, 0, batchSize)
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		for b := range full {
			for i := range b {
				add(&b[i])
			}
			free <- b[:0]
		}
	}()
	batch := <-free
	err := st.ForEachCase(ctx, f, func(c *logbook.Case) error {
		n := len(batch)
		batch = batch[:n+1]
		dst := &batch[n]
		lesions := append(dst.Lesions[:0], c.Lesions...)
		*dst = *c
		dst.Lesions = lesions
		if len(batch) == batchSize {
			if err := ctx.Err(); err != nil {
				return err
			}
			full <- batch
			batch = <-free
		}
		return nil
	})
	if err == nil && len(batch) > 0 {
		full <- batch
	}
	close(full)
	<-done
	return err
}

// Population chooses whose figures are looked at: the whole unit (both ids
// empty), one accountable endoscopist, or one trainee (the cases the trainee
// held the scope for).
type Population struct {
	OperatorID string
	TraineeID  string
}
