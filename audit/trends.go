package audit

import (
	"fmt"
	"sort"
	"strings"
	"time"

	"polypledger/logbook"
)

// Trends follows the indicators over time in the same single pass as
// Metrics: every indicator per calendar quarter for the unit and each
// operator, and a rolling 12-month ADR with one point per month end. A
// Trends is not safe for concurrent use.
type Trends struct {
	prof     *Profile
	opt      MetricsOptions
	quarters map[int]*Metrics // key year*4 + quarter index (0–3)
	unit     map[int]*detectionCount
	ops      map[string]map[int]*detectionCount // operator → month key → ADR counts
	seen     dateSpan
}

// NewTrends starts a trends pass under profile p; opt.Extra figures are
// computed per quarter too.
func NewTrends(p *Profile, opt MetricsOptions) *Trends {
	return &Trends{prof: p, opt: opt, quarters: map[int]*Metrics{}, unit: map[int]*detectionCount{},
		ops: map[string]map[int]*detectionCount{}}
}

// monthKey numbers calendar months: year*12 + month−1.
func monthKey(d time.Time) int { return d.Year()*12 + int(d.Month()) - 1 }

func monthStart(key int) time.Time {
	return time.Date(key/12, time.Month(key%12+1), 1, 0, 0, 0, 0, time.UTC)
}

// Add counts one case in its quarter and month. Cases outside the period are
// ignored; the case is not retained.
func (t *Trends) Add(c *logbook.Case) {
	d := c.PerformedOn
	if !t.opt.includes(d) {
		return
	}
	t.seen.add(d)
	qk := d.Year()*4 + (int(d.Month())-1)/3
	q := t.quarters[qk]
	if q == nil {
		start := time.Date(d.Year(), time.Month((qk%4)*3+1), 1, 0, 0, 0, 0, time.UTC)
		end := start.AddDate(0, 3, -1)
		o := MetricsOptions{From: start, To: end, Extra: t.opt.Extra}
		if !t.opt.From.IsZero() && t.opt.From.After(start) {
			o.From = t.opt.From
		}
		if !t.opt.To.IsZero() && t.opt.To.Before(end) {
			o.To = t.opt.To
		}
		q = NewMetrics(t.prof, o)
		t.quarters[qk] = q
	}
	q.Add(c)

	mk := monthKey(d)
	months := t.ops[c.OperatorID]
	if months == nil {
		months = map[int]*detectionCount{}
		t.ops[strings.Clone(c.OperatorID)] = months
	}
	var f caseFacts
	f.read(t.prof, c)
	if !f.eligible {
		return
	}
	for _, m := range []map[int]*detectionCount{t.unit, months} {
		dc := m[mk]
		if dc == nil {
			dc = &detectionCount{}
			m[mk] = dc
		}
		dc.add(f.adenoma, f.awaiting)
	}
}

// QuarterResult is the metrics of one calendar quarter, named like
// "2026-Q1"; its From and To are the quarter clipped to the period.
type QuarterResult struct {
	Quarter string        `json:"quarter"`
	Metrics MetricsResult `json:"metrics"`
}

// RollingPoint is the ADR over the 12 calendar months ending at a month end.
// Months says how many of those months lie in the period (12 when the
// window is whole); a chart should mark points with fewer.
type RollingPoint struct {
	MonthEnd  string    `json:"month_end"`
	Months    int       `json:"months"`
	Indicator Indicator `json:"adr"`
}

// RollingSeries is the rolling ADR of the unit ("" id) or one operator.
type RollingSeries struct {
	OperatorID string         `json:"operator_id"`
	Points     []RollingPoint `json:"points"`
}

// TrendsResult holds the quarterly metrics in date order and the rolling ADR
// series, the unit first and then each operator by id.
type TrendsResult struct {
	Standard   string          `json:"standard"`
	Quarters   []QuarterResult `json:"quarters"`
	RollingADR []RollingSeries `json:"rolling_adr"`
}

// Result returns the quarters that hold at least one case, and one rolling
// point for each calendar month from the period's first to its last month
// (an open end is the first or last procedure seen). A point's date is the
// month's last day, or the period's last day for a month cut short by it.
// Each point is judged against the profile's ADR target.
func (t *Trends) Result() TrendsResult {
	r := TrendsResult{Standard: t.prof.ID, Quarters: []QuarterResult{}, RollingADR: []RollingSeries{}}
	keys := make([]int, 0, len(t.quarters))
	for k := range t.quarters {
		keys = append(keys, k)
	}
	sort.Ints(keys)
	for _, k := range keys {
		r.Quarters = append(r.Quarters, QuarterResult{Quarter: fmt.Sprintf("%d-Q%d", k/4, k%4+1), Metrics: t.quarters[k].Result()})
	}
	from, to := t.seen.period(t.opt)
	if from.IsZero() || to.IsZero() || to.Before(from) {
		return r
	}
	firstM, lastM := monthKey(from), monthKey(to)
	series := func(id string, months map[int]*detectionCount) RollingSeries {
		s := RollingSeries{OperatorID: id, Points: make([]RollingPoint, 0, lastM-firstM+1)}
		for m := firstM; m <= lastM; m++ {
			var sum detectionCount
			for w := m - 11; w <= m; w++ {
				if dc := months[w]; dc != nil {
					sum.n += dc.n
					sum.k += dc.k
					sum.awaiting += dc.awaiting
				}
			}
			end := monthStart(m+1).AddDate(0, 0, -1)
			if end.After(to) {
				end = to
			}
			s.Points = append(s.Points, RollingPoint{
				MonthEnd:  logbook.FormatDate(end),
				Months:    min(12, m-firstM+1),
				Indicator: detectionRate("adr", sum, t.prof),
			})
		}
		return s
	}
	r.RollingADR = append(r.RollingADR, series("", t.unit))
	ids := make([]string, 0, len(t.ops))
	for id := range t.ops {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		r.RollingADR = append(r.RollingADR, series(id, t.ops[id]))
	}
	return r
}
