package report

// The printed forms of an indicator, shared by the terminal table, the
// desktop app's scorecards and anything else that shows figures to people,
// so that every screen and file prints a figure the same way.

// ValueText returns an indicator's value as people read it: a percentage to
// one decimal for rates, "per 1000" or "per 100" for scaled figures, minutes
// for means, and "–" when the value is undefined (no cases).
func ValueText(ind Indicator) string { return valueText(ind, ind.Value) }

// IntervalText returns the 95% interval in brackets in the value's unit, or
// "" when there is none.
func IntervalText(ind Indicator) string { return intervalText(ind) }

// TargetText returns the target as "≥ 35.0%" or "≤ 1.0 per 1000", with the
// aspirational aim in brackets where the profile sets one; "" without a
// target.
func TargetText(ind Indicator) string { return targetText(ind) }

// CasesText returns the count behind a figure: "k/n" for proportions and the
// number of cases (or days) otherwise.
func CasesText(ind Indicator) string { return casesText(ind) }
