package audit

import (
	"cmp"
	"math"
	"slices"
	"sort"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/stats"
)

// TraineeProgress follows each trainee's learning curve over the cases where
// the trainee held the scope (trainee_id), in one pass. A learning curve
// runs from the trainee's first case, so cases before the period are
// counted too (fed by the caller): they make the monthly and cumulative
// counts and the CUSUM, while the trainee's indicators count the period's
// cases only. Only the trainee's caecal intubation outcomes are kept per
// case, because the CUSUM needs them in date order. Not safe for
// concurrent use.
type TraineeProgress struct {
	prof      *Profile
	params    stats.CUSUMParams
	s, h0, h1 float64
	opt       MetricsOptions
	trainees  map[string]*traineeState
}

type traineeState struct {
	months   map[int]*[4]int // month key → cases by supervision (independent, hands-on, observed, unrecorded)
	counts   counts          // the period's cases
	reached  int             // the period's cases with trainee_reached_caecum yes
	recorded int             // the period's cases with trainee_reached_caecum yes or no
	before   int             // cases before the period
	inPeriod int             // cases in the period
	outcomes []cusumCase     // every case up to the period's end with the outcome recorded
}

type cusumCase struct {
	date     time.Time
	id       string
	success  bool
	inPeriod bool
}

// NewTraineeProgress starts a trainee pass under profile p (its detection
// eligibility decides the trainee's ADR) with CUSUM parameters c; it fails
// when the parameters are out of range.
func NewTraineeProgress(p *Profile, c stats.CUSUMParams, opt MetricsOptions) (*TraineeProgress, error) {
	s, h0, h1, err := c.Limits()
	if err != nil {
		return nil, err
	}
	return &TraineeProgress{prof: p, params: c, s: s, h0: h0, h1: h1, opt: opt, trainees: map[string]*traineeState{}}, nil
}

// Add counts a case for its trainee: a case in the period counts
// everywhere, a case before the period in the monthly counts and the CUSUM
// only; cases with no trainee or after the period are ignored. The case is
// not retained (its id is copied for the CUSUM series).
func (t *TraineeProgress) Add(c *logbook.Case) {
	pr := &c.Procedure
	if pr.TraineeID == "" || (!t.opt.To.IsZero() && pr.PerformedOn.After(t.opt.To)) {
		return
	}
	inPeriod := t.opt.includes(pr.PerformedOn)
	st := t.trainees[pr.TraineeID]
	if st == nil {
		st = &traineeState{months: map[int]*[4]int{}}
		t.trainees[strings.Clone(pr.TraineeID)] = st
	}
	mk := monthKey(pr.PerformedOn)
	m := st.months[mk]
	if m == nil {
		m = &[4]int{}
		st.months[mk] = m
	}
	switch pr.Supervision {
	case logbook.Independent:
		m[0]++
	case logbook.SupervisedHandsOn:
		m[1]++
	case logbook.SupervisedObserved:
		m[2]++
	default:
		m[3]++
	}
	recorded := pr.TraineeReachedCaecum == logbook.Yes || pr.TraineeReachedCaecum == logbook.No
	ok := pr.TraineeReachedCaecum == logbook.Yes
	if recorded {
		st.outcomes = append(st.outcomes, cusumCase{date: pr.PerformedOn, id: strings.Clone(pr.ID), success: ok, inPeriod: inPeriod})
	}
	if !inPeriod {
		st.before++
		return
	}
	st.inPeriod++
	var f caseFacts
	f.read(t.prof, c)
	st.counts.add(&f)
	if recorded {
		st.recorded++
		if ok {
			st.reached++
		}
	}
}

// MonthCount is a trainee's cases in one calendar month ("2026-01") by
// supervision level, and the running total to the end of that month.
type MonthCount struct {
	Month              string `json:"month"`
	Independent        int    `json:"independent"`
	SupervisedHandsOn  int    `json:"supervised_hands_on"`
	SupervisedObserved int    `json:"supervised_observed"`
	Unrecorded         int    `json:"unrecorded"`
	Total              int    `json:"total"`
	Cumulative         int    `json:"cumulative"`
}

// CUSUMPoint is the CUSUM after one case with a recorded outcome. InPeriod
// is false for a case before the period asked for (the curve starts at the
// trainee's first case).
type CUSUMPoint struct {
	ProcedureID string  `json:"procedure_id"`
	Date        string  `json:"date"`
	Success     bool    `json:"success"`
	Value       float64 `json:"value"`
	InPeriod    bool    `json:"in_period"`
}

// CUSUMResult is a trainee's learning curve over unassisted caecal
// intubation in date-then-procedure-id order: each success subtracts S,
// each failure adds 1−S. AcceptableAt and UnacceptableAt are the 1-based
// position of the first case at which the curve reached −H0 or +H1 (0 when
// it has not).
type CUSUMResult struct {
	Params         stats.CUSUMParams `json:"params"`
	S              float64           `json:"s"`
	H0             float64           `json:"h0"`
	H1             float64           `json:"h1"`
	Points         []CUSUMPoint      `json:"points"`
	AcceptableAt   int               `json:"acceptable_at"`
	UnacceptableAt int               `json:"unacceptable_at"`
	Note           string            `json:"note"`
}

// TraineeResult is one trainee's progress: cases per month from the first
// case to the period's end, the trainee's own indicators over the period's
// cases (unassisted_caecal_intubation, then adr, withdrawal_negative,
// comfort_discomfort and comfort_recorded) and the CUSUM from the first
// case. CasesBefore and CasesInPeriod split the trainee's cases at the
// period's start.
type TraineeResult struct {
	TraineeID     string       `json:"trainee_id"`
	Months        []MonthCount `json:"months"`
	Indicators    []Indicator  `json:"indicators"`
	CUSUM         CUSUMResult  `json:"cusum"`
	CasesBefore   int          `json:"cases_before"`
	CasesInPeriod int          `json:"cases_in_period"`
}

// cusumNote says where the CUSUM parameters come from.
const cusumNote = "Bolsin and Colson CUSUM (Int J Qual Health Care 2000;12:433–438). p0, p1, α and β are a local choice; crossing below −h0 suggests acceptable performance, above +h1 unacceptable. For the trainer to interpret."

// Result returns the progress of every trainee with a case in the period,
// sorted by trainee id. Months run from the trainee's first to last month
// with a case, empty months included.
func (t *TraineeProgress) Result() []TraineeResult {
	ids := make([]string, 0, len(t.trainees))
	for id, st := range t.trainees {
		if st.inPeriod > 0 {
			ids = append(ids, id)
		}
	}
	sort.Strings(ids)
	out := make([]TraineeResult, 0, len(ids))
	for _, id := range ids {
		st := t.trainees[id]
		r := TraineeResult{TraineeID: id, Months: []MonthCount{}, CasesBefore: st.before, CasesInPeriod: st.inPeriod}
		first, last := math.MaxInt, math.MinInt
		for k := range st.months {
			first, last = min(first, k), max(last, k)
		}
		cum := 0
		for k := first; k <= last; k++ {
			mc := MonthCount{Month: monthStart(k).Format("2006-01")}
			if m := st.months[k]; m != nil {
				mc.Independent, mc.SupervisedHandsOn, mc.SupervisedObserved, mc.Unrecorded = m[0], m[1], m[2], m[3]
			}
			mc.Total = mc.Independent + mc.SupervisedHandsOn + mc.SupervisedObserved + mc.Unrecorded
			cum += mc.Total
			mc.Cumulative = cum
			r.Months = append(r.Months, mc)
		}
		r.Indicators = append(r.Indicators, judged(Proportion("unassisted_caecal_intubation", st.reached, st.recorded), t.prof))
		all := st.counts.indicators(t.prof, Period{}, false)
		for _, want := range []string{"adr", "withdrawal_negative", "comfort_discomfort", "comfort_recorded"} {
			if ind, ok := Find(all, want); ok {
				r.Indicators = append(r.Indicators, ind)
			}
		}
		r.CUSUM = t.cusum(st.outcomes)
		out = append(out, r)
	}
	return out
}

// cusum runs the CUSUM over the outcomes in date-then-id order.
func (t *TraineeProgress) cusum(outcomes []cusumCase) CUSUMResult {
	slices.SortFunc(outcomes, func(a, b cusumCase) int {
		if c := a.date.Compare(b.date); c != 0 {
			return c
		}
		return cmp.Compare(a.id, b.id)
	})
	r := CUSUMResult{Params: t.params, S: t.s, H0: t.h0, H1: t.h1, Points: make([]CUSUMPoint, 0, len(outcomes)), Note: cusumNote}
	v := 0.0
	for i, o := range outcomes {
		if o.success {
			v -= t.s
		} else {
			v += 1 - t.s
		}
		r.Points = append(r.Points, CUSUMPoint{ProcedureID: o.id, Date: logbook.FormatDate(o.date), Success: o.success, Value: v, InPeriod: o.inPeriod})
		if r.AcceptableAt == 0 && v <= -t.h0 {
			r.AcceptableAt = i + 1
		}
		if r.UnacceptableAt == 0 && v >= t.h1 {
			r.UnacceptableAt = i + 1
		}
	}
	return r
}
