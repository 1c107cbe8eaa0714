package audit

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"polypledger/internal/fx"
	"polypledger/logbook"
	"polypledger/stats"
	"polypledger/surveillance"
)

func near4(a, b float64) bool { return near(a, b, 1e-4) }

// val returns *p, or NaN for nil.
func valOf(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// TestKappaIndicator checks that a kappa becomes an indicator of kind
// "kappa" with its agreements, items and interval, and with no value where
// kappa is undefined. Cohen J, Educ Psychol Meas 1960;20:37–46, as given in
// clinical-reference §6: 20, 5 / 10, 15 gives κ 0.40, interval 0.151 to
// 0.649 (Fleiss–Cohen–Everitt 1969 standard error).
func TestKappaIndicator(t *testing.T) {
	ind := kappaIndicator("optical_kappa", stats.CohenKappa([][]int{{20, 5}, {10, 15}}))
	if ind.Kind != KindKappa || ind.Numerator != 35 || ind.Denominator != 50 ||
		!near(valOf(ind.Value), 0.40, 1e-4) || !near(valOf(ind.CILow), 0.151092, 1e-4) || !near(valOf(ind.CIHigh), 0.648908, 1e-4) {
		t.Fatalf("indicator %+v", ind)
	}
	for _, table := range [][][]int{{{5, 0}, {0, 0}}, {{0, 0}, {0, 0}}} {
		if ind := kappaIndicator("k", stats.CohenKappa(table)); ind.Value != nil || ind.CILow != nil || ind.CIHigh != nil {
			t.Errorf("%v: an undefined kappa gives a value: %+v", table, ind)
		}
	}
}

// opticalFixture returns two procedures whose lesions are hand-counted in
// TestOpticalAudit. O1 is seen with NBI, O2 with white light.
func opticalFixture() []*logbook.Case {
	hi, lo := logbook.HighConfidence, logbook.LowConfidence
	nbi, wl := fx.Imaging(logbook.NBI), fx.Imaging(logbook.WhiteLight)
	o1 := fx.Case("O1",
		fx.Lesion(1, fx.TA, 4, nbi, fx.Call(logbook.OpticalAdenoma, hi), fx.Aid(logbook.OpticalAdenoma)),                                  // TP; aid TP; pair adenoma/adenoma
		fx.Lesion(2, fx.HP, 3, nbi, fx.Call(logbook.OpticalAdenoma, hi), fx.Aid(logbook.OpticalHyperplastic)),                             // FP; aid TN; pair adenoma/not
		fx.Lesion(3, fx.HP, 3, nbi, fx.At(logbook.Rectum), fx.Call(logbook.OpticalHyperplastic, hi), fx.Aid(logbook.OpticalHyperplastic)), // TN; aid TN; pair not/not; PIVI 2
		fx.Lesion(4, fx.SSL, 8, nbi, fx.Call(logbook.OpticalSSL, lo)),                                                                     // TN (serrated/serrated)
		fx.Lesion(5, fx.TA, 4, nbi, fx.Call(logbook.OpticalUncertain, lo)),                                                                // uncertain: not in the tables, in the high-confidence denominator
		fx.Lesion(6, fx.CA, 25, nbi, fx.Res(logbook.EMREnBloc), fx.Dys(logbook.DysplasiaHigh), fx.Call(logbook.OpticalDeepInvasive, hi)),  // TP
		fx.Lesion(7, fx.TA, 4, nbi), // no call: nothing
	)
	o2 := fx.Case("O2",
		fx.Lesion(1, fx.TA, 4, wl, fx.At(logbook.Sigmoid), fx.Call(logbook.OpticalHyperplastic, hi), fx.Aid(logbook.OpticalAdenoma)),   // FN; aid TP; pair not/adenoma; PIVI 2 adenoma
		fx.Lesion(2, fx.SSL, 2, wl, fx.At(logbook.Rectum), fx.Call(logbook.OpticalHyperplastic, hi), fx.Aid(logbook.OpticalUncertain)), // TN; PIVI 2 not adenoma but neoplastic
		fx.Lesion(3, fx.TSA, 5, wl, fx.At(logbook.Rectum), fx.Call(logbook.OpticalHyperplastic, hi)),                                   // TN; PIVI 2 not adenoma but neoplastic
		fx.Lesion(4, fx.TA, 6, wl, fx.Call(logbook.OpticalAdenoma, lo)),                                                                // TP
		fx.Lesion(5, "", 3, wl, fx.At(logbook.Rectum), fx.Call(logbook.OpticalHyperplastic, hi), fx.Awaiting),                          // pending: only the high-confidence rate
		fx.Lesion(6, "", 4, wl, fx.Call(logbook.OpticalAdenoma, hi), fx.Aid(logbook.OpticalAdenoma), fx.Discarded),                     // no histology; pair adenoma/adenoma
	)
	return []*logbook.Case{o1, o2}
}

func wantProportion(t *testing.T, ind Indicator, id string, k, n int) {
	t.Helper()
	if ind.ID != id || ind.Numerator != float64(k) || ind.Denominator != n {
		t.Errorf("%s: got %s %v/%d, want %d/%d", id, ind.ID, ind.Numerator, ind.Denominator, k, n)
		return
	}
	if n > 0 {
		w := stats.Wilson(k, n)
		if !near4(valOf(ind.Value), float64(k)/float64(n)) || !near4(valOf(ind.CILow), w.Low) || !near4(valOf(ind.CIHigh), w.High) {
			t.Errorf("%s: value %v [%v, %v]", id, valOf(ind.Value), valOf(ind.CILow), valOf(ind.CIHigh))
		}
	}
}

// TestOpticalAudit checks every optical figure against the hand counts of
// opticalFixture.
func TestOpticalAudit(t *testing.T) {
	a := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
	for _, c := range opticalFixture() {
		fx.Valid(t, c)
		a.Add(c)
	}
	d := a.Detail()
	// 2×2 over lesions with a call other than uncertain and final histology:
	// TP O1.1 O1.6 O2.4; FP O1.2; FN O2.1; TN O1.3 O1.4 O2.2 O2.3.
	if want := (BinaryTable{3, 1, 1, 4}); d.Endoscopist.Table != want {
		t.Fatalf("endoscopist table %+v, want %+v", d.Endoscopist.Table, want)
	}
	e := d.Endoscopist
	wantProportion(t, e.Sensitivity, "optical_sensitivity", 3, 4)
	wantProportion(t, e.Specificity, "optical_specificity", 4, 5)
	wantProportion(t, e.PPV, "optical_ppv", 3, 4)
	wantProportion(t, e.NPV, "optical_npv", 4, 5)
	wantProportion(t, e.Accuracy, "optical_accuracy", 7, 9)
	// κ for [[3,1],[1,4]]: po 7/9, pe (4·4+5·5)/81 = 41/81, κ = 22/40 = 0.55.
	if e.Kappa.ID != "optical_kappa" || !near4(valOf(e.Kappa.Value), 0.55) || e.Kappa.Numerator != 7 || e.Kappa.Denominator != 9 {
		t.Errorf("optical_kappa %+v", e.Kappa)
	}
	// Three-class table, rows adenoma/serrated/hyperplastic calls, columns
	// adenoma/serrated/hyperplastic/other histology.
	if want := [3][4]int{{3, 0, 1, 0}, {0, 1, 0, 0}, {1, 2, 1, 0}}; e.Classes.Counts != want {
		t.Errorf("classes %v, want %v", e.Classes.Counts, want)
	}
	// Its kappa leaves the "other" column out: [[3,0,1],[0,1,0],[1,2,1]],
	// agreements 5 of 9, rows 4,1,4, columns 4,3,2: pe = 27/81 = 1/3,
	// κ = (5/9 − 1/3)/(2/3) = 1/3.
	if k := e.ClassesKappa; k.Agreements != 5 || k.N != 9 || !near4(k.Kappa, 1.0/3) {
		t.Errorf("three-class kappa %+v", k)
	}
	// High confidence: diminutive lesions with a call: O1.1 O1.2 O1.3 O1.5,
	// O2.1 O2.2 O2.3 O2.5 O2.6 = 9; high confidence all but O1.5 = 8.
	wantProportion(t, d.HighConfidence, "high_confidence_rate", 8, 9)
	// Aid over lesions with an aid call other than uncertain and histology:
	// O1.1 TP, O1.2 TN, O1.3 TN, O2.1 TP.
	if want := (BinaryTable{TruePositive: 2, TrueNegative: 2}); d.Aid.Table != want {
		t.Errorf("aid table %+v", d.Aid.Table)
	}
	wantProportion(t, d.Aid.Sensitivity, "aid_sensitivity", 2, 2)
	wantProportion(t, d.Aid.Specificity, "aid_specificity", 2, 2)
	// Endoscopist against aid, both calls given (histology not needed):
	// O1.1 a/a, O1.2 a/n, O1.3 n/n, O2.1 n/a, O2.6 a/a → [[2,1],[1,1]];
	// po 3/5, pe (3·3+2·2)/25 = 13/25, κ = 0.08/0.48 = 0.166667.
	if d.EndoscopistVsAid.Table != [2][2]int{{2, 1}, {1, 1}} || !near4(valOf(d.EndoscopistVsAid.Kappa.Value), 0.166667) {
		t.Errorf("endoscopist vs aid %+v", d.EndoscopistVsAid)
	}
	// PIVI 2: O1.3 (hyperplastic), O2.1 (adenoma), O2.2 (SSL), O2.3 (TSA);
	// O2.5 is pending. Not adenoma 3/4; not neoplastic (SSL and TSA count
	// as positive) 1/4.
	wantProportion(t, d.PIVI2.NPV, "pivi2_npv", 3, 4)
	wantProportion(t, d.PIVI2.NPVNeoplasia, "pivi2_npv_neoplasia", 1, 4)
	if d.PIVI2.NPV.Status != TooFew || valOf(d.PIVI2.NPV.Target) != 0.90 {
		t.Errorf("pivi2 judged %+v", d.PIVI2.NPV)
	}
	// By imaging: NBI (O1) TP O1.1 O1.6, FP O1.2, TN O1.3 O1.4; white
	// light (O2) TP O2.4, FN O2.1, TN O2.2 O2.3.
	if len(d.ByImaging) != 2 || d.ByImaging[0].Imaging != "white_light" || d.ByImaging[1].Imaging != "nbi" {
		t.Fatalf("by imaging %+v", d.ByImaging)
	}
	wl, nbi := d.ByImaging[0], d.ByImaging[1]
	if nbi.Endoscopist.Table != (BinaryTable{2, 1, 0, 2}) || wl.Endoscopist.Table != (BinaryTable{1, 0, 1, 2}) {
		t.Errorf("by imaging tables nbi %+v, white light %+v", nbi.Endoscopist.Table, wl.Endoscopist.Table)
	}
	wantProportion(t, nbi.HighConfidence, "high_confidence_rate", 3, 4)
	wantProportion(t, wl.HighConfidence, "high_confidence_rate", 5, 5)
	if wl.Aid.Table != (BinaryTable{TruePositive: 1}) || nbi.Aid.Table != (BinaryTable{TruePositive: 1, TrueNegative: 2}) {
		t.Errorf("aid by imaging nbi %+v, white light %+v", nbi.Aid.Table, wl.Aid.Table)
	}
	// Both procedures are out of PIVI 1: O1 has a cancer (histology
	// interval outside), O2 has lesions without histology.
	if d.PIVI1.Agreement.Denominator != 0 || d.PIVI1.MissingHistology != 1 || d.PIVI1.Agreement.Value != nil {
		t.Errorf("pivi1 %+v", d.PIVI1)
	}

	// Indicators come in the documented order, with the same figures.
	ids := []string{"pivi1_agreement", "pivi2_npv", "pivi2_npv_neoplasia", "high_confidence_rate",
		"optical_sensitivity", "optical_specificity", "optical_ppv", "optical_npv", "optical_accuracy", "optical_kappa",
		"aid_sensitivity", "aid_specificity", "aid_ppv", "aid_npv", "aid_accuracy", "aid_kappa", "optical_aid_kappa"}
	inds := a.Indicators()
	if len(inds) != len(ids) {
		t.Fatalf("%d indicators, want %d", len(inds), len(ids))
	}
	for i, id := range ids {
		if inds[i].ID != id {
			t.Errorf("indicator %d is %s, want %s", i, inds[i].ID, id)
		}
		wantStatus := Reported
		if i < 3 {
			wantStatus = TooFew // PIVI targets, under 30 cases
		}
		if inds[i].Status != wantStatus {
			t.Errorf("%s: status %s, want %s", id, inds[i].Status, wantStatus)
		}
	}
	if inds[4].Numerator != e.Sensitivity.Numerator || valOf(inds[16].Value) != valOf(d.EndoscopistVsAid.Kappa.Value) {
		t.Errorf("indicators differ from the detail")
	}
	// Every aid lesion is on the diagonal and both classes occur, so κ = 1.
	if !near4(valOf(inds[15].Value), 1) {
		t.Errorf("aid_kappa %+v", inds[15])
	}
}

// TestImagingSlots keeps the fixed-size imaging split in step with the code list.
func TestImagingSlots(t *testing.T) {
	var a OpticalAudit
	if len(a.byImaging) != len(logbook.ImagingModes)+1 {
		t.Fatalf("%d imaging slots for %d modes", len(a.byImaging), len(logbook.ImagingModes))
	}
	for i, m := range logbook.ImagingModes {
		if imagingSlot(m) != i || imagingName(i) != string(m) {
			t.Errorf("%s: slot %d", m, imagingSlot(m))
		}
	}
	if imagingName(imagingSlot("")) != "not_recorded" {
		t.Errorf("empty imaging")
	}
}

// TestOpticalDetailJSON: the detail the app and PDF read marshals, with
// undefined figures as null, both empty and filled.
func TestOpticalDetailJSON(t *testing.T) {
	empty := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
	full := NewOpticalAudit(surveillance.USMSTF2020, DiscardSettings{})
	for _, c := range opticalFixture() {
		full.Add(c)
	}
	for name, a := range map[string]*OpticalAudit{"empty": empty, "full": full} {
		b, err := json.Marshal(a.Detail())
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !strings.Contains(string(b), `"classes_kappa":{"agreements"`) || !strings.Contains(string(b), `"caution":"`) {
			t.Errorf("%s: %s", name, b)
		}
	}
}
