package audit

import (
	"polypledger/logbook"
	"polypledger/surveillance"
)

// caseIntervals holds what a Pass works out about the case being added
// under its guideline, for the accumulators of every population: the unit's
// and the operator's optical-diagnosis audits and interval adherence all
// need the case's histology-based interval, and both audits its PIVI 1
// comparison. Each is worked out once per case, on first use, instead of
// once per accumulator. A nil *caseIntervals works everything out afresh
// (an accumulator used on its own).
type caseIntervals struct {
	guideline surveillance.Guideline
	c         *logbook.Case
	// histology is the histology-first suggestion, and pivi1 the PIVI 1
	// result, when have says so.
	histology surveillance.Suggestion
	pivi1     PIVI1Result
	// patient is the case's patient short code, for the lists of
	// procedures that the unit's and the operator's figures both keep.
	patient string
	have    uint8
}

const (
	haveHistology uint8 = 1 << iota
	havePIVI1
	havePatient
)

// start forgets the previous case: c is the case about to be added (cases
// are passed by a pointer that is reused, so the pointer alone cannot say
// that the case changed).
func (iv *caseIntervals) start(c *logbook.Case) { iv.c, iv.have = c, 0 }

// serves reports whether iv holds the case c under guideline g.
func (iv *caseIntervals) serves(g surveillance.Guideline, c *logbook.Case) bool {
	return iv != nil && iv.c == c && iv.guideline == g
}

// histologyFirst returns the case's interval with every lesion read by its
// histology (surveillance.SuggestBrief under HistologyFirst).
func (iv *caseIntervals) histologyFirst(g surveillance.Guideline, c *logbook.Case) surveillance.Suggestion {
	if !iv.serves(g, c) {
		return surveillance.SuggestBrief(g, c, surveillance.HistologyFirst)
	}
	if iv.have&haveHistology == 0 {
		iv.histology = surveillance.SuggestBrief(g, c, surveillance.HistologyFirst)
		iv.have |= haveHistology
	}
	return iv.histology
}

// evaluatePIVI1 returns EvaluatePIVI1 of the case.
func (iv *caseIntervals) evaluatePIVI1(g surveillance.Guideline, c *logbook.Case) PIVI1Result {
	if !iv.serves(g, c) {
		return evaluatePIVI1(g, c, nil)
	}
	if iv.have&havePIVI1 == 0 {
		iv.pivi1 = evaluatePIVI1(g, c, iv)
		iv.have |= havePIVI1
	}
	return iv.pivi1
}

// shortCode returns logbook.ShortCode of the case's patient.
func (iv *caseIntervals) shortCode(c *logbook.Case) string {
	if iv == nil || iv.c != c {
		return logbook.ShortCode(c.PatientKey)
	}
	if iv.have&havePatient == 0 {
		iv.patient = logbook.ShortCode(c.PatientKey)
		iv.have |= havePatient
	}
	return iv.patient
}
