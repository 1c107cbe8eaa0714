package audit

import (
	"math"

	"polypledger/logbook"
	"polypledger/stats"
)

// Status is an indicator's verdict against its target (clinical-reference §2,
// "Counting rules").
type Status string

// Verdicts.
const (
	Meets    Status = "meets"    // the value reaches the target
	Below    Status = "below"    // the value misses the target
	TooFew   Status = "too_few"  // fewer cases than the profile's minimum: not judged
	Reported Status = "reported" // no target in the profile
)

// Words returns the verdict as it is printed for people.
func (s Status) Words() string {
	switch s {
	case Meets:
		return "meets target"
	case Below:
		return "below target"
	case TooFew:
		return "too few cases to judge"
	}
	return "reported (no target)"
}

// Indicator is one computed figure in the form of the `metrics --format json`
// contract (architecture.md). Value and interval are nil when the denominator
// is 0; Target is nil when the profile sets none. Rates are proportions
// (0.30, not 30); per-1000 and per-100 figures are proportions too, with
// Scale telling how to print them.
type Indicator struct {
	ID          string   `json:"id"`
	Numerator   float64  `json:"numerator"`
	Denominator int      `json:"denominator"`
	Value       *float64 `json:"value"`
	CILow       *float64 `json:"ci_low"`
	CIHigh      *float64 `json:"ci_high"`
	Target      *float64 `json:"target"`
	Status      Status   `json:"status"`
	// Aspirational is the profile's higher target, where it sets one.
	Aspirational *float64 `json:"aspirational,omitempty"`
	// Maximum is true when the target is a ceiling (perforation, discomfort).
	Maximum bool `json:"maximum,omitempty"`
	// Scale is 1000 or 100 for figures printed per 1000 or per 100, copied
	// from the catalogue (Definition.Scale).
	Scale int `json:"scale,omitempty"`
	// Kind says how to read Value, copied from the catalogue
	// (Definition.Kind); left out of JSON for a proportion.
	Kind Kind `json:"kind,omitempty"`
	// AwaitingHistology counts the denominator's cases still waiting for
	// histology, for the detection indicators.
	AwaitingHistology int `json:"awaiting_histology,omitempty"`
	// Strict is true when the target must be passed, not merely reached:
	// the source says "below" or "above" (discomfort below 10%), so a value
	// exactly at the target does not meet it. Printed as "<" or ">".
	Strict bool `json:"strict,omitempty"`
	// Note is one plain sentence every output prints beside the figure when
	// the bare numbers would mislead: cases left out of the denominator and
	// why, or why the figure is reported rather than judged.
	Note string `json:"note,omitempty"`
}

// Target is what a profile asks of one indicator.
type Target struct {
	Minimum      *float64 `json:"minimum,omitempty"`
	Maximum      *float64 `json:"maximum,omitempty"`
	Aspirational *float64 `json:"aspirational,omitempty"`
	// Strict is true when the source asks for a value strictly below a
	// maximum or strictly above a minimum ("below 10%", "less than 1 per
	// 1000"): a value exactly at the target then does not meet it
	// (clinical-reference §2, "Verdict").
	Strict bool `json:"strict,omitempty"`
	// Source names the publication (and table) the figures come from, so a
	// profile file carries its own references.
	Source string `json:"source,omitempty"`
}

// ptr returns a pointer to v, or nil when v is NaN.
func ptr(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}

// Judge sets ind's Target, Aspirational, Maximum, Strict and Status from t
// and the minimum case count: too_few under minCases, reported without a
// target, otherwise meets when the value reaches the target (≥ a minimum,
// ≤ a maximum; > and < when the target is strict) and below when not.
func (ind *Indicator) Judge(t *Target, minCases int) {
	var target *float64
	ind.Maximum, ind.Strict = false, false
	if t != nil {
		if t.Minimum != nil {
			target = t.Minimum
		} else if t.Maximum != nil {
			target = t.Maximum
			ind.Maximum = true
		}
		ind.Aspirational = t.Aspirational
		ind.Strict = target != nil && t.Strict
	}
	ind.Target = target
	switch {
	case target == nil:
		ind.Status = Reported
	case ind.Denominator < minCases || ind.Value == nil:
		ind.Status = TooFew
	case meetsTarget(*ind.Value, *target, ind.Maximum, ind.Strict):
		ind.Status = Meets
	default:
		ind.Status = Below
	}
}

// meetsTarget compares a value with its target: at most (maximum), at
// least (minimum), or strictly below or above when strict.
func meetsTarget(v, target float64, maximum, strict bool) bool {
	switch {
	case maximum && strict:
		return v < target
	case maximum:
		return v <= target
	case strict:
		return v > target
	}
	return v >= target
}

// TargetSign is the comparison a target asks for, as printed before it:
// "≥" for a minimum, "≤" for a maximum, ">" and "<" when strict.
func TargetSign(maximum, strict bool) string {
	switch {
	case maximum && strict:
		return "<"
	case maximum:
		return "≤"
	case strict:
		return ">"
	}
	return "≥"
}

// newIndicator starts the indicator id over numerator and denominator, with
// the kind and scale its catalogue entry gives it.
func newIndicator(id string, numerator float64, denominator int) Indicator {
	d := define(id)
	return Indicator{ID: id, Numerator: numerator, Denominator: denominator, Kind: d.Kind, Scale: d.Scale}
}

// Proportion builds an indicator for k of n with its Wilson 95% interval.
func Proportion(id string, k, n int) Indicator {
	ind := newIndicator(id, float64(k), n)
	if n > 0 {
		ci := stats.Wilson(k, n)
		ind.Value, ind.CILow, ind.CIHigh = ptr(float64(k)/float64(n)), ptr(ci.Low), ptr(ci.High)
	}
	return ind
}

// ExactProportion builds an indicator for k of n with its Clopper–Pearson
// 95% interval, used for rare events.
func ExactProportion(id string, k, n int) Indicator {
	ind := newIndicator(id, float64(k), n)
	if n > 0 {
		ci := stats.ClopperPearson(k, n, 0.95)
		ind.Value, ind.CILow, ind.CIHigh = ptr(float64(k)/float64(n)), ptr(ci.Low), ptr(ci.High)
	}
	return ind
}

// Accumulator consumes the cases of one population (the unit, or one
// operator) in a single streaming pass and then reports its indicators. The
// metrics engine keeps one per population per kind of figure, so no case is
// held in memory after it has been added.
type Accumulator interface {
	// Add counts one case. The case and its lesions must not be retained.
	Add(c *logbook.Case)
	// Indicators returns the figures over every case added so far, judged
	// against the profile the accumulator was made with.
	Indicators() []Indicator
}
