package surveillance

// NotDevice is the sentence every caution ends with: the interval caution
// here, and the audit and eligibility cautions of package audit.
const NotDevice = "polypledger is an audit tool, not a medical device."

// IntervalCaution returns the caution printed with every suggested
// surveillance interval under guideline g: the interval is a suggestion
// read from the named guideline's table, and the clinician responsible for
// the patient confirms or changes it (clinical-reference §7).
func IntervalCaution(g Guideline) string {
	return "Suggested interval only, worked out from the recorded findings under " + g.Title() +
		". It assumes the record is complete and correct; the responsible clinician confirms or " +
		"changes it, and local policy decides. " + NotDevice
}
