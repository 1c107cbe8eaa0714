package stats

import (
	"math"
	"testing"
)

// binomCDF is an independent recomputation of the binomial distribution
// function by summing the probability mass, for checking the funnel limits.
func binomCDF(r, n int, p float64) float64 {
	sum := 0.0
	for i := 0; i <= r; i++ {
		lg1, _ := math.Lgamma(float64(n + 1))
		lg2, _ := math.Lgamma(float64(i + 1))
		lg3, _ := math.Lgamma(float64(n - i + 1))
		sum += math.Exp(lg1 - lg2 - lg3 + float64(i)*math.Log(p) + float64(n-i)*math.Log(1-p))
	}
	return sum
}

func TestFunnelLimitsWorkedCheck(t *testing.T) {
	// Spiegelhalter DJ, Stat Med 2005;24:1185–1202, appendix: r_q is the
	// smallest count with P(R ≤ r_q) ≥ q; α = (P(R ≤ r_q) − q)/(P(R ≤ r_q) −
	// P(R ≤ r_q − 1)); the limit is (r_q − α)/n. Worked at p = 0.3, n = 100,
	// with the quantile recomputed here by summing the binomial mass.
	const p, n = 0.3, 100
	for _, q := range []float64{0.001, 0.025, 0.975, 0.999} {
		r := 0
		for binomCDF(r, n, p) < q {
			r++
		}
		fr, fr1 := binomCDF(r, n, p), binomCDF(r-1, n, p)
		want := (float64(r) - (fr-q)/(fr-fr1)) / n
		if got := binomialLimit(p, n, q); !near(got, want, 1e-9) {
			t.Errorf("limit q=%v: %v, want %v (r=%d)", q, got, want, r)
		}
	}
	// The 95% limits lie near the normal approximation 0.3 ± 1.96·√(0.21/100)
	// = 0.210 to 0.390 (common practice as a sanity check), and the exact
	// 97.5% quantile of Binomial(100, 0.3) is 39.
	l := FunnelLimitsAt(p, n)
	if math.Abs(l.Low95-0.210) > 0.01 || math.Abs(l.High95-0.390) > 0.01 || !(l.Low998 < l.Low95 && l.High95 < l.High998) {
		t.Errorf("limits at n=100: %+v", l)
	}
	r := 0
	for binomCDF(r, n, p) < 0.975 {
		r++
	}
	if r != 39 || l.High95 > 0.39 || l.High95 < 0.38 {
		t.Errorf("97.5%% quantile %d, upper 95%% limit %v", r, l.High95)
	}
}
