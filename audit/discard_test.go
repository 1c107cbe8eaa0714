package audit

import (
	"strings"
	"testing"

	"polypledger/internal/fx"
	"polypledger/logbook"
	"polypledger/stats"
	"polypledger/surveillance"
)

func TestDiscardSettings(t *testing.T) {
	s := DiscardSettings{}.WithDefaults()
	if s.MinCases != 30 || s.RuleSet != RuleSetPIVI {
		t.Errorf("defaults %+v", s)
	}
	if d := DefaultDiscardSettings(); d != s {
		t.Errorf("DefaultDiscardSettings %+v", d)
	}
	if s := (DiscardSettings{MinCases: 12, RuleSet: RuleSetESGE2022}).WithDefaults(); s.MinCases != 12 || s.RuleSet != RuleSetESGE2022 {
		t.Errorf("kept %+v", s)
	}
	if err := (DiscardSettings{RuleSet: "nice-2017"}).Check(); err == nil || !strings.Contains(err.Error(), "nice-2017") {
		t.Errorf("unknown rule set: %v", err)
	}
	for _, r := range RuleSets {
		if err := (DiscardSettings{RuleSet: r}).Check(); err != nil {
			t.Errorf("%s: %v", r, err)
		}
	}
}

// diminutiveHP returns n cases, each with one 3 mm rectal polyp called
// hyperplastic with high confidence whose histology is h.
func diminutiveHP(prefix string, n int, h logbook.Histology) []*logbook.Case {
	out := make([]*logbook.Case, n)
	for i := range out {
		out[i] = fx.Case(prefix+string(rune('A'+i%26))+string(rune('a'+i/26)),
			fx.Lesion(1, h, 3, fx.At(logbook.Rectum), fx.Call(logbook.OpticalHyperplastic, logbook.HighConfidence)))
	}
	return out
}

// TestDiscardPIVI judges PIVI on the point value and on the lower 95%
// Wilson limit (Rex 2011 threshold 90%). For k = n the Wilson lower limit
// is n/(n + z²): 10/10 → 0.7225 (met on value, not on the limit); 40/40 →
// 0.9124 (met on both).
func TestDiscardPIVI(t *testing.T) {
	tests := []struct {
		n                        int
		enough, onValue, onLimit bool
	}{
		{10, false, true, false},
		{40, true, true, true},
	}
	for _, tc := range tests {
		a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
		for _, c := range diminutiveHP("H", tc.n, fx.HP) {
			a.Add(c)
		}
		e := a.Detail().Discard
		if e.RuleSet != RuleSetPIVI || e.MinCases != 30 || len(e.Checks) != 2 || e.Caution != DiscardCaution() {
			t.Fatalf("figures %+v", e)
		}
		// Each case: its one lesion is both a PIVI 1 case (hyperplastic
		// both ways, 10 y = 10 y) and a PIVI 2 lesion.
		for _, c := range e.Checks {
			if c.Cases != tc.n || c.EnoughCases != tc.enough || c.MetOnValue != tc.onValue ||
				c.MetOnLowerLimit != tc.onLimit || c.Threshold != 0.90 || c.MinCases != 30 {
				t.Errorf("n %d, %s: %+v", tc.n, c.Figure.ID, c)
			}
		}
		if e.Checks[0].Strategy != "resect_and_discard" || e.Checks[0].Figure.ID != "pivi1_agreement" ||
			e.Checks[1].Strategy != "diagnose_and_leave" || e.Checks[1].Figure.ID != "pivi2_npv" {
			t.Errorf("checks %+v", e.Checks)
		}
		wantStatus := Meets
		if !tc.enough {
			wantStatus = TooFew
		}
		if e.Checks[1].Figure.Status != wantStatus {
			t.Errorf("n %d: status %s", tc.n, e.Checks[1].Figure.Status)
		}
		// Rectosigmoid hyperplastic calls are diagnose-and-leave lesions;
		// every one was sent, so each saves a specimen.
		if e.LeaveEligible != tc.n || e.DiscardEligible != 0 || e.SpecimensSaved != tc.n {
			t.Errorf("n %d: lesion counts %+v", tc.n, e)
		}
	}
	// 36 of 40 not adenoma: NPV 0.90 exactly meets on value; Wilson lower
	// limit of 36/40 is 0.7695, below.
	a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
	for _, c := range append(diminutiveHP("N", 36, fx.HP), diminutiveHP("Y", 4, fx.TA)...) {
		a.Add(c)
	}
	c := a.Detail().Discard.Checks[1]
	if !c.MetOnValue || c.MetOnLowerLimit || !near4(valOf(c.Figure.CILow), stats.Wilson(36, 40).Low) || c.Figure.Status != Meets {
		t.Errorf("36/40: %+v", c)
	}
}

// TestDiscardESGE2022 uses the optical fixture's high-confidence
// diminutive calls with histology: O1.1 TP, O1.2 FP, O1.3 TN, O2.1 FN,
// O2.2 TN, O2.3 TN → sensitivity 1/2, specificity 3/4 for resect and
// discard. Leave in situ concerns diminutive rectosigmoid lesions only
// (clinical-reference §3): O1.3 TN, O2.1 FN, O2.2 TN, O2.3 TN (rectum and
// sigmoid; O1.1 and O1.2 are in the ascending colon) → sensitivity 0/1,
// specificity 3/3. Thresholds as given in the project's clinical reference
// for Houwen BBSL et al., Endoscopy 2022;54:88–99 (recalled from memory
// there; not verified against the text here): leave in situ ≥80% / ≥90%,
// resect and discard ≥80% / ≥80%.
func TestDiscardESGE2022(t *testing.T) {
	a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{MinCases: 4, RuleSet: RuleSetESGE2022})
	for _, c := range opticalFixture() {
		a.Add(c)
	}
	e := a.Detail().Discard
	if e.RuleSet != RuleSetESGE2022 || e.MinCases != 4 || len(e.Checks) != 4 {
		t.Fatalf("figures %+v", e)
	}
	want := []struct {
		strategy  string
		id        string
		k, n      int
		threshold float64
		enough    bool
		onValue   bool
		lesions   string // the lesions the rule names
	}{
		{"diagnose_and_leave", "esge2022_leave_sensitivity", 0, 1, 0.80, false, false, "diminutive rectosigmoid polyps"},
		{"diagnose_and_leave", "esge2022_leave_specificity", 3, 3, 0.90, false, true, "diminutive rectosigmoid polyps"},
		{"resect_and_discard", "esge2022_sensitivity", 1, 2, 0.80, false, false, "of diminutive polyps"},
		{"resect_and_discard", "esge2022_specificity", 3, 4, 0.80, true, false, "of diminutive polyps"},
	}
	for i, w := range want {
		c := e.Checks[i]
		wantProportion(t, c.Figure, w.id, w.k, w.n)
		if c.Strategy != w.strategy || c.Threshold != w.threshold || c.EnoughCases != w.enough || c.MetOnValue != w.onValue ||
			c.MetOnLowerLimit || !strings.Contains(c.Source, "Houwen") || !strings.Contains(c.Rule, w.lesions) {
			t.Errorf("check %d: %+v", i, c)
		}
	}
	// Lesion counts, hand-counted over opticalFixture: high-confidence
	// diminutive adenoma/hyperplastic/SSL calls are O1.1 O1.2 O1.3 and
	// O2.1 O2.2 O2.3 O2.5 O2.6. Rectosigmoid hyperplastic calls (leave):
	// O1.3 O2.1 O2.2 O2.3 O2.5 = 5. The rest, removed by polypectomy
	// (discard): O1.1 O1.2 O2.6 = 3. Sent to pathology: all but O2.6 = 7.
	if e.LeaveEligible != 5 || e.DiscardEligible != 3 || e.SpecimensSaved != 7 {
		t.Errorf("lesion counts leave %d discard %d saved %d", e.LeaveEligible, e.DiscardEligible, e.SpecimensSaved)
	}
}

func TestCautions(t *testing.T) {
	for name, text := range map[string]string{
		"interval":    surveillance.IntervalCaution(surveillance.USMSTF2020),
		"eligibility": DiscardCaution(),
		"audit":       AuditCaution(),
	} {
		if !strings.Contains(text, "not a medical device") {
			t.Errorf("%s caution does not say it is not a medical device: %q", name, text)
		}
	}
	if !strings.Contains(surveillance.IntervalCaution(surveillance.BSG2020), "responsible clinician") || !strings.Contains(surveillance.IntervalCaution(surveillance.BSG2020), "local policy") {
		t.Errorf("interval caution: %q", surveillance.IntervalCaution(surveillance.BSG2020))
	}
	if !strings.Contains(DiscardCaution(), "local policy decides") {
		t.Errorf("eligibility caution: %q", DiscardCaution())
	}
	if !strings.Contains(AuditCaution(), "audit and appraisal") {
		t.Errorf("audit caution: %q", AuditCaution())
	}
}

// TestDiscardAndLeaveCounts: discard needs a polypectomy; leave does not;
// a specimen is saved only where one was sent.
func TestDiscardAndLeaveCounts(t *testing.T) {
	hiAd := fx.Call(logbook.OpticalAdenoma, logbook.HighConfidence)
	c := fx.Case("D1",
		fx.Lesion(1, fx.TA, 4, hiAd, fx.Res(logbook.BiopsyOnly)),          // biopsy only: not a discard
		fx.Lesion(2, fx.TA, 4, hiAd, fx.Res(logbook.ColdForceps)),         // discard, sent: saved
		fx.Lesion(3, "", 4, hiAd, fx.Res(logbook.HotSnare), fx.Discarded), // discard, not sent
		fx.Lesion(4, "", 3, fx.At(logbook.Sigmoid), fx.Res(logbook.ResectionNone), fx.Call(logbook.OpticalHyperplastic, logbook.HighConfidence),
			func(l *logbook.Lesion) {
				l.Retrieved, l.SentToPathology, l.Histology, l.Dysplasia = logbook.No, logbook.No, "", ""
			}), // leave, not sent
		fx.Lesion(5, fx.HP, 3, fx.At(logbook.Descending), fx.Call(logbook.OpticalHyperplastic, logbook.HighConfidence)), // not rectosigmoid: discard, saved
		fx.Lesion(6, fx.TA, 6, hiAd), // 6 mm: neither
	)
	fx.Valid(t, c)
	a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
	a.Add(c)
	e := a.Detail().Discard
	if e.DiscardEligible != 3 || e.LeaveEligible != 1 || e.SpecimensSaved != 2 {
		t.Errorf("discard %d leave %d saved %d, want 3 1 2", e.DiscardEligible, e.LeaveEligible, e.SpecimensSaved)
	}
}
