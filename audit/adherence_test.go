package audit

import (
	"testing"

	"polypledger/internal/fx"
	"polypledger/logbook"
	"polypledger/surveillance"
)

func recommended(iv logbook.Interval) func(p *logbook.Procedure) {
	return func(p *logbook.Procedure) { p.RecommendedInterval = iv }
}

// TestAdherence compares recorded recommendations with computed intervals,
// code for code. A procedure whose computed interval is pending is not yet
// an interval: it leaves the denominator and the Note counts it
// (clinical-reference §4, "Interval adherence indicator").
func TestAdherence(t *testing.T) {
	incomplete := func(p *logbook.Procedure) {
		p.Extent, p.IncompleteReason, p.RecommendedInterval = logbook.ExtentIncomplete, logbook.ReasonPoorPrep, logbook.IntervalRepeat
	}
	cases := []*logbook.Case{
		fx.Tweak(fx.Case("A1"), recommended("10y")),                                       // computed 10y (USMSTF) / screening (ESGE)
		fx.Tweak(fx.Case("A2", fx.Lesion(1, fx.TA, 4)), recommended("5-10y")),             // computed 7-10y (USMSTF) / screening (ESGE)
		fx.Tweak(fx.Case("A3"), incomplete),                                               // computed repeat under both
		fx.Case("A4", fx.Lesion(1, fx.TA, 12)),                                            // no recommendation: not counted
		fx.Tweak(fx.Case("A5", fx.Lesion(1, fx.TA, 12)), recommended("3y")),               // computed 3y under both
		fx.Tweak(fx.Case("A6", fx.Lesion(1, "", 7, fx.Awaiting)), recommended("3y")),      // computed pending: left out
		fx.Tweak(fx.Case("A7", fx.Lesion(1, "", 9, fx.Awaiting)), recommended("pending")), // computed pending: left out, even recorded so
		// A cancer beside a pending lesion is outside, not pending: counted.
		fx.Tweak(fx.Case("A8", fx.Lesion(1, fx.CA, 20), fx.Lesion(2, "", 5, fx.Awaiting)), recommended("outside")),
		// No specimen: read as a 4 mm tubular adenoma, so counted.
		fx.Tweak(fx.Case("A9", fx.Lesion(1, "", 4, fx.NotRetrieved)), recommended("7-10y")), // 7-10y (USMSTF) / screening (ESGE)
	}
	tests := []struct {
		g          surveillance.Guideline
		matched, n int
		mismatched []string
	}{
		// USMSTF 2020: A1, A3, A5, A8, A9 match; A2 does not; A4 has no
		// recommendation; A6 and A7 await histology.
		{surveillance.USMSTF2020, 5, 6, []string{"A2"}},
		// ESGE 2020: A3, A5, A8 match; A1 (10y recorded, screening
		// computed), A2 and A9 do not.
		{surveillance.ESGE2020, 3, 6, []string{"A1", "A2", "A9"}},
	}
	for _, tc := range tests {
		a := NewAdherenceJudged(tc.g, nil, 0)
		for _, c := range cases {
			fx.Valid(t, c)
			a.Add(c)
		}
		inds := a.Indicators()
		if len(inds) != 1 || inds[0].Status != Reported || inds[0].Target != nil {
			t.Fatalf("%s: %+v", tc.g, inds)
		}
		wantProportion(t, inds[0], "interval_adherence", tc.matched, tc.n)
		if inds[0].Note != "2 procedures awaiting histology left out" {
			t.Errorf("%s: note %q", tc.g, inds[0].Note)
		}
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
	a := NewAdherenceJudged(surveillance.USMSTF2020, &Target{Minimum: &target}, 3)
	for _, c := range cases {
		a.Add(c)
	}
	if ind := a.Indicators()[0]; ind.Status != Below {
		t.Errorf("judged: %+v", ind)
	}
	var acc Accumulator = NewAdherence(surveillance.BSG2020)
	acc.Add(cases[0])
	if ind := acc.Indicators()[0]; ind.Status != Reported || ind.Denominator != 1 || ind.Numerator != 0 || ind.Note != "" {
		t.Errorf("NewAdherence: %+v", ind)
	}
	acc.Add(cases[5])
	if ind := acc.Indicators()[0]; ind.Denominator != 1 || ind.Note != "1 procedure awaiting histology left out" {
		t.Errorf("one pending: %+v", ind)
	}
	var f AccumulatorFactory = AdherenceFactory(surveillance.USMSTF2020, nil, 0)
	if f() == f() {
		t.Errorf("factory returned a shared accumulator")
	}
	var of AccumulatorFactory = OpticalAuditFactory(surveillance.USMSTF2020, DiscardSettings{})
	if of() == of() {
		t.Errorf("factory returned a shared accumulator")
	}
}
