package workspace

import (
	"context"
	"time"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/store"
	"polypledger/surveillance"
)

// Request is what a figures screen, the metrics command or a report asks
// for; the command line and the app fill in the same fields and go through
// Audit.Figures (and Audit.WriteReport), so that the same request gives
// the same figures on every path.
type Request struct {
	// From and To bound the period, both days included; a zero time
	// leaves that end open.
	From, To time.Time
	// Whose figures: the whole unit, one endoscopist (every case of the
	// period is read, for the comparison with the unit and the peers) or
	// one trainee (the cases the trainee held the scope for, from the
	// trainee's first case).
	Whose Population
	// Guideline is the surveillance guideline of PIVI 1 and interval
	// adherence; "" means the unit's default (Audit.Guideline).
	Guideline surveillance.Guideline
	// Now is when the request is made: a report prints it on its cover and
	// calls the figures of a period not yet over provisional.
	Now time.Time
	// MetricsOnly asks for the indicators alone, without trends or
	// trainees' progress (the metrics command).
	MetricsOnly bool
}

// Population chooses whose figures are looked at: the whole unit (both ids
// empty), one accountable endoscopist, or one trainee (the cases the trainee
// held the scope for).
type Population struct {
	OperatorID string
	TraineeID  string
}

// Indicators returns the population's indicators from figures computed for
// a request of that population, and whether it had any: the unit's, the
// endoscopist's (false without a procedure in the period) or the trainee's
// own (false when the trainee held the scope for no case in the period).
// The metrics command's --operator and the figures screen both pick a
// population's figures with it.
func (p Population) Indicators(f audit.Figures) ([]audit.Indicator, bool) {
	switch {
	case p.TraineeID != "":
		for _, t := range f.Trainees {
			if t.TraineeID == p.TraineeID {
				return t.Indicators, true
			}
		}
		return nil, false
	case p.OperatorID != "":
		for _, o := range f.Metrics.Operators {
			if o.OperatorID == p.OperatorID {
				return o.Indicators, true
			}
		}
		return nil, false
	}
	return f.Metrics.Unit.Indicators, true
}

// progressEvery is how many cases pass between progress reports.
const progressEvery = 5000

// Figures computes what req asks for in one streaming pass (audit.Pass)
// under the audit's profile, guideline and resect-and-discard settings:
// the period's cases — for a trainee only those the trainee held the scope
// for, and then the trainee's earlier cases, so that the learning curve
// runs from the first case. progress, when set, is called with the number
// of the period's cases read so far every few thousand cases; cancelling
// ctx stops the pass.
func (a *Audit) Figures(ctx context.Context, req Request, progress func(cases int)) (audit.Figures, error) {
	g := req.Guideline
	if g == "" {
		g, _ = a.Guideline("")
	}
	pass, err := audit.NewPass(a.Profile, audit.PassOptions{From: req.From, To: req.To, Guideline: g,
		Discard: a.Discard(), MetricsOnly: req.MetricsOnly})
	if err != nil {
		return audit.Figures{}, err
	}
	trainee := req.Whose.TraineeID
	n := 0
	count := func(c *logbook.Case) {
		pass.Add(c)
		n++
		if progress != nil && n%progressEvery == 0 {
			progress(n)
		}
	}
	if err := StreamCases(ctx, a.Store, store.CaseFilter{From: req.From, To: req.To, TraineeID: trainee}, count); err != nil {
		return audit.Figures{}, err
	}
	if trainee != "" && !req.From.IsZero() && !req.MetricsOnly {
		earlier := store.CaseFilter{To: req.From.AddDate(0, 0, -1), TraineeID: trainee}
		if err := StreamCases(ctx, a.Store, earlier, pass.Add); err != nil {
			return audit.Figures{}, err
		}
	}
	return pass.Result(), nil
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
