package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Side says on which side of a control limit a point falls: "" within,
// "above" or "below".
type Side string

// Sides of a control limit.
const (
	SideWithin Side = ""
	SideAbove  Side = "above"
	SideBelow  Side = "below"
)

// FunnelLimit is the pair of 95% and 99.8% control limits at volume n.
type FunnelLimit struct {
	N       int     `json:"n"`
	Low95   float64 `json:"low_95"`
	High95  float64 `json:"high_95"`
	Low998  float64 `json:"low_99_8"`
	High998 float64 `json:"high_99_8"`
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

// Sides places rate against the limits at their volume: outside the 95%
// limits (at95) and outside the 99.8% limits (at998), a point on a limit
// being within.
func (l FunnelLimit) Sides(rate float64) (at95, at998 Side) {
	return side(rate, l.Low95, l.High95), side(rate, l.Low998, l.High998)
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
