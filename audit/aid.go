package audit

import "polypledger/stats"

// aidDifference is ADR with computer-aided detection minus ADR without it,
// with Newcombe's hybrid score interval (method 10 of Newcombe RG, Stat Med
// 1998;17:873–890). It is a comparison, never judged against a target.
// Numerator and denominator are the two groups' pooled counts; the value and
// interval are nil unless both groups have procedures.
func aidDifference(with, without detectionCount, p *Profile) Indicator {
	ind := newIndicator("adr_aid_difference", float64(with.k+without.k), with.n+without.n)
	ind.AwaitingHistology = with.awaiting + without.awaiting
	if with.n > 0 && without.n > 0 {
		d, ci := stats.NewcombeDiff(with.k, with.n, without.k, without.n)
		ind.Value, ind.CILow, ind.CIHigh = ptr(d), ptr(ci.Low), ptr(ci.High)
	}
	ind.Judge(nil, p.MinCases)
	return ind
}

// AidComparison is ADR with and without computer-aided detection for one
// population, and their difference, as the report's comparison table shows
// them.
type AidComparison struct {
	// OperatorID is the operator, or "" for the whole unit.
	OperatorID string    `json:"operator_id"`
	With       Indicator `json:"with_aid"`
	Without    Indicator `json:"without_aid"`
	Difference Indicator `json:"difference"`
}

// AidComparisons picks the detection-aid figures out of a metrics result:
// the unit first, then each operator in the result's order.
func AidComparisons(r MetricsResult) []AidComparison {
	pick := func(op string, inds []Indicator) AidComparison {
		c := AidComparison{OperatorID: op}
		for _, ind := range inds {
			switch ind.ID {
			case "adr_with_aid":
				c.With = ind
			case "adr_without_aid":
				c.Without = ind
			case "adr_aid_difference":
				c.Difference = ind
			}
		}
		return c
	}
	out := []AidComparison{pick("", r.Unit.Indicators)}
	for _, o := range r.Operators {
		out = append(out, pick(o.OperatorID, o.Indicators))
	}
	return out
}
