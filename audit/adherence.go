package audit

import (
	"cmp"
	"fmt"
	"slices"
	"strings"

	"polypledger/logbook"
	"polypledger/surveillance"
)

// Adherence is the accumulator of `interval_adherence` (clinical-reference
// §4, "Interval adherence indicator"): procedures whose recorded
// recommended_interval equals the interval the program computes under its
// guideline, over procedures with a recorded recommendation and a computed
// interval. A computed "pending" is not yet an interval: such a procedure
// leaves the denominator, and the figure's Note says how many were left
// out. The codes are compared literally, so a recorded "3y" matches a
// computed "3y" only, and a recorded recommendation on a procedure the
// program calls "repeat" or "outside" counts as adherent only when the same
// code was recorded. It counts every procedure of its population in the
// period, and keeps the list of procedures whose recommendation differs.
type Adherence struct {
	guideline  surveillance.Guideline
	target     *Target
	minCases   int
	n, matched int
	awaiting   int // recommendation recorded, computed interval pending
	mismatches []AdherenceMismatch
	iv         *caseIntervals // shared within a Pass; nil on its own
}

// AdherenceMismatch is one procedure whose recorded recommendation differs
// from the computed interval.
type AdherenceMismatch struct {
	ProcedureID string           `json:"procedure_id"`
	Patient     string           `json:"patient"` // logbook.ShortCode of the pseudonym
	OperatorID  string           `json:"operator_id"`
	Recorded    logbook.Interval `json:"recorded"`
	Computed    logbook.Interval `json:"computed"`
}

// NewAdherence returns an interval_adherence accumulator under guideline g,
// reported without a target.
func NewAdherence(g surveillance.Guideline) Accumulator { return NewAdherenceJudged(g, nil, 0) }

// NewAdherenceJudged returns an interval_adherence accumulator judged
// against t (nil: reported) with minCases as the too_few minimum, for a
// profile that sets a target.
func NewAdherenceJudged(g surveillance.Guideline, t *Target, minCases int) *Adherence {
	if _, err := surveillance.ParseGuideline(string(g)); err != nil {
		g = surveillance.DefaultGuideline
	}
	return &Adherence{guideline: g, target: t, minCases: minCases}
}

// Add counts one case; only a mismatch is remembered, by id.
func (a *Adherence) Add(c *logbook.Case) {
	if c.RecommendedInterval == "" {
		return
	}
	got := a.iv.histologyFirst(a.guideline, c).Interval
	if got == logbook.IntervalPending {
		a.awaiting++
		return
	}
	a.n++
	if got == c.RecommendedInterval {
		a.matched++
		return
	}
	a.mismatches = append(a.mismatches, AdherenceMismatch{
		ProcedureID: strings.Clone(c.ID), Patient: a.iv.shortCode(c),
		OperatorID: strings.Clone(c.OperatorID), Recorded: c.RecommendedInterval, Computed: got,
	})
}

// Indicators returns interval_adherence, with a Note counting the
// procedures left out because their interval awaits histology.
func (a *Adherence) Indicators() []Indicator {
	ind := Proportion("interval_adherence", a.matched, a.n)
	ind.Judge(a.target, a.minCases)
	if a.awaiting > 0 {
		ind.Note = plural(a.awaiting, "procedure") + " awaiting histology left out"
	}
	return []Indicator{ind}
}

// Mismatches returns the procedures whose recorded recommendation differs
// from the computed interval, in the order added.
func (a *Adherence) Mismatches() []AdherenceMismatch {
	out := append([]AdherenceMismatch(nil), a.mismatches...)
	slices.SortFunc(out, func(x, y AdherenceMismatch) int { return cmp.Compare(x.ProcedureID, y.ProcedureID) })
	return out
}

// AdherenceFactory returns a factory for the metrics engine's Extra list
// (it converts to AccumulatorFactory); t and minCases as for
// NewAdherenceJudged.
func AdherenceFactory(g surveillance.Guideline, t *Target, minCases int) func() Accumulator {
	return func() Accumulator { return NewAdherenceJudged(g, t, minCases) }
}

// plural returns "1 word" or "n words".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}
