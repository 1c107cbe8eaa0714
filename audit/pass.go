package audit

import (
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/stats"
	"polypledger/surveillance"
)

// PassOptions sets what a Pass counts.
type PassOptions struct {
	// From and To bound the period, both days included; a zero time leaves
	// that end open.
	From, To time.Time
	// Guideline is the surveillance guideline of PIVI 1 and of interval
	// adherence; an unknown one is read as surveillance.DefaultGuideline.
	Guideline surveillance.Guideline
	// Discard are the unit's resect-and-discard settings (see
	// DiscardSettings for their defaults).
	Discard DiscardSettings
	// MetricsOnly counts the indicators per population only, leaving out
	// the quarterly trends, the trainees' progress and the data
	// completeness: what the metrics command prints, at the speed it
	// promises.
	MetricsOnly bool
	// CUSUM are the learning-curve parameters of the trainee figures; the
	// zero value means stats.DefaultCUSUM.
	CUSUM stats.CUSUMParams
}

// Pass gathers everything the figures screen and a PDF report show in one
// streaming pass over the period's cases: the indicators per population
// with the optical-diagnosis audit and interval adherence, the quarterly
// trends, the trainees' progress and the data completeness counts. Add
// each case once, then call Result. A Pass is not safe for concurrent use.
type Pass struct {
	metrics    *Metrics
	trends     *Trends          // nil with MetricsOnly
	trainees   *TraineeProgress // nil with MetricsOnly
	complete   Completeness
	byOperator map[string]*Completeness
	opt        PassOptions
	iv         *caseIntervals
}

// NewPass starts a pass under profile p; it fails when the CUSUM
// parameters are out of range.
func NewPass(p *Profile, o PassOptions) (*Pass, error) {
	if o.CUSUM == (stats.CUSUMParams{}) {
		o.CUSUM = stats.DefaultCUSUM()
	}
	if _, err := surveillance.ParseGuideline(string(o.Guideline)); err != nil {
		o.Guideline = surveillance.DefaultGuideline
	}
	period := MetricsOptions{From: o.From, To: o.To}
	tp, err := NewTraineeProgress(p, o.CUSUM, period)
	if err != nil {
		return nil, err
	}
	// The accumulators of every population share the intervals of the
	// case being added.
	iv := &caseIntervals{guideline: o.Guideline}
	withExtra := period
	withExtra.Extra = []AccumulatorFactory{
		func() Accumulator {
			a := NewOpticalAudit(o.Guideline, o.Discard)
			a.iv = iv
			return a
		},
		func() Accumulator {
			a := NewAdherenceJudged(o.Guideline, p.Target("interval_adherence"), p.MinCases)
			a.iv = iv
			return a
		},
	}
	r := &Pass{metrics: NewMetrics(p, withExtra), byOperator: map[string]*Completeness{}, opt: o, iv: iv}
	if !o.MetricsOnly {
		r.trends, r.trainees = NewTrends(p, period), tp
	}
	return r, nil
}

// Add counts one case in every accumulator. A case before the period
// counts only in the trainees' learning curves, which run from a trainee's
// first case (feed such cases for the trainees whose progress is shown);
// any other case outside the period is ignored. The case is not retained.
func (r *Pass) Add(c *logbook.Case) {
	if !(&MetricsOptions{From: r.opt.From, To: r.opt.To}).includes(c.PerformedOn) {
		if r.trainees != nil && !r.opt.From.IsZero() && c.PerformedOn.Before(r.opt.From) {
			r.trainees.Add(c)
		}
		return
	}
	r.iv.start(c)
	r.metrics.Add(c)
	if r.opt.MetricsOnly {
		return
	}
	r.trends.Add(c)
	r.trainees.Add(c)
	r.complete.add(c)
	oc := r.byOperator[c.OperatorID]
	if oc == nil {
		oc = &Completeness{}
		r.byOperator[strings.Clone(c.OperatorID)] = oc
	}
	oc.add(c)
}

// PopulationDetail is what the report shows of one population beyond its
// indicators: the optical-diagnosis audit tables and the procedures whose
// recorded interval differs from the computed one.
type PopulationDetail struct {
	// OperatorID is the operator, "" for the unit.
	OperatorID string
	// Optical is set when the pass counted the optical-diagnosis audit.
	Optical *OpticalDetail
	// Mismatches are set when the pass counted interval adherence.
	Mismatches []AdherenceMismatch
}

// Figures is everything a figures screen or a report is drawn from: the
// result of one Pass.
type Figures struct {
	// Guideline is the surveillance guideline PIVI 1 and interval
	// adherence were worked out under.
	Guideline surveillance.Guideline
	Metrics   MetricsResult
	// Trends, Trainees and the completeness counts are empty after a
	// MetricsOnly pass.
	Trends   TrendsResult
	Trainees []TraineeResult
	// Details holds the unit first, then each operator in Metrics order.
	Details      []PopulationDetail
	Completeness Completeness
	// OperatorCompleteness is the completeness of each operator's own
	// records, by operator id.
	OperatorCompleteness map[string]Completeness
}

// Detail returns the detail of an operator ("" for the unit).
func (d *Figures) Detail(operatorID string) PopulationDetail {
	for _, p := range d.Details {
		if p.OperatorID == operatorID {
			return p
		}
	}
	return PopulationDetail{OperatorID: operatorID}
}

// Result returns the figures over every case added.
func (r *Pass) Result() Figures {
	d := Figures{
		Guideline:    r.opt.Guideline,
		Metrics:      r.metrics.Result(),
		Completeness: r.complete,

		OperatorCompleteness: make(map[string]Completeness, len(r.byOperator)),
	}
	if r.trends != nil {
		d.Trends, d.Trainees = r.trends.Result(), r.trainees.Result()
	}
	for id, c := range r.byOperator {
		d.OperatorCompleteness[id] = *c
	}
	detail := func(id string, accs []Accumulator) PopulationDetail {
		pd := PopulationDetail{OperatorID: id}
		for _, a := range accs {
			switch a := a.(type) {
			case *OpticalAudit:
				od := a.Detail()
				pd.Optical = &od
			case *Adherence:
				pd.Mismatches = a.Mismatches()
			}
		}
		return pd
	}
	d.Details = append(d.Details, detail("", r.metrics.unit.extra))
	for _, o := range d.Metrics.Operators {
		if p := r.metrics.ops[o.OperatorID]; p != nil {
			d.Details = append(d.Details, detail(o.OperatorID, p.extra))
		}
	}
	return d
}
