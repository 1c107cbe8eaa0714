package stats

import (
	"math"
	"testing"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

func TestWilsonCheckValues(t *testing.T) {
	// Newcombe RG, "Two-sided confidence intervals for the single proportion:
	// comparison of seven methods", Stat Med 1998;17:857–872, worked examples
	// (clinical-reference §6; they agree with Wilson's formula to 4 d.p.).
	cases := []struct {
		k, n   int
		lo, hi float64
	}{
		{81, 263, 0.2553, 0.3662},
		{15, 148, 0.0624, 0.1605},
		{0, 20, 0, 0.1611},
		{1, 29, 0.0061, 0.1718},
	}
	for _, c := range cases {
		got := Wilson(c.k, c.n)
		if !near(got.Low, c.lo, 5e-5) || !near(got.High, c.hi, 5e-5) {
			t.Errorf("Wilson(%d,%d) = %.4f–%.4f, want %.4f–%.4f", c.k, c.n, got.Low, got.High, c.lo, c.hi)
		}
	}
	if got := Wilson(0, 0); !math.IsNaN(got.Low) {
		t.Errorf("Wilson(0,0) = %v, want undefined", got)
	}
}

func TestClopperPearsonCheckValue(t *testing.T) {
	// Newcombe 1998 (single proportion), 81/263 → 0.2527–0.3676, reproduced by
	// recomputation (clinical-reference §6).
	got := ClopperPearson(81, 263, 0.95)
	if !near(got.Low, 0.2527, 5e-5) || !near(got.High, 0.3676, 5e-5) {
		t.Errorf("ClopperPearson(81,263) = %.4f–%.4f", got.Low, got.High)
	}
	// Edge: 0 of n has lower limit 0 and upper 1−(α/2)^(1/n) (exact formula).
	got = ClopperPearson(0, 20, 0.95)
	if got.Low != 0 || !near(got.High, 1-math.Pow(0.025, 1.0/20), 1e-9) {
		t.Errorf("ClopperPearson(0,20) = %v", got)
	}
}

func TestNewcombeDiffCheckValues(t *testing.T) {
	// Newcombe RG, "Interval estimation for the difference between
	// independent proportions: comparison of eleven methods", Stat Med
	// 1998;17:873–890, method 10, the paper's examples (clinical-reference §6).
	cases := []struct {
		k1, n1, k2, n2 int
		lo, hi         float64
	}{
		{56, 70, 48, 80, 0.0524, 0.3339},
		{9, 10, 3, 10, 0.1705, 0.8090},
		{5, 56, 0, 29, -0.0381, 0.1926},
		{10, 10, 0, 20, 0.6791, 1.0000},
	}
	for _, c := range cases {
		d, ci := NewcombeDiff(c.k1, c.n1, c.k2, c.n2)
		want := float64(c.k1)/float64(c.n1) - float64(c.k2)/float64(c.n2)
		if !near(d, want, 1e-12) || !near(ci.Low, c.lo, 5e-5) || !near(ci.High, c.hi, 5e-5) {
			t.Errorf("NewcombeDiff(%d/%d − %d/%d) = %.4f (%.4f to %.4f), want %.4f to %.4f",
				c.k1, c.n1, c.k2, c.n2, d, ci.Low, ci.High, c.lo, c.hi)
		}
	}
}

func TestPoissonExact(t *testing.T) {
	// Garwood 1936 exact limits; for k = 0 the upper 95% limit is
	// −ln(0.025) = 3.6889 (closed form of χ²(2, 0.975)/2).
	got := PoissonExact(0, 0.95)
	if got.Low != 0 || !near(got.High, -math.Log(0.025), 1e-9) {
		t.Errorf("PoissonExact(0) = %v", got)
	}
	// k = 10: 4.7954–18.3904 (standard tables of exact Poisson limits, e.g.
	// Documenta Geigy; reproduced by recomputation from χ² quantiles).
	got = PoissonExact(10, 0.95)
	if !near(got.Low, 4.7954, 5e-4) || !near(got.High, 18.3904, 5e-4) {
		t.Errorf("PoissonExact(10) = %.4f–%.4f", got.Low, got.High)
	}
}

func TestMeanT(t *testing.T) {
	// Values 6, 8, 10: mean 8, s = 2, t(2, 0.975) = 4.302653 (Student t
	// table), half-width 4.302653·2/√3 = 4.9683.
	m, ci := MeanT(24, 36+64+100, 3)
	if !near(m, 8, 1e-12) || !near(ci.Low, 8-4.9683, 1e-4) || !near(ci.High, 8+4.9683, 1e-4) {
		t.Errorf("MeanT = %v %v", m, ci)
	}
}
