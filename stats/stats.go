package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// CI is a two-sided confidence interval (not a surveillance interval,
// which is logbook.Interval). Both ends are NaN when it is
// undefined (no observations).
type CI struct{ Low, High float64 }

// z95 is the standard normal 97.5% quantile, 1.959963985… (clinical-reference §6).
var z95 = distuv.UnitNormal.Quantile(0.975)

// Z returns the two-sided standard normal critical value for confidence level
// conf (0.95 gives 1.959963985).
func Z(conf float64) float64 { return distuv.UnitNormal.Quantile(1 - (1-conf)/2) }

func undefined() CI { return CI{math.NaN(), math.NaN()} }

// Wilson returns the 95% Wilson score interval for k successes of n (Wilson
// EB, J Am Stat Assoc 1927;22:209–212): centre (k + z²/2)/(n + z²),
// half-width z·√(k(n−k)/n + z²/4)/(n + z²).
func Wilson(k, n int) CI { return WilsonZ(k, n, z95) }

// WilsonZ is Wilson with a chosen critical value z.
func WilsonZ(k, n int, z float64) CI {
	if n <= 0 || k < 0 || k > n {
		return undefined()
	}
	fk, fn := float64(k), float64(n)
	z2 := z * z
	centre := (fk + z2/2) / (fn + z2)
	half := z * math.Sqrt(fk*(fn-fk)/fn+z2/4) / (fn + z2)
	lo, hi := centre-half, centre+half
	if k == 0 {
		lo = 0
	}
	if k == n {
		hi = 1
	}
	return CI{math.Max(0, lo), math.Min(1, hi)}
}

// ClopperPearson returns the exact binomial interval at confidence conf: the
// α/2 quantile of Beta(k, n−k+1) to the 1−α/2 quantile of Beta(k+1, n−k),
// with 0 and 1 at the ends where k is 0 or n.
func ClopperPearson(k, n int, conf float64) CI {
	if n <= 0 || k < 0 || k > n {
		return undefined()
	}
	a := (1 - conf) / 2
	lo, hi := 0.0, 1.0
	if k > 0 {
		lo = distuv.Beta{Alpha: float64(k), Beta: float64(n - k + 1)}.Quantile(a)
	}
	if k < n {
		hi = distuv.Beta{Alpha: float64(k + 1), Beta: float64(n - k)}.Quantile(1 - a)
	}
	return CI{lo, hi}
}

// PoissonExact returns the exact (Garwood 1936) interval at confidence conf
// for an observed count k: lower χ²(2k, α/2)/2, upper χ²(2k+2, 1−α/2)/2.
func PoissonExact(k int, conf float64) CI {
	if k < 0 {
		return undefined()
	}
	a := (1 - conf) / 2
	lo := 0.0
	if k > 0 {
		lo = distuv.ChiSquared{K: float64(2 * k)}.Quantile(a) / 2
	}
	hi := distuv.ChiSquared{K: float64(2*k + 2)}.Quantile(1-a) / 2
	return CI{lo, hi}
}

// NewcombeDiff returns the difference k1/n1 − k2/n2 with Newcombe's hybrid
// score 95% interval (method 10 of Newcombe RG, Stat Med 1998;17:873–890),
// built from the two Wilson intervals.
func NewcombeDiff(k1, n1, k2, n2 int) (diff float64, ci CI) {
	if n1 <= 0 || n2 <= 0 {
		return math.NaN(), undefined()
	}
	p1, p2 := float64(k1)/float64(n1), float64(k2)/float64(n2)
	w1, w2 := Wilson(k1, n1), Wilson(k2, n2)
	d := p1 - p2
	lo := d - math.Sqrt((p1-w1.Low)*(p1-w1.Low)+(w2.High-p2)*(w2.High-p2))
	hi := d + math.Sqrt((w1.High-p1)*(w1.High-p1)+(p2-w2.Low)*(p2-w2.Low))
	return d, CI{lo, hi}
}

// MeanT returns the mean of values summed as sum and sumSq over n
// observations with its 95% Student t interval. One observation gives a mean
// with an undefined interval.
func MeanT(sum, sumSq float64, n int) (mean float64, ci CI) {
	if n <= 0 {
		return math.NaN(), undefined()
	}
	fn := float64(n)
	mean = sum / fn
	if n == 1 {
		return mean, undefined()
	}
	v := (sumSq - sum*sum/fn) / (fn - 1)
	if v < 0 {
		v = 0 // rounding
	}
	se := math.Sqrt(v / fn)
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: fn - 1}.Quantile(0.975)
	return mean, CI{mean - t*se, mean + t*se}
}
