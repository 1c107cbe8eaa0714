package stats

import "testing"

func TestCUSUMCheckValues(t *testing.T) {
	// clinical-reference §5, computed from Bolsin & Colson's formulas
	// (Int J Qual Health Care 2000;12:433–438) with p0 0.10, p1 0.20,
	// α = β = 0.10: s = 0.1452, h0 = h1 = 2.7095.
	s, h0, h1, err := DefaultCUSUM().Limits()
	if err != nil {
		t.Fatal(err)
	}
	if !near(s, 0.1452, 5e-5) || !near(h0, 2.7095, 5e-5) || !near(h1, 2.7095, 5e-5) {
		t.Errorf("s %.4f h0 %.4f h1 %.4f", s, h0, h1)
	}
	for _, bad := range []CUSUMParams{{0.2, 0.1, 0.1, 0.1}, {0, 0.2, 0.1, 0.1}, {0.1, 0.2, 0, 0.1}, {0.1, 1, 0.1, 0.1}} {
		if _, _, _, err := bad.Limits(); err == nil {
			t.Errorf("params %+v accepted", bad)
		}
	}
}
