package audit

import (
	"fmt"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/surveillance"
)

// The cautions every eligibility and audit output carries
// (clinical-reference §7). They live in one place so that the command line,
// the desktop app and the PDF report print the same words.

// DiscardCaution returns the caution printed beside every
// resect-and-discard or diagnose-and-leave eligibility figure: the figures
// describe past performance, and whether either strategy may be used is a
// matter of local policy.
func DiscardCaution() string {
	return "These figures describe how past optical diagnoses compared with pathology. They do not " +
		"permit anyone to discard polyps or leave them in place: local policy decides whether " +
		"resect-and-discard or diagnose-and-leave is allowed, and under what conditions. " + surveillance.NotDevice
}

// AuditCaution returns the caution printed on every audit report and
// indicator screen.
func AuditCaution() string {
	return "These figures support audit and appraisal. They are only as good as the records behind " +
		"them; small numbers are shown but not judged, interval suggestions are for the " +
		"responsible clinician to confirm, and local policy decides. " + surveillance.NotDevice
}

// ProvisionalAwaitingShare is the share of a figure's cases still waiting
// for histology from which its verdict is called provisional: pending
// histology counts as "no adenoma", so a twentieth of the cases still
// waiting can move a detection rate by up to five points (a local choice,
// stated wherever it applies).
const ProvisionalAwaitingShare = 0.05

// PeriodUnfinished reports whether a period whose last day is to is not
// yet over on the civil date today: its figures will change as cases are
// added.
func PeriodUnfinished(to, today time.Time) bool {
	return !to.IsZero() && !today.IsZero() && to.After(today)
}

// ProvisionalNote returns the words printed where an indicator's verdict
// is when that verdict may still change: the period is not over
// (unfinished), or at least ProvisionalAwaitingShare of the figure's cases
// still wait for histology (HistologyAwaitedNote). It is "" when the
// verdict is final.
func ProvisionalNote(ind Indicator, unfinished bool) string {
	var why []string
	if unfinished {
		why = append(why, "the period is not over yet")
	}
	if h := HistologyAwaitedNote(ind); h != "" {
		why = append(why, h)
	}
	if len(why) == 0 {
		return ""
	}
	return "provisional: " + strings.Join(why, "; ")
}

// HistologyAwaitedNote says how many of a figure's cases still wait for
// histology when they are at least ProvisionalAwaitingShare of them
// ("21 of 58 procedures (36%) still await histology"), or "".
func HistologyAwaitedNote(ind Indicator) string {
	n := ind.Denominator
	if n == 0 || ind.AwaitingHistology == 0 || float64(ind.AwaitingHistology) < ProvisionalAwaitingShare*float64(n) {
		return ""
	}
	return fmt.Sprintf("%s of %s %s (%.0f%%) still await histology", GroupThousands(int64(ind.AwaitingHistology)),
		GroupThousands(int64(n)), CountNoun(ind.ID), 100*float64(ind.AwaitingHistology)/float64(n))
}

// Unfinished reports whether the quarter is not over on the civil date
// today (its last day, clipped to the period asked for, lies after it).
func (q QuarterResult) Unfinished(today time.Time) bool {
	to, err := logbook.ParseDate(q.Metrics.To)
	return err == nil && PeriodUnfinished(to, today)
}
