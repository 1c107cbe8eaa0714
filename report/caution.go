package report

// The cautions every interval, eligibility and audit output carries
// (clinical-reference §7). They live in one place so that the command line,
// the desktop app and the PDF report print the same words.

// notDevice is the sentence every caution ends with.
const notDevice = "polypledger is an audit tool, not a medical device."

// IntervalCaution returns the caution printed with every suggested
// surveillance interval under guideline g: the interval is a suggestion
// read from the named guideline's table, and the clinician responsible for
// the patient confirms or changes it.
func IntervalCaution(g Guideline) string {
	return "Suggested interval only, worked out from the recorded findings under " + g.Title() +
		". It assumes the record is complete and correct; the responsible clinician confirms or " +
		"changes it, and local policy decides. " + notDevice
}

// EligibilityCaution returns the caution printed beside every
// resect-and-discard or diagnose-and-leave eligibility figure: the figures
// describe past performance, and whether either strategy may be used is a
// matter of local policy.
func EligibilityCaution() string {
	return "These figures describe how past optical diagnoses compared with pathology. They do not " +
		"permit anyone to discard polyps or leave them in place: local policy decides whether " +
		"resect-and-discard or diagnose-and-leave is allowed, and under what conditions. " + notDevice
}

// AuditCaution returns the caution printed on every audit report and
// indicator screen.
func AuditCaution() string {
	return "These figures support audit and appraisal. They are only as good as the records behind " +
		"them; small numbers are shown but not judged, interval suggestions are for the " +
		"responsible clinician to confirm, and local policy decides. " + notDevice
}
