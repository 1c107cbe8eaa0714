package report

import (
	"testing"

	"polypledger/logbook"
)

func recommended(iv logbook.Interval) func(p *logbook.Procedure) {
	return func(p *logbook.Procedure) { p.RecommendedInterval = iv }
}

// TestAdherence compares recorded recommendations with computed intervals,
// code for code.
func TestAdherence(t *testing.T) {
	incomplete := func(p *logbook.Procedure) {
		p.Extent, p.IncompleteReason, p.RecommendedInterval = logbook.ExtentIncomplete, logbook.ReasonPoorPrep, logbook.IntervalRepeat
	}
	cases := []*logbook.Case{
		fxTweak(fxCase("A1"), recommended("10y")),                                // computed 10y (USMSTF) / screening (ESGE)
		fxTweak(fxCase("A2", fxLesion(1, hTA, 4)), recommended("5-10y")),         // computed 7-10y (USMSTF) / screening (ESGE)
		fxTweak(fxCase("A3"), incomplete),                                        // computed repeat under both
		fxCase("A4", fxLesion(1, hTA, 12)),                                       // no recommendation: not counted
		fxTweak(fxCase("A5", fxLesion(1, hTA, 12)), recommended("3y")),           // computed 3y under both
		fxTweak(fxCase("A6", fxLesion(1, "", 7, fxAwaiting)), recommended("3y")), // computed pending
	}
	tests := []struct {
		g          Guideline
		matched, n int
		mismatched []string
	}{
		// USMSTF 2020: A1, A3, A5 match; A2 and A6 do not; A4 not counted.
		{USMSTF2020, 3, 5, []string{"A2", "A6"}},
		// ESGE 2020: A3, A5 match; A1 (10y recorded, screening computed), A2, A6 do not.
		{ESGE2020, 2, 5, []string{"A1", "A2", "A6"}},
	}
	for _, tc := range tests {
		a := NewAdherenceJudged(tc.g, nil, 0)
		for _, c := range cases {
			checkValid(t, c)
			a.Add(c)
		}
		inds := a.Indicators()
		if len(inds) != 1 || inds[0].Status != Reported || inds[0].Target != nil {
			t.Fatalf("%s: %+v", tc.g, inds)
		}
		wantProportion(t, inds[0], "interval_adherence", tc.matched, tc.n)
		ms := a.Mismatches()
		if len(ms) != len(tc.mismatched) {
			t.Fatalf("%s: mismatches %+v", tc.g, ms)
		}
		for i, id := range tc.mismatched {
			if ms[i].ProcedureID != id || ms[i].Recorded == ms[i].Computed || ms[i].Patient == "" {
				t.Errorf("%s: mismatch %d %+v, want %s", tc.g, i, ms[i], id)
			}
		}
	}
	// A profile target judges it; NewAdherence reports without one.
	target := 0.9
	a := NewAdherenceJudged(USMSTF2020, &Target{Minimum: &target}, 3)
	for _, c := range cases {
		a.Add(c)
	}
	if ind := a.Indicators()[0]; ind.Status != Below {
		t.Errorf("judged: %+v", ind)
	}
	var acc Accumulator = NewAdherence(BSG2020)
	acc.Add(cases[0])
	if ind := acc.Indicators()[0]; ind.Status != Reported || ind.Denominator != 1 || ind.Numerator != 0 {
		t.Errorf("NewAdherence: %+v", ind)
	}
	var f AccumulatorFactory = AdherenceFactory(USMSTF2020, nil, 0)
	if f() == f() {
		t.Errorf("factory returned a shared accumulator")
	}
	var of AccumulatorFactory = OpticalAuditFactory(USMSTF2020, EligibilitySettings{})
	if of() == of() {
		t.Errorf("factory returned a shared accumulator")
	}
}
