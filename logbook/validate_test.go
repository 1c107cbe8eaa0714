package logbook

import (
	"math"
	"reflect"
	"strings"
	"testing"
	"time"
)

// testToday is the fixed "today" every validation test runs against, so that
// "not in the future" does not depend on the machine's clock.
var testToday = time.Date(2026, 6, 15, 0, 0, 0, 0, time.UTC)

func day(s string) time.Time {
	d, err := time.Parse(DateLayout, s)
	if err != nil {
		panic(err)
	}
	return d
}

// validProcedure is a complete, consistent trainee case that passes every
// rule; each test case below breaks exactly the rule it names.
func validProcedure() Procedure {
	p := NewProcedure()
	p.ID = "P1"
	p.PerformedOn = day("2026-06-01")
	p.OperatorID = "E01"
	p.TraineeID = "T01"
	p.Supervision = SupervisedHandsOn
	p.TraineeReachedCaecum = Yes
	p.PatientKey = strings.Repeat("ab", 32)
	p.Age = 60
	p.Sex = SexFemale
	p.Indication = Screening
	p.Setting = Outpatient
	p.Exclusion = ExclusionNone
	p.Extent = ExtentCaecum
	p.CaecalPhoto = Yes
	p.WithdrawalSeconds = 480
	p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = 2, 3, 3
	p.Retroversion = Yes
	p.MidazolamMg, p.FentanylUg, p.PethidineMg = 2, 50, 0
	p.Propofol = No
	p.Comfort = 2
	p.DetectionAid = No
	p.AdverseEvent = AdverseNone
	p.RecommendedInterval = Interval10y
	return p
}

// validLesion is a resected, reported diminutive adenoma.
func validLesion() Lesion {
	l := NewLesion()
	l.ProcedureID = "P1"
	l.LesionNo = 1
	l.Segment = Sigmoid
	l.SizeMM = 4
	l.Paris = Paris0Is
	l.OpticalClass = OpticalAdenoma
	l.Confidence = HighConfidence
	l.Imaging = NBI
	l.AidClass = OpticalAdenoma
	l.Resection = ColdSnare
	l.Retrieved = Yes
	l.SentToPathology = Yes
	l.Histology = TubularAdenoma
	l.Dysplasia = DysplasiaLow
	l.ReportedOn = day("2026-06-10")
	return l
}

func fe(field, reason string) FieldError { return FieldError{Field: field, Reason: reason} }

func checkProblems(t *testing.T, got Problems, want []FieldError) {
	t.Helper()
	if len(got) == 0 && len(want) == 0 {
		return
	}
	if !reflect.DeepEqual([]FieldError(got), want) {
		t.Errorf("problems\n got: %q\nwant: %q", got, want)
	}
}

func TestValidateProcedure(t *testing.T) {
	tests := []struct {
		name   string
		modify func(p *Procedure)
		want   []FieldError
	}{
		{"valid trainee case", func(p *Procedure) {}, nil},
		{"valid case without trainee", func(p *Procedure) {
			p.TraineeID, p.Supervision, p.TraineeReachedCaecum = "", "", Unrecorded
		}, nil},
		{"only required fields", func(p *Procedure) {
			q := NewProcedure()
			q.ID, q.PerformedOn, q.OperatorID, q.Age, q.Sex, q.Indication, q.Extent = "P1", p.PerformedOn, "E01", 60, SexMale, Diagnostic, ExtentTerminalIleum
			*p = q
		}, nil},

		// Required fields.
		{"no procedure id", func(p *Procedure) { p.ID = "" }, []FieldError{fe("procedure_id", "is required")}},
		{"no date", func(p *Procedure) { p.PerformedOn = time.Time{} }, []FieldError{fe("performed_on", "is required")}},
		{"no operator", func(p *Procedure) { p.OperatorID = ""; p.TraineeID = "T01" }, []FieldError{fe("operator_id", "is required")}},
		{"no age", func(p *Procedure) { p.Age = NotRecorded }, []FieldError{fe("age", "is required")}},
		{"no sex", func(p *Procedure) { p.Sex = "" }, []FieldError{fe("sex", "is required")}},
		{"no indication", func(p *Procedure) { p.Indication = "" }, []FieldError{fe("indication", "is required")}},
		{"no extent", func(p *Procedure) { p.Extent = "" }, []FieldError{fe("extent", "is required")}},

		// Identifiers.
		{"id too long", func(p *Procedure) { p.ID = strings.Repeat("x", MaxIDLength+1) }, []FieldError{fe("procedure_id", "is longer than 64 characters")}},
		{"id of 64 characters", func(p *Procedure) { p.ID = strings.Repeat("x", MaxIDLength) }, nil},
		{"id with spaces around", func(p *Procedure) { p.OperatorID = " E01" }, []FieldError{fe("operator_id", "has leading or trailing spaces")}},
		{"id with a control character", func(p *Procedure) { p.TraineeID = "T\x0701" }, []FieldError{fe("trainee_id", "contains a control character")}},
		{"id that is not UTF-8", func(p *Procedure) { p.OperatorID = "E\xe901" }, []FieldError{fe("operator_id", "is not valid UTF-8 text")}},
		{"patient reference in clear", func(p *Procedure) { p.PatientKey = "RXH1234567" }, []FieldError{fe("patient_ref", "is not a pseudonym")}},
		{"no patient reference", func(p *Procedure) { p.PatientKey = "" }, nil},

		// Ranges (clinical-reference §1).
		{"age 17", func(p *Procedure) { p.Age = 17 }, []FieldError{fe("age", "17 is outside 18–110")}},
		{"age 18", func(p *Procedure) { p.Age = 18 }, nil},
		{"age 110", func(p *Procedure) { p.Age = 110 }, nil},
		{"age 111", func(p *Procedure) { p.Age = 111 }, []FieldError{fe("age", "111 is outside 18–110")}},
		{"withdrawal not timed", func(p *Procedure) { p.WithdrawalSeconds = NotRecorded }, nil},
		{"withdrawal 0 s", func(p *Procedure) { p.WithdrawalSeconds = 0 }, nil},
		{"withdrawal 7200 s", func(p *Procedure) { p.WithdrawalSeconds = 7200 }, nil},
		{"withdrawal 7201 s", func(p *Procedure) { p.WithdrawalSeconds = 7201 }, []FieldError{fe("withdrawal_seconds", "7201 is outside 0–7200")}},
		{"withdrawal negative", func(p *Procedure) { p.WithdrawalSeconds = -5 }, []FieldError{fe("withdrawal_seconds", "-5 is outside 0–7200")}},
		{"bbps 0 everywhere", func(p *Procedure) { p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = 0, 0, 0 }, nil},
		{"bbps right 4", func(p *Procedure) { p.BBPSRight = 4 }, []FieldError{fe("bbps_right", "4 is outside 0–3")}},
		{"bbps transverse 4", func(p *Procedure) { p.BBPSTransverse = 4 }, []FieldError{fe("bbps_transverse", "4 is outside 0–3")}},
		{"bbps left 9", func(p *Procedure) { p.BBPSLeft = 9 }, []FieldError{fe("bbps_left", "9 is outside 0–3")}},
		{"bbps not recorded", func(p *Procedure) { p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = NotRecorded, NotRecorded, NotRecorded }, nil},
		{"comfort 0", func(p *Procedure) { p.Comfort = 0 }, []FieldError{fe("comfort", "0 is outside 1–5")}},
		{"comfort 1", func(p *Procedure) { p.Comfort = 1 }, nil},
		{"comfort 5", func(p *Procedure) { p.Comfort = 5 }, nil},
		{"comfort 6", func(p *Procedure) { p.Comfort = 6 }, []FieldError{fe("comfort", "6 is outside 1–5")}},
		{"comfort not recorded", func(p *Procedure) { p.Comfort = NotRecorded }, nil},
		{"midazolam too much", func(p *Procedure) { p.MidazolamMg = 51 }, []FieldError{fe("midazolam_mg", "51 is outside 0–50")}},
		{"midazolam negative", func(p *Procedure) { p.MidazolamMg = -2 }, []FieldError{fe("midazolam_mg", "-2 is outside 0–50")}},
		{"midazolam NaN", func(p *Procedure) { p.MidazolamMg = math.NaN() }, []FieldError{fe("midazolam_mg", "NaN is outside 0–50")}},
		{"fentanyl too much", func(p *Procedure) { p.FentanylUg = 1000.5 }, []FieldError{fe("fentanyl_ug", "1000.5 is outside 0–1000")}},
		{"pethidine too much", func(p *Procedure) { p.PethidineMg = 501 }, []FieldError{fe("pethidine_mg", "501 is outside 0–500")}},
		{"doses not recorded", func(p *Procedure) { p.MidazolamMg, p.FentanylUg, p.PethidineMg = NotRecorded, NotRecorded, NotRecorded }, nil},

		// Codes.
		{"bad sex", func(p *Procedure) { p.Sex = "Q" }, []FieldError{fe("sex", `"Q" is not one of F, M, X, U`)}},
		{"bad indication", func(p *Procedure) { p.Indication = "fit" }, []FieldError{fe("indication", `"fit" is not one of screening, stool_test_positive, surveillance, diagnostic, therapeutic`)}},
		{"bad setting", func(p *Procedure) { p.Setting = "day_case" }, []FieldError{fe("setting", `"day_case" is not one of outpatient, inpatient`)}},
		{"bad exclusion", func(p *Procedure) { p.Exclusion = "crohns" }, []FieldError{fe("exclusion", `"crohns" is not one of none, ibd, hereditary_syndrome, known_neoplasm`)}},
		{"bad extent", func(p *Procedure) { p.Extent = "rectum" }, []FieldError{fe("extent", `"rectum" is not one of caecum, terminal_ileum, anastomosis, incomplete`)}},
		{"bad incomplete reason", func(p *Procedure) {
			p.Extent, p.CaecalPhoto, p.TraineeReachedCaecum, p.IncompleteReason = ExtentIncomplete, No, No, "pain"
		}, []FieldError{fe("incomplete_reason", `"pain" is not one of poor_prep, obstruction, severe_colitis, discomfort, looping, other`)}},
		{"bad supervision", func(p *Procedure) { p.Supervision = "remote" }, []FieldError{fe("supervision", `"remote" is not one of independent, supervised_hands_on, supervised_observed`)}},
		{"bad adverse event", func(p *Procedure) { p.AdverseEvent = "bleeding" }, []FieldError{fe("adverse_event", `"bleeding" is not one of none, perforation, bleeding_needing_intervention`)}},
		{"bad interval", func(p *Procedure) { p.RecommendedInterval = "2y" }, []FieldError{fe("recommended_interval", `"2y" is not one of 2-6m, 3-6m, 6m, 1y, 3y, 3-5y, 5-10y, 7-10y, 10y, screening, repeat, outside, pending`)}},
		{"caecal photo not applicable", func(p *Procedure) { p.CaecalPhoto = NotApplicable }, []FieldError{fe("caecal_photo", "must be yes or no")}},
		{"propofol out of range", func(p *Procedure) { p.Propofol = YesNo(9) }, []FieldError{fe("propofol", "must be yes or no")}},
		{"retroversion not applicable", func(p *Procedure) { p.Retroversion = NotApplicable }, nil},

		// Dates: a real date, not in the future (the clock is fixed).
		{"performed today", func(p *Procedure) { p.PerformedOn = testToday }, nil},
		{"performed tomorrow", func(p *Procedure) { p.PerformedOn = testToday.AddDate(0, 0, 1) }, []FieldError{fe("performed_on", "2026-06-16 is in the future")}},
		{"performed on a leap day", func(p *Procedure) { p.PerformedOn = day("2024-02-29") }, nil},

		// Cross-field rules.
		{"incomplete reason on a complete examination", func(p *Procedure) { p.IncompleteReason = ReasonLooping },
			[]FieldError{fe("incomplete_reason", "is given but extent is caecum, not incomplete")}},
		{"incomplete reason on an incomplete examination", func(p *Procedure) {
			p.Extent, p.IncompleteReason, p.CaecalPhoto, p.TraineeReachedCaecum = ExtentIncomplete, ReasonLooping, No, No
		}, nil},
		{"incomplete without a reason", func(p *Procedure) {
			p.Extent, p.CaecalPhoto, p.TraineeReachedCaecum = ExtentIncomplete, No, No
		}, nil},
		{"supervision without a trainee", func(p *Procedure) { p.TraineeID, p.TraineeReachedCaecum = "", Unrecorded },
			[]FieldError{fe("supervision", "is given but there is no trainee_id")}},
		{"trainee reached caecum without a trainee", func(p *Procedure) { p.TraineeID, p.Supervision = "", "" },
			[]FieldError{fe("trainee_reached_caecum", "is given but there is no trainee_id")}},
		{"trainee is the operator", func(p *Procedure) { p.TraineeID = p.OperatorID },
			[]FieldError{fe("trainee_id", "is the same as operator_id")}},
		{"trainee without supervision recorded", func(p *Procedure) { p.Supervision = "" }, nil},
		{"caecal photo on an incomplete examination", func(p *Procedure) {
			p.Extent, p.TraineeReachedCaecum = ExtentIncomplete, No
		}, []FieldError{fe("caecal_photo", "is yes but extent is incomplete")}},
		{"trainee reached caecum on an incomplete examination", func(p *Procedure) {
			p.Extent, p.CaecalPhoto = ExtentIncomplete, No
		}, []FieldError{fe("trainee_reached_caecum", "is yes but extent is incomplete")}},
		{"caecal photo at terminal ileum", func(p *Procedure) { p.Extent = ExtentTerminalIleum }, nil},
		{"caecal photo at anastomosis", func(p *Procedure) { p.Extent = ExtentAnastomosis }, nil},
		{"withdrawal timed on an incomplete examination", func(p *Procedure) {
			p.Extent, p.CaecalPhoto, p.TraineeReachedCaecum, p.WithdrawalSeconds = ExtentIncomplete, No, No, 300
		}, nil},

		// Several problems are all reported, in field order.
		{"several problems", func(p *Procedure) { p.Age, p.Sex, p.Comfort = 9, "Q", 7 }, []FieldError{
			fe("age", "9 is outside 18–110"),
			fe("sex", `"Q" is not one of F, M, X, U`),
			fe("comfort", "7 is outside 1–5"),
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := validProcedure()
			tt.modify(&p)
			checkProblems(t, ValidateProcedure(p, testToday), tt.want)
		})
	}
}

func TestValidateLesion(t *testing.T) {
	tests := []struct {
		name   string
		modify func(l *Lesion)
		want   []FieldError
	}{
		{"valid", func(l *Lesion) {}, nil},
		{"no procedure", func(l *Lesion) { l.ProcedureID = "" }, []FieldError{fe("procedure_id", "is required")}},
		{"no lesion number", func(l *Lesion) { l.LesionNo = NotRecorded }, []FieldError{fe("lesion_no", "is required")}},
		{"lesion number 0", func(l *Lesion) { l.LesionNo = 0 }, []FieldError{fe("lesion_no", "0 is outside 1–999")}},
		{"lesion number 1000", func(l *Lesion) { l.LesionNo = 1000 }, []FieldError{fe("lesion_no", "1000 is outside 1–999")}},
		{"no segment", func(l *Lesion) { l.Segment = "" }, []FieldError{fe("segment", "is required")}},
		{"bad segment", func(l *Lesion) { l.Segment = "appendix" }, []FieldError{fe("segment", `"appendix" is not one of caecum, ascending, hepatic_flexure, transverse, splenic_flexure, descending, sigmoid, rectum`)}},

		// Size 1–150 mm (clinical-reference §1).
		{"no size", func(l *Lesion) { l.SizeMM = NotRecorded }, []FieldError{fe("size_mm", "is required")}},
		{"size 0", func(l *Lesion) { l.SizeMM = 0 }, []FieldError{fe("size_mm", "0 is outside 1–150")}},
		{"size 1", func(l *Lesion) { l.SizeMM = 1 }, nil},
		{"size 150", func(l *Lesion) { l.SizeMM = 150 }, nil},
		{"size 151", func(l *Lesion) { l.SizeMM = 151 }, []FieldError{fe("size_mm", "151 is outside 1–150")}},

		// Codes.
		{"bad paris", func(l *Lesion) { l.Paris = "0-IV" }, []FieldError{fe("paris", `"0-IV" is not one of 0-Ip, 0-Isp, 0-Is, 0-IIa, 0-IIb, 0-IIc, 0-III`)}},
		{"bad optical class", func(l *Lesion) { l.OpticalClass = "polyp" }, []FieldError{fe("optical_class", `"polyp" is not one of adenoma, hyperplastic, ssl, deep_invasive, uncertain`)}},
		{"bad confidence", func(l *Lesion) { l.Confidence = "medium" }, []FieldError{fe("confidence", `"medium" is not one of high, low`)}},
		{"bad imaging", func(l *Lesion) { l.Imaging = "bli" }, []FieldError{fe("imaging", `"bli" is not one of white_light, nbi, other_virtual_chromo, dye_chromo`)}},
		{"bad aid class", func(l *Lesion) { l.AidClass = "benign" }, []FieldError{fe("aid_class", `"benign" is not one of adenoma, hyperplastic, ssl, deep_invasive, uncertain`)}},
		{"bad resection", func(l *Lesion) { l.Resection = "laser" }, []FieldError{fe("resection", `"laser" is not one of none, cold_snare, hot_snare, cold_forceps, emr_en_bloc, emr_piecemeal, esd, biopsy_only`)}},
		{"bad histology", func(l *Lesion) { l.Histology = "polyp" }, []FieldError{fe("histology", `"polyp" is not one of pending, tubular_adenoma, tubulovillous_adenoma, villous_adenoma, ssl, ssl_dysplasia, tsa, hyperplastic, adenocarcinoma, normal, inflammatory, other`)}},
		{"bad dysplasia", func(l *Lesion) { l.Dysplasia = "moderate" }, []FieldError{fe("dysplasia", `"moderate" is not one of none, low, high`)}},
		{"tattoo not applicable", func(l *Lesion) { l.Tattoo = NotApplicable }, []FieldError{fe("tattoo", "must be yes or no")}},
		{"tattoo yes", func(l *Lesion) { l.Tattoo = Yes }, nil},

		// Pathology chain: sent needs retrieved; a final histology needs sent.
		{"sent but not retrieved", func(l *Lesion) { l.Retrieved = No },
			[]FieldError{fe("sent_to_pathology", "is yes but retrieved is not yes")}},
		{"sent with retrieval not recorded", func(l *Lesion) { l.Retrieved = Unrecorded },
			[]FieldError{fe("sent_to_pathology", "is yes but retrieved is not yes")}},
		{"final histology but not sent", func(l *Lesion) { l.SentToPathology = No },
			[]FieldError{fe("histology", "is tubular_adenoma but sent_to_pathology is not yes")}},
		{"final histology with sending not recorded", func(l *Lesion) { l.SentToPathology = Unrecorded },
			[]FieldError{fe("histology", "is tubular_adenoma but sent_to_pathology is not yes")}},
		{"discarded: not retrieved, not sent, no histology", func(l *Lesion) {
			l.Retrieved, l.SentToPathology, l.Histology, l.Dysplasia, l.ReportedOn = No, No, "", "", time.Time{}
		}, nil},
		{"retrieved but not sent", func(l *Lesion) {
			l.SentToPathology, l.Histology, l.Dysplasia, l.ReportedOn = No, "", "", time.Time{}
		}, nil},
		{"pending", func(l *Lesion) { l.Histology, l.Dysplasia, l.ReportedOn = HistPending, "", time.Time{} }, nil},

		// Optical call and confidence.
		{"uncertain with high confidence", func(l *Lesion) { l.OpticalClass = OpticalUncertain },
			[]FieldError{fe("confidence", "must be low when optical_class is uncertain")}},
		{"uncertain with low confidence", func(l *Lesion) { l.OpticalClass, l.Confidence = OpticalUncertain, LowConfidence }, nil},
		// Decision: "uncertain goes with confidence low" refuses a high
		// confidence; a confidence left unrecorded is accepted.
		{"uncertain with confidence not recorded", func(l *Lesion) { l.OpticalClass, l.Confidence = OpticalUncertain, "" }, nil},
		{"confidence without optical class", func(l *Lesion) { l.OpticalClass = "" },
			[]FieldError{fe("confidence", "is given but there is no optical_class")}},

		// Report date.
		{"report date while pending", func(l *Lesion) { l.Histology, l.Dysplasia = HistPending, "" },
			[]FieldError{fe("reported_on", "is given but histology is not reported")}},
		{"report date in the future", func(l *Lesion) { l.ReportedOn = testToday.AddDate(0, 0, 1) },
			[]FieldError{fe("reported_on", "2026-06-16 is in the future")}},
		{"final histology without a report date", func(l *Lesion) { l.ReportedOn = time.Time{} }, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			l := validLesion()
			tt.modify(&l)
			checkProblems(t, ValidateLesion(l, testToday), tt.want)
		})
	}
}

// TestDysplasiaEveryHistology checks the dysplasia rule of
// clinical-reference §1 for every histology code and every dysplasia value:
// low or high for tubular, tubulovillous, villous adenoma and ssl_dysplasia;
// none or empty for hyperplastic, normal, inflammatory and ssl; empty while
// pending; free for TSA, adenocarcinoma and other.
func TestDysplasiaEveryHistology(t *testing.T) {
	type rule struct {
		allowed map[Dysplasia]bool
		reason  string
	}
	lowOrHigh := func(h Histology) rule {
		return rule{map[Dysplasia]bool{DysplasiaLow: true, DysplasiaHigh: true}, "must be low or high for " + string(h)}
	}
	noneOrEmpty := func(h Histology) rule {
		return rule{map[Dysplasia]bool{"": true, DysplasiaNone: true}, "must be none or empty for " + string(h)}
	}
	free := rule{map[Dysplasia]bool{"": true, DysplasiaNone: true, DysplasiaLow: true, DysplasiaHigh: true}, ""}
	emptyOnly := rule{map[Dysplasia]bool{"": true}, "must be empty while histology is pending or not recorded"}
	rules := map[Histology]rule{
		"":                 emptyOnly,
		HistPending:        emptyOnly,
		TubularAdenoma:     lowOrHigh(TubularAdenoma),
		TubulovillousAdeno: lowOrHigh(TubulovillousAdeno),
		VillousAdenoma:     lowOrHigh(VillousAdenoma),
		HistSSLDysplasia:   lowOrHigh(HistSSLDysplasia),
		HistHyperplastic:   noneOrEmpty(HistHyperplastic),
		HistNormal:         noneOrEmpty(HistNormal),
		HistInflammatory:   noneOrEmpty(HistInflammatory),
		HistSSL:            noneOrEmpty(HistSSL),
		HistTSA:            free,
		Adenocarcinoma:     free,
		HistOther:          free,
	}
	if len(rules) != len(Histologies)+1 {
		t.Fatalf("the rule table covers %d histologies, the code list has %d (plus empty)", len(rules)-1, len(Histologies))
	}
	for h, r := range rules {
		for _, d := range []Dysplasia{"", DysplasiaNone, DysplasiaLow, DysplasiaHigh} {
			t.Run(string(h)+"/"+string(d), func(t *testing.T) {
				l := validLesion()
				l.Histology, l.Dysplasia = h, d
				if !h.IsFinal() {
					l.ReportedOn = time.Time{}
				}
				var want []FieldError
				if !r.allowed[d] {
					want = []FieldError{fe("dysplasia", r.reason)}
				}
				checkProblems(t, ValidateLesion(l, testToday), want)

				// A pathology result obeys the same rule (pending and empty
				// are refused as results in their own right).
				if h.IsFinal() {
					res := HistologyResult{ProcedureID: "P1", LesionNo: 1, Histology: h, Dysplasia: d, ReportedOn: day("2026-06-10")}
					checkProblems(t, ValidateHistologyResult(res, testToday), want)
				}
			})
		}
	}
}

func TestValidateHistologyResult(t *testing.T) {
	valid := func() HistologyResult {
		return HistologyResult{ProcedureID: "P1", LesionNo: 2, Histology: HistHyperplastic, Dysplasia: DysplasiaNone, ReportedOn: day("2026-06-10")}
	}
	tests := []struct {
		name   string
		modify func(h *HistologyResult)
		want   []FieldError
	}{
		{"valid", func(h *HistologyResult) {}, nil},
		{"no procedure", func(h *HistologyResult) { h.ProcedureID = "" }, []FieldError{fe("procedure_id", "is required")}},
		{"no lesion number", func(h *HistologyResult) { h.LesionNo = NotRecorded }, []FieldError{fe("lesion_no", "is required")}},
		{"lesion number 0", func(h *HistologyResult) { h.LesionNo = 0 }, []FieldError{fe("lesion_no", "0 is outside 1–999")}},
		{"no histology", func(h *HistologyResult) { h.Histology, h.Dysplasia = "", "" }, []FieldError{fe("histology", "is required")}},
		{"pending is not a result", func(h *HistologyResult) { h.Histology, h.Dysplasia = HistPending, "" }, []FieldError{fe("histology", "a result cannot be pending")}},
		{"no report date", func(h *HistologyResult) { h.ReportedOn = time.Time{} }, []FieldError{fe("reported_on", "is required")}},
		{"reported tomorrow", func(h *HistologyResult) { h.ReportedOn = testToday.AddDate(0, 0, 1) }, []FieldError{fe("reported_on", "2026-06-16 is in the future")}},
		{"reported today", func(h *HistologyResult) { h.ReportedOn = testToday }, nil},
		{"adenoma without grade", func(h *HistologyResult) { h.Histology, h.Dysplasia = TubularAdenoma, "" },
			[]FieldError{fe("dysplasia", "must be low or high for tubular_adenoma")}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			h := valid()
			tt.modify(&h)
			checkProblems(t, ValidateHistologyResult(h, testToday), tt.want)
		})
	}
}

func TestValidateLesionNumbers(t *testing.T) {
	mk := func(nos ...int) []Lesion {
		var ls []Lesion
		for _, n := range nos {
			l := validLesion()
			l.LesionNo = n
			ls = append(ls, l)
		}
		return ls
	}
	tests := []struct {
		name string
		nos  []int
		want []FieldError
	}{
		{"none", nil, nil},
		{"unique", []int{1, 2, 3}, nil},
		{"gaps are allowed", []int{1, 4}, nil},
		{"one used twice", []int{1, 2, 1}, []FieldError{fe("lesion_no", "1 is used twice in procedure P1")}},
		{"used three times", []int{2, 2, 2}, []FieldError{fe("lesion_no", "2 is used twice in procedure P1"), fe("lesion_no", "2 is used twice in procedure P1")}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			checkProblems(t, ValidateLesionNumbers(mk(tt.nos...)), tt.want)
		})
	}
}

func TestValidateRosterEntry(t *testing.T) {
	tests := []struct {
		name string
		r    RosterEntry
		want []FieldError
	}{
		{"endoscopist", RosterEntry{ID: "E01", Name: "Dr Invented", Role: RoleEndoscopist}, nil},
		{"trainee without a name", RosterEntry{ID: "T01", Role: RoleTrainee}, nil},
		{"no id", RosterEntry{Role: RoleTrainee}, []FieldError{fe("id", "is required")}},
		{"no role", RosterEntry{ID: "E01"}, []FieldError{fe("role", "is required")}},
		{"bad role", RosterEntry{ID: "E01", Role: "nurse"}, []FieldError{fe("role", `"nurse" is not one of endoscopist, trainee`)}},
		{"name too long", RosterEntry{ID: "E01", Name: strings.Repeat("n", 201), Role: RoleEndoscopist}, []FieldError{fe("name", "is longer than 200 characters")}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			checkProblems(t, ValidateRosterEntry(tt.r), tt.want)
		})
	}
}

func TestProblemsField(t *testing.T) {
	ps := Problems{fe("age", "17 is outside 18–110"), fe("sex", "is required"), fe("age", "second reason")}
	if got := ps.Field("age"); got != "17 is outside 18–110" {
		t.Errorf(`Field("age") = %q, want the first reason`, got)
	}
	if got := ps.Field("extent"); got != "" {
		t.Errorf(`Field("extent") = %q, want ""`, got)
	}
	if got := ps[1].Error(); got != "sex: is required" {
		t.Errorf("Error() = %q", got)
	}
}
