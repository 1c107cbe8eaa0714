package audit

import (
	"testing"

	"polypledger/internal/fx"
	"polypledger/logbook"
	"polypledger/surveillance"
)

// TestPIVI2Lesion checks which lesions PIVI 2 counts and how the two
// readings score them (Rex DK et al., Gastrointest Endosc 2011;73:419–422,
// as defined in clinical-reference §3: SSL and TSA are "not adenoma" for
// pivi2_npv and positive for pivi2_npv_neoplasia).
func TestPIVI2Lesion(t *testing.T) {
	hcHP := fx.Call(logbook.OpticalHyperplastic, logbook.HighConfidence)
	rectum := fx.At(logbook.Rectum)
	tests := []struct {
		name                              string
		l                                 logbook.Lesion
		counts, notAdenoma, notNeoplastic bool
	}{
		{"hyperplastic", fx.Lesion(1, fx.HP, 3, rectum, hcHP), true, true, true},
		{"sigmoid counts", fx.Lesion(1, fx.HP, 5, fx.At(logbook.Sigmoid), hcHP), true, true, true},
		{"tubular adenoma", fx.Lesion(1, fx.TA, 3, rectum, hcHP), true, false, false},
		{"adenocarcinoma", fx.Lesion(1, fx.CA, 4, rectum, hcHP), true, false, false},
		{"SSL", fx.Lesion(1, fx.SSL, 3, rectum, hcHP), true, true, false},
		{"SSL with dysplasia", fx.Lesion(1, fx.SSLD, 3, rectum, hcHP), true, true, false},
		{"TSA", fx.Lesion(1, fx.TSA, 3, rectum, hcHP), true, true, false},
		{"normal", fx.Lesion(1, logbook.HistNormal, 3, rectum, hcHP), true, true, true},
		{"inflammatory", fx.Lesion(1, logbook.HistInflammatory, 3, rectum, hcHP), true, true, true},
		{"other", fx.Lesion(1, logbook.HistOther, 3, rectum, hcHP), true, true, true},
		{"6 mm", fx.Lesion(1, fx.HP, 6, rectum, hcHP), false, false, false},
		{"descending", fx.Lesion(1, fx.HP, 3, fx.At(logbook.Descending), hcHP), false, false, false},
		{"low confidence", fx.Lesion(1, fx.HP, 3, rectum, fx.Call(logbook.OpticalHyperplastic, logbook.LowConfidence)), false, false, false},
		{"called adenoma", fx.Lesion(1, fx.HP, 3, rectum, fx.Call(logbook.OpticalAdenoma, logbook.HighConfidence)), false, false, false},
		{"pending", fx.Lesion(1, "", 3, rectum, hcHP, fx.Awaiting), false, false, false},
		{"left in place", fx.Lesion(1, "", 3, rectum, hcHP, fx.Discarded), false, false, false},
	}
	for _, tc := range tests {
		c, a, n := PIVI2Lesion(&tc.l)
		if c != tc.counts || a != tc.notAdenoma || n != tc.notNeoplastic {
			t.Errorf("%s: got %v %v %v, want %v %v %v", tc.name, c, a, n, tc.counts, tc.notAdenoma, tc.notNeoplastic)
		}
	}
}

// pivi1Fixture returns procedures with hand-worked PIVI 1 outcomes under
// USMSTF 2020 (interval A from the optical calls, B from histology).
func pivi1Fixture() []struct {
	c                  *logbook.Case
	included           bool
	excluded           string
	optical, histology logbook.Interval
	kind               PIVI1Kind
} {
	hiAd := fx.Call(logbook.OpticalAdenoma, logbook.HighConfidence)
	hiHP := fx.Call(logbook.OpticalHyperplastic, logbook.HighConfidence)
	hiSSL := fx.Call(logbook.OpticalSSL, logbook.HighConfidence)
	rect := fx.At(logbook.Rectum)
	type row = struct {
		c                  *logbook.Case
		included           bool
		excluded           string
		optical, histology logbook.Interval
		kind               PIVI1Kind
	}
	return []row{
		// Called adenoma, histology adenoma: 1 adenoma both ways, 7–10 y.
		{fx.Case("Q1", fx.Lesion(1, fx.TA, 4, hiAd)), true, "", "7-10y", "7-10y", PIVI1Agree},
		// A shorter: called adenoma, histology hyperplastic. A: 1 adenoma
		// (7–10 y); B: only a small hyperplastic polyp (10 y).
		{fx.Case("Q2", fx.Lesion(1, fx.HP, 4, hiAd)), true, "", "7-10y", "10y", PIVI1OpticalShorter},
		// A longer: called hyperplastic, histology adenoma. A 10 y, B 7–10 y.
		{fx.Case("Q3", fx.Lesion(1, fx.TA, 4, hiHP)), true, "", "10y", "7-10y", PIVI1OpticalLonger},
		// A longer: three hyperplastic calls that were adenomas, and a 7 mm
		// adenoma read by histology both ways. A: 1 adenoma (7–10 y);
		// B: 4 adenomas (3–5 y).
		{fx.Case("Q4", fx.Join(fx.Lesions(1, 3, fx.TA, 3, hiHP), []logbook.Lesion{fx.Lesion(4, fx.TA, 7)})...), true, "", "7-10y", "3-5y", PIVI1OpticalLonger},
		// A outside: 11 rectal SSL calls, histology 9 SSL and 2 hyperplastic.
		// A: 11 SSL (outside); B: 9 SSL (3 y).
		{fx.Case("Q5", fx.Join(fx.Lesions(1, 9, fx.SSL, 3, rect, hiSSL), fx.Lesions(10, 2, fx.HP, 3, rect, hiSSL))...), true, "", "outside", "3y", PIVI1OpticalOutside},
		// A tubulovillous adenoma called adenoma reads as tubular under A:
		// A 7–10 y, B 3 y — longer.
		{fx.Case("Q6", fx.Lesion(1, fx.TVA, 5, hiAd)), true, "", "7-10y", "3y", PIVI1OpticalLonger},
		// Excluded: no eligible call (6 mm), low confidence only.
		{fx.Case("X1", fx.Lesion(1, fx.TA, 6, hiAd), fx.Lesion(2, fx.TA, 4, fx.Call(logbook.OpticalAdenoma, logbook.LowConfidence))), false, PIVI1NoEligibleLesion, "", "", ""},
		// Excluded: a lesion without histology (discarded), another pending.
		{fx.Case("X2", fx.Lesion(1, fx.TA, 4, hiAd), fx.Lesion(2, "", 3, hiAd, fx.Discarded)), false, PIVI1MissingHistology, "", "", ""},
		{fx.Case("X3", fx.Lesion(1, fx.TA, 4, hiAd), fx.Lesion(2, "", 8, fx.Awaiting)), false, PIVI1MissingHistology, "", "", ""},
		// Excluded: histology interval outside (cancer; IBD).
		{fx.Case("X4", fx.Lesion(1, fx.TA, 4, hiAd), fx.Lesion(2, fx.CA, 30)), false, PIVI1HistologyOutside, "", "", ""},
		{fx.Tweak(fx.Case("X5", fx.Lesion(1, fx.TA, 4, hiAd)), func(p *logbook.Procedure) { p.Exclusion = logbook.IBD }), false, PIVI1HistologyOutside, "", "", ""},
		// Excluded: exam gate (a Boston segment of 1).
		{fx.Tweak(fx.Case("X6", fx.Lesion(1, fx.TA, 4, hiAd)), func(p *logbook.Procedure) { p.BBPSLeft = 1 }), false, PIVI1ExamGate, "", "", ""},
		// Missing Boston scores pass the gate, and any indication counts.
		{fx.Tweak(fx.Case("Q7", fx.Lesion(1, fx.TA, 4, hiAd)), func(p *logbook.Procedure) {
			p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = logbook.NotRecorded, logbook.NotRecorded, logbook.NotRecorded
			p.Indication, p.Exclusion = logbook.Therapeutic, logbook.KnownNeoplasm
		}), true, "", "7-10y", "7-10y", PIVI1Agree},
	}
}

// TestEvaluatePIVI1 checks each worked example and the accumulated figure.
func TestEvaluatePIVI1(t *testing.T) {
	a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{MinCases: 5})
	for _, tc := range pivi1Fixture() {
		fx.Valid(t, tc.c)
		r := EvaluatePIVI1(surveillance.USMSTF2020, tc.c)
		if r.Included != tc.included || r.Excluded != tc.excluded || r.Kind != tc.kind ||
			r.Optical.Interval != tc.optical || r.Histology.Interval != tc.histology {
			t.Errorf("%s: got included %v (%q) A %q B %q kind %q; want %v (%q) %q %q %q", tc.c.ID,
				r.Included, r.Excluded, r.Optical.Interval, r.Histology.Interval, r.Kind,
				tc.included, tc.excluded, tc.optical, tc.histology, tc.kind)
		}
		a.Add(tc.c)
	}
	// Included Q1–Q7: agree Q1 Q7; shorter Q2; longer Q3 Q4 Q6; outside Q5.
	p := a.Detail().PIVI1
	wantProportion(t, p.Agreement, "pivi1_agreement", 2, 7)
	if p.Shorter != 1 || p.Longer != 3 || p.Outside != 1 || p.Agree != 2 || p.MissingHistology != 2 {
		t.Errorf("split %+v", p)
	}
	// 2/7 with 7 ≥ the local minimum of 5: judged below the PIVI 90%.
	if p.Agreement.Status != Below || valOf(p.Agreement.Target) != PIVIThreshold {
		t.Errorf("status %s target %v", p.Agreement.Status, valOf(p.Agreement.Target))
	}
	want := []IntervalDisagreement{
		{ProcedureID: "Q2", Optical: "7-10y", Histology: "10y", Kind: PIVI1OpticalShorter},
		{ProcedureID: "Q3", Optical: "10y", Histology: "7-10y", Kind: PIVI1OpticalLonger},
		{ProcedureID: "Q4", Optical: "7-10y", Histology: "3-5y", Kind: PIVI1OpticalLonger},
		{ProcedureID: "Q5", Optical: "outside", Histology: "3y", Kind: PIVI1OpticalOutside},
		{ProcedureID: "Q6", Optical: "7-10y", Histology: "3y", Kind: PIVI1OpticalLonger},
	}
	if len(p.Disagreements) != len(want) {
		t.Fatalf("disagreements %+v", p.Disagreements)
	}
	for i, w := range want {
		g := p.Disagreements[i]
		if g.ProcedureID != w.ProcedureID || g.Optical != w.Optical || g.Histology != w.Histology || g.Kind != w.Kind ||
			g.Patient != logbook.ShortCode(fx.Case("x").PatientKey) || g.OperatorID != "E01" || g.PerformedOn != "2026-03-02" {
			t.Errorf("disagreement %d: %+v, want %+v", i, g, w)
		}
	}
	// The eligibility figures repeat the split.
	e := a.Detail().Discard
	if e.IntervalsCompared != 7 || e.IntervalShorter != 1 || e.IntervalLonger != 3 || e.IntervalOutside != 1 {
		t.Errorf("eligibility interval figures %+v", e)
	}
}

// TestPIVI1GuidelineParameter: the same records under ESGE 2020, where one
// small adenoma and one small hyperplastic polyp both mean back to
// screening, so Q2 and Q3 agree.
func TestPIVI1GuidelineParameter(t *testing.T) {
	for _, tc := range pivi1Fixture()[1:3] {
		r := EvaluatePIVI1(surveillance.ESGE2020, tc.c)
		if !r.Included || r.Kind != PIVI1Agree || r.Optical.Interval != logbook.IntervalScreening {
			t.Errorf("%s under ESGE 2020: %+v", tc.c.ID, r)
		}
	}
	if NewOpticalAudit("no-such", DiscardSettings{}).Detail().PIVI1.Guideline != surveillance.DefaultGuideline {
		t.Errorf("unknown guideline not read as the default")
	}
}
