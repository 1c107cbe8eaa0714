package audit

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// FunnelIDs are the indicators the report draws funnel plots for.
func FunnelIDs() []string { return []string{"adr", "cir", "prep_adequate"} }

// Side says on which side of a control limit a point falls: "" within,
// "above" or "below".
type Side string

// Sides of a control limit.
const (
	SideWithin Side = ""
	SideAbove  Side = "above"
	SideBelow  Side = "below"
)

// FunnelPoint is one operator on a funnel plot: k of n and the rate, and
// whether the point lies outside the 95% and the 99.8% limits at its n.
type FunnelPoint struct {
	OperatorID string  `json:"operator_id"`
	N          int     `json:"n"`
	K          int     `json:"k"`
	Rate       float64 `json:"rate"`
	Outside95  Side    `json:"outside_95,omitempty"`
	Outside998 Side    `json:"outside_99_8,omitempty"`
}

// FunnelLimit is the pair of 95% and 99.8% control limits at volume n.
type FunnelLimit struct {
	N       int     `json:"n"`
	Low95   float64 `json:"low_95"`
	High95  float64 `json:"high_95"`
	Low998  float64 `json:"low_99_8"`
	High998 float64 `json:"high_99_8"`
}

// Funnel is the data of one funnel plot (Spiegelhalter DJ, "Funnel plots for
// comparing institutional performance", Stat Med 2005;24:1185–1202): each
// operator's rate against volume, the unit's pooled rate as target, and
// exact binomial control limits along a range of volumes for drawing.
type Funnel struct {
	IndicatorID string        `json:"indicator_id"`
	Target      float64       `json:"target"`
	Points      []FunnelPoint `json:"points"`
	Limits      []FunnelLimit `json:"limits"`
}

// binomialLimit is the exact binomial control limit for a target proportion
// p0 at volume n and cumulative probability q, with Spiegelhalter's
// interpolation (Stat Med 2005, appendix): r is the smallest count with
// P(R ≤ r) ≥ q, α = (P(R ≤ r) − q) / (P(R ≤ r) − P(R ≤ r−1)), and the limit
// is (r − α)/n, kept within 0–1. The distribution is gonum's.
func binomialLimit(p0 float64, n int, q float64) float64 {
	if n <= 0 {
		return math.NaN()
	}
	if p0 <= 0 || p0 >= 1 {
		return p0 // a degenerate target has no spread
	}
	b := distuv.Binomial{N: float64(n), P: p0}
	lo, hi := 0, n
	for lo < hi {
		mid := (lo + hi) / 2
		if b.CDF(float64(mid)) >= q {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	r := lo
	fr := b.CDF(float64(r))
	fr1 := 0.0
	if r > 0 {
		fr1 = b.CDF(float64(r - 1))
	}
	alpha := 0.0
	if fr > fr1 {
		alpha = (fr - q) / (fr - fr1)
	}
	return math.Min(1, math.Max(0, (float64(r)-alpha)/float64(n)))
}

// FunnelLimitsAt returns the 95% (2.5% and 97.5%) and 99.8% (0.1% and
// 99.9%) control limits around target p0 at volume n.
func FunnelLimitsAt(p0 float64, n int) FunnelLimit {
	return FunnelLimit{
		N:       n,
		Low95:   binomialLimit(p0, n, 0.025),
		High95:  binomialLimit(p0, n, 0.975),
		Low998:  binomialLimit(p0, n, 0.001),
		High998: binomialLimit(p0, n, 0.999),
	}
}

// side places rate against the limits lo and hi: a point on a limit is
// within.
func side(rate, lo, hi float64) Side {
	switch {
	case rate < lo:
		return SideBelow
	case rate > hi:
		return SideAbove
	}
	return SideWithin
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
	if unit.Kind != "" && unit.Kind != "proportion" || unit.Scale != 0 {
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
		l := FunnelLimitsAt(p0, n)
		f.Points = append(f.Points, FunnelPoint{
			OperatorID: o.OperatorID, N: n, K: k, Rate: rate,
			Outside95: side(rate, l.Low95, l.High95), Outside998: side(rate, l.Low998, l.High998),
		})
		maxN = max(maxN, n)
	}
	f.Limits = funnelCurve(p0, max(10, int(math.Ceil(1.1*float64(maxN)))))
	return f, nil
}

// funnelCurve returns limits at whole volumes from 1 to top, spaced evenly on
// a log scale (every volume while they are few), so the curve is smooth where
// it bends most.
func funnelCurve(p0 float64, top int) []FunnelLimit {
	const steps = 150
	out := make([]FunnelLimit, 0, steps)
	last := 0
	for i := range steps {
		n := int(math.Round(math.Exp(math.Log(float64(top)) * float64(i) / (steps - 1))))
		if n <= last {
			continue
		}
		out = append(out, FunnelLimitsAt(p0, n))
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
