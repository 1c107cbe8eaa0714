package audit

import (
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/stats"
)

// PassOptions sets what a Pass counts.
type PassOptions struct {
	// From and To bound the period, both days included.
	From, To time.Time
	// Extra are the further per-population figures counted beside the
	// profile's indicators, as for the metrics command: the report reads
	// the optical-diagnosis audit and interval adherence from the
	// accumulators these make (OpticalAuditFactory, AdherenceFactory).
	Extra []AccumulatorFactory
	// CUSUM are the learning-curve parameters of the trainee figures; the
	// zero value means DefaultCUSUM.
	CUSUM stats.CUSUMParams
}

// Pass gathers everything the figures screen and a PDF report show in one
// streaming pass over the period's cases: the indicators per population
// (with the extra figures), the quarterly trends, the trainees' progress
// and the data completeness counts. Add each case once, then call Result.
// A Pass is not safe for concurrent use.
type Pass struct {
	metrics    *Metrics
	trends     *Trends
	trainees   *TraineeProgress
	complete   Completeness
	byOperator map[string]*Completeness
	opt        PassOptions
}

// NewPass starts a report pass under profile p; it fails when the
// CUSUM parameters are out of range.
func NewPass(p *Profile, o PassOptions) (*Pass, error) {
	if o.CUSUM == (stats.CUSUMParams{}) {
		o.CUSUM = stats.DefaultCUSUM()
	}
	period := MetricsOptions{From: o.From, To: o.To}
	tp, err := NewTraineeProgress(p, o.CUSUM, period)
	if err != nil {
		return nil, err
	}
	withExtra := period
	withExtra.Extra = o.Extra
	return &Pass{
		metrics:    NewMetrics(p, withExtra),
		trends:     NewTrends(p, period),
		trainees:   tp,
		byOperator: map[string]*Completeness{},
		opt:        o,
	}, nil
}

// Add counts one case in every accumulator. A case before the period
// counts only in the trainees' learning curves, which run from a trainee's
// first case (feed such cases for the trainees whose progress is shown);
// any other case outside the period is ignored. The case is not retained.
func (r *Pass) Add(c *logbook.Case) {
	if !(&MetricsOptions{From: r.opt.From, To: r.opt.To}).includes(c.PerformedOn) {
		if !r.opt.From.IsZero() && c.PerformedOn.Before(r.opt.From) {
			r.trainees.Add(c)
		}
		return
	}
	r.metrics.Add(c)
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
	Metrics  MetricsResult
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
		Metrics:      r.metrics.Result(),
		Trends:       r.trends.Result(),
		Trainees:     r.trainees.Result(),
		Completeness: r.complete,

		OperatorCompleteness: make(map[string]Completeness, len(r.byOperator)),
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
