package audit

import (
	"sort"
	"strings"
	"time"

	"polypledger/logbook"
)

// AccumulatorFactory makes a fresh accumulator for one population. The
// metrics engine calls it once for the unit and once for each operator, so
// other figures (the optical-diagnosis audit, interval adherence) are counted
// in the same pass as the indicators.
type AccumulatorFactory func() Accumulator

// MetricsOptions selects the period and any further figures.
type MetricsOptions struct {
	// From and To bound performed_on, both days included; a zero time leaves
	// that end open. Cases outside are ignored.
	From, To time.Time
	// Extra makes more accumulators per population; their indicators follow
	// this package's in each population, in the order given.
	Extra []AccumulatorFactory
}

// includes reports whether a procedure date lies in the period.
func (o *MetricsOptions) includes(d time.Time) bool {
	return (o.From.IsZero() || !d.Before(o.From)) && (o.To.IsZero() || !d.After(o.To))
}

// Metrics computes the indicators of one standard profile for the unit and
// for each operator in a single streaming pass: Add each case once, then
// call Result. Only running totals are kept (and, for the sedation medians,
// a count per distinct dose). A Metrics is not safe for concurrent use.
type Metrics struct {
	prof   *Profile
	opt    MetricsOptions
	unit   *population
	ops    map[string]*population
	seen   dateSpan    // observed dates, for open-ended periods
	lastID string      // the operator of the previous case, whose
	lastOp *population // population is reused without a map lookup
}

// population is the running state of the unit or one operator.
type population struct {
	id string // the operator, "" for the unit
	counts
	extra []Accumulator
}

func newPopulation(extra []AccumulatorFactory) *population {
	p := &population{}
	for _, f := range extra {
		p.extra = append(p.extra, f())
	}
	return p
}

func (p *population) add(f *caseFacts, c *logbook.Case) {
	p.counts.add(f)
	for _, a := range p.extra {
		a.Add(c)
	}
}

func (p *population) indicators(prof *Profile, per Period, isUnit bool) []Indicator {
	out := p.counts.indicators(prof, per, isUnit)
	for _, a := range p.extra {
		out = append(out, a.Indicators()...)
	}
	return out
}

// NewMetrics starts a metrics pass under profile p.
func NewMetrics(p *Profile, opt MetricsOptions) *Metrics {
	return &Metrics{prof: p, opt: opt, unit: newPopulation(opt.Extra), ops: map[string]*population{}}
}

// Add counts one case for the unit and for its operator (the accountable
// endoscopist, trainee cases included). Cases outside the period are
// ignored. The case is not retained. Add allocates nothing once the
// operator has been seen.
func (m *Metrics) Add(c *logbook.Case) {
	d := c.PerformedOn
	if !m.opt.includes(d) {
		return
	}
	m.seen.add(d)
	var f caseFacts
	f.read(m.prof, c)
	m.unit.add(&f, c)
	op := m.lastOp
	if op == nil || c.OperatorID != m.lastID {
		op = m.ops[c.OperatorID]
		if op == nil {
			op = newPopulation(m.opt.Extra)
			op.id = strings.Clone(c.OperatorID)
			m.ops[op.id] = op
		}
		m.lastID, m.lastOp = op.id, op
	}
	op.add(&f, c)
}

// MetricsResult is the `metrics --format json` document of architecture.md.
type MetricsResult struct {
	From      string           `json:"from"`
	To        string           `json:"to"`
	Standard  string           `json:"standard"`
	Unit      PopulationResult `json:"unit"`
	Operators []OperatorResult `json:"operators"`
}

// PopulationResult holds the unit's indicators.
type PopulationResult struct {
	Indicators []Indicator `json:"indicators"`
}

// OperatorResult holds one operator's indicators.
type OperatorResult struct {
	OperatorID string      `json:"operator_id"`
	Indicators []Indicator `json:"indicators"`
}

// dateSpan is the first and last procedure date seen, which stand in for
// an open end of the period.
type dateSpan struct{ first, last time.Time }

func (s *dateSpan) add(d time.Time) {
	if s.first.IsZero() || d.Before(s.first) {
		s.first = d
	}
	if d.After(s.last) {
		s.last = d
	}
}

// period returns the effective first and last day: the options' bounds, an
// open end replaced by the first or last procedure date seen.
func (s dateSpan) period(o MetricsOptions) (from, to time.Time) {
	from, to = o.From, o.To
	if from.IsZero() {
		from = s.first
	}
	if to.IsZero() {
		to = s.last
	}
	return from, to
}

// Period is the span figures are counted over: From and To are its first
// and last day, both included; a zero end means no period is known.
type Period struct{ From, To time.Time }

// Days is the number of days from From to To, both included, or 0.
func (p Period) Days() int {
	if p.From.IsZero() || p.To.IsZero() || p.To.Before(p.From) {
		return 0
	}
	return int(p.To.Sub(p.From).Hours()/24+0.5) + 1
}

// FullYear reports whether the period covers at least one calendar year:
// To is on or after From plus one year less one day. 2026-01-01 to
// 2026-12-31 is a year, and so is 2024-02-29 to 2025-02-28; 2026-01-02 to
// 2026-12-31 (364 days) is not. Procedure volume is judged only over such a
// period (clinical-reference §2): a standard's yearly count is not a rate
// that a quarter can be scaled up to meet.
func (p Period) FullYear() bool {
	if p.From.IsZero() || p.To.IsZero() {
		return false
	}
	return !p.To.Before(p.From.AddDate(1, 0, -1))
}

// Result returns the indicators over every case added: the unit, then each
// operator with ≥1 procedure in the period, sorted by id. From and To are
// the period's bounds (an open end is shown as the first or last procedure
// date). Volume is judged per operator only and over a full year only (see
// Period.FullYear): the standard's figure is a yearly count per
// endoscopist, so the unit's volume, and any volume over a shorter period,
// is reported with a note saying why.
func (m *Metrics) Result() MetricsResult {
	from, to := m.seen.period(m.opt)
	per := Period{From: from, To: to}
	r := MetricsResult{
		From:      logbook.FormatDate(from),
		To:        logbook.FormatDate(to),
		Standard:  m.prof.ID,
		Unit:      PopulationResult{Indicators: m.unit.indicators(m.prof, per, true)},
		Operators: make([]OperatorResult, 0, len(m.ops)),
	}
	ids := make([]string, 0, len(m.ops))
	for id := range m.ops {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		r.Operators = append(r.Operators, OperatorResult{OperatorID: id, Indicators: m.ops[id].indicators(m.prof, per, false)})
	}
	return r
}

// Find returns the indicator with the id from a list, and whether it was
// there.
func Find(inds []Indicator, id string) (Indicator, bool) {
	for _, ind := range inds {
		if ind.ID == id {
			return ind, true
		}
	}
	return Indicator{}, false
}
