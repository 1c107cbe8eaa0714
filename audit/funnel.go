package audit

import (
	"fmt"
	"math"
	"polypledger/stats"
)

// FunnelIDs are the indicators the report draws funnel plots for.
func FunnelIDs() []string { return []string{"adr", "cir", "prep_adequate"} }

// FunnelPoint is one operator on a funnel plot: k of n and the rate, and
// whether the point lies outside the 95% and the 99.8% limits at its n.
type FunnelPoint struct {
	OperatorID string     `json:"operator_id"`
	N          int        `json:"n"`
	K          int        `json:"k"`
	Rate       float64    `json:"rate"`
	Outside95  stats.Side `json:"outside_95,omitempty"`
	Outside998 stats.Side `json:"outside_99_8,omitempty"`
}

// Funnel is the data of one funnel plot (Spiegelhalter DJ, "Funnel plots for
// comparing institutional performance", Stat Med 2005;24:1185–1202): each
// operator's rate against volume, the unit's pooled rate as target, and
// exact binomial control limits along a range of volumes for drawing.
type Funnel struct {
	IndicatorID string              `json:"indicator_id"`
	Target      float64             `json:"target"`
	Points      []FunnelPoint       `json:"points"`
	Limits      []stats.FunnelLimit `json:"limits"`
}

// NewFunnel builds the funnel plot of a proportion indicator from a metrics
// result: the target is the unit's pooled rate (its numerator over its
// denominator), every operator with a non-zero denominator is a point, and
// the limits run over about 150 volumes from 1 to a tenth beyond the largest
// operator.
func NewFunnel(r MetricsResult, id string) (Funnel, error) {
	unit, ok := Find(r.Unit.Indicators, id)
	if !ok {
		return Funnel{}, fmt.Errorf("funnel plot: no indicator %q in the result", id)
	}
	if !define(id).Percent() {
		return Funnel{}, fmt.Errorf("funnel plot: %s is not a rate", id)
	}
	if unit.Denominator == 0 {
		return Funnel{}, fmt.Errorf("funnel plot: %s has no cases in the period", id)
	}
	p0 := unit.Numerator / float64(unit.Denominator)
	f := Funnel{IndicatorID: id, Target: p0, Points: []FunnelPoint{}}
	maxN := 0
	for _, o := range r.Operators {
		ind, ok := Find(o.Indicators, id)
		if !ok || ind.Denominator == 0 {
			continue
		}
		n, k := ind.Denominator, int(ind.Numerator)
		rate := float64(k) / float64(n)
		at95, at998 := stats.FunnelLimitsAt(p0, n).Sides(rate)
		f.Points = append(f.Points, FunnelPoint{
			OperatorID: o.OperatorID, N: n, K: k, Rate: rate,
			Outside95: at95, Outside998: at998,
		})
		maxN = max(maxN, n)
	}
	f.Limits = funnelCurve(p0, max(10, int(math.Ceil(1.1*float64(maxN)))))
	return f, nil
}

// funnelCurve returns limits at whole volumes from 1 to top, spaced evenly on
// a log scale (every volume while they are few), so the curve is smooth where
// it bends most.
func funnelCurve(p0 float64, top int) []stats.FunnelLimit {
	const steps = 150
	out := make([]stats.FunnelLimit, 0, steps)
	last := 0
	for i := range steps {
		n := int(math.Round(math.Exp(math.Log(float64(top)) * float64(i) / (steps - 1))))
		if n <= last {
			continue
		}
		out = append(out, stats.FunnelLimitsAt(p0, n))
		last = n
	}
	return out
}

// Funnels builds the funnel plots of FunnelIDs that have cases in the
// period.
func Funnels(r MetricsResult) []Funnel {
	var out []Funnel
	for _, id := range FunnelIDs() {
		if f, err := NewFunnel(r, id); err == nil {
			out = append(out, f)
		}
	}
	return out
}
