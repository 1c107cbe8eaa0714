package audit

import (
	"polypledger/logbook"
	"polypledger/surveillance"
)

// The PIVI thresholds (Rex DK et al., "The American Society for
// Gastrointestinal Endoscopy PIVI (Preservation and Incorporation of
// Valuable Endoscopic Innovations) on real-time endoscopic assessment of the
// histology of diminutive colorectal polyps", Gastrointest Endosc
// 2011;73:419–422; clinical-reference §3).

// PIVIThreshold is the level both PIVI statements ask for: NPV ≥90% for
// diagnose-and-leave, interval agreement ≥90% for resect-and-discard.
const PIVIThreshold = 0.90

// PIVISource is the printed reference of the PIVI statements.
const PIVISource = "Rex DK et al. The American Society for Gastrointestinal Endoscopy PIVI (Preservation and Incorporation of Valuable Endoscopic Innovations) on real-time endoscopic assessment of the histology of diminutive colorectal polyps. Gastrointest Endosc 2011;73:419–422."

// PIVI2Lesion reports whether a lesion counts for PIVI 2 (diagnose and
// leave): diminutive, in the rectum or sigmoid, called hyperplastic with
// high confidence, with a final histology. notAdenoma is true when its
// histology is not an adenoma (cancer counts as adenoma; hyperplastic, SSL,
// TSA, normal, inflammatory and other do not); notNeoplastic is the
// stricter reading where SSL (with or without dysplasia) and TSA count as
// neoplastic too.
func PIVI2Lesion(l *logbook.Lesion) (counts, notAdenoma, notNeoplastic bool) {
	if !l.IsDiminutive() || !l.Segment.IsRectosigmoid() || l.OpticalClass != logbook.OpticalHyperplastic ||
		l.Confidence != logbook.HighConfidence || !l.Histology.IsFinal() {
		return false, false, false
	}
	notAdenoma = !l.Histology.IsAdenoma()
	notNeoplastic = notAdenoma && !l.Histology.IsSSLOrTSA()
	return true, notAdenoma, notNeoplastic
}

// PIVI1Kind is the outcome of comparing a procedure's optical-based interval
// (A) with its histology-based interval (B).
type PIVI1Kind string

// PIVI 1 outcomes.
const (
	PIVI1Agree          PIVI1Kind = "agree"
	PIVI1OpticalShorter PIVI1Kind = "optical_shorter" // A shorter than B: more examinations than needed
	PIVI1OpticalLonger  PIVI1Kind = "optical_longer"  // A longer than B: the unsafe direction
	PIVI1OpticalOutside PIVI1Kind = "optical_outside" // A outside the guideline while B is not
)

// Why a procedure does not count for PIVI 1.
const (
	PIVI1NoEligibleLesion  = "no diminutive lesion called adenoma, hyperplastic or SSL with high confidence"
	PIVI1ExamGate          = "the examination did not pass the exam gate (incomplete, or a Boston segment below 2)"
	PIVI1MissingHistology  = "a lesion was not sent to pathology or its histology is still pending"
	PIVI1HistologyOutside  = "the histology-based interval is outside the guideline"
	PIVI1HistologyNoPeriod = "the histology-based interval could not be set"
)

// PIVI1Result is one procedure's PIVI 1 comparison. When Included is false,
// Excluded says why and the intervals are empty. The two suggestions carry
// their interval codes only (no reasons or caution), since the comparison
// runs over every procedure; Suggest writes out one procedure's findings.
type PIVI1Result struct {
	Included  bool                    `json:"included"`
	Excluded  string                  `json:"excluded,omitempty"`
	Optical   surveillance.Suggestion `json:"optical"`   // interval A
	Histology surveillance.Suggestion `json:"histology"` // interval B
	Kind      PIVI1Kind               `json:"kind,omitempty"`
}

// EvaluatePIVI1 compares the interval from high-confidence optical diagnosis
// of diminutive polyps (histology for the rest) with the interval from
// histology of every polyp, under guideline g (clinical-reference §3 and §4
// step 5). A procedure counts whatever its indication when it passes the
// exam gate (missing Boston scores pass), has at least one diminutive lesion
// called adenoma, hyperplastic or SSL with high confidence, has a final
// histology for every lesion, and its histology-based interval is not
// outside the guideline. Both intervals come from the code path of
// SuggestReading, which differs only in its LesionReading.
func EvaluatePIVI1(g surveillance.Guideline, c *logbook.Case) PIVI1Result {
	return evaluatePIVI1(g, c, nil)
}

// evaluatePIVI1 is EvaluatePIVI1, taking the histology-based interval from
// iv (nil: worked out here).
func evaluatePIVI1(g surveillance.Guideline, c *logbook.Case, iv *caseIntervals) PIVI1Result {
	var r PIVI1Result
	eligible := false
	for i := range c.Lesions {
		if _, _, ok := surveillance.OpticalStandIn(&c.Lesions[i]); ok {
			eligible = true
			break
		}
	}
	switch {
	case !eligible:
		r.Excluded = PIVI1NoEligibleLesion
		return r
	case surveillance.FailsExamGate(&c.Procedure):
		r.Excluded = PIVI1ExamGate
		return r
	}
	for i := range c.Lesions {
		if !c.Lesions[i].Histology.IsFinal() {
			r.Excluded = PIVI1MissingHistology
			return r
		}
	}
	b := iv.histologyFirst(g, c)
	if b.Interval == logbook.IntervalOutside {
		r.Excluded = PIVI1HistologyOutside
		return r
	}
	rb, ok := surveillance.IntervalRank(b.Interval)
	if !ok {
		// Not reachable with every lesion read and the gate passed; kept so
		// that a future rule cannot make a figure out of a non-interval.
		r.Excluded = PIVI1HistologyNoPeriod
		return r
	}
	a := surveillance.SuggestBrief(g, c, surveillance.OpticalFirst)
	r.Included, r.Optical, r.Histology = true, a, b
	ra, ranked := surveillance.IntervalRank(a.Interval)
	switch {
	case a.Interval == b.Interval:
		r.Kind = PIVI1Agree
	case !ranked: // outside: A reads no lesion as pending and shares B's gate
		r.Kind = PIVI1OpticalOutside
	case ra < rb:
		r.Kind = PIVI1OpticalShorter
	default:
		r.Kind = PIVI1OpticalLonger
	}
	return r
}

// IntervalDisagreement is one procedure whose optical-based interval differs
// from its histology-based one. It carries the procedure id and the patient
// short code only.
type IntervalDisagreement struct {
	ProcedureID string           `json:"procedure_id"`
	Patient     string           `json:"patient"` // logbook.ShortCode of the pseudonym
	OperatorID  string           `json:"operator_id"`
	PerformedOn string           `json:"performed_on"`
	Optical     logbook.Interval `json:"optical_interval"`
	Histology   logbook.Interval `json:"histology_interval"`
	Kind        PIVI1Kind        `json:"kind"`
}

// PIVI1Detail is the PIVI 1 figure of one population with its disagreements.
type PIVI1Detail struct {
	Guideline surveillance.Guideline `json:"guideline"`
	Agreement Indicator              `json:"agreement"`
	Agree     int                    `json:"agree"`
	Shorter   int                    `json:"optical_shorter"`
	Longer    int                    `json:"optical_longer"`
	Outside   int                    `json:"optical_outside"`
	// MissingHistology counts procedures with an eligible call that were
	// left out because some lesion had no final histology.
	MissingHistology int `json:"missing_histology"`
	// Disagreements lists every procedure behind Shorter, Longer and
	// Outside, in the order added.
	Disagreements []IntervalDisagreement `json:"disagreements"`
}

// PIVI2Detail is the PIVI 2 figure of one population, both readings.
type PIVI2Detail struct {
	NPV          Indicator `json:"npv"`           // pivi2_npv
	NPVNeoplasia Indicator `json:"npv_neoplasia"` // pivi2_npv_neoplasia
}
