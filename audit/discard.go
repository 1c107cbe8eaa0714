package audit

import (
	"fmt"

	"polypledger/logbook"
	"polypledger/surveillance"
)

// Resect-and-discard and diagnose-and-leave eligibility figures
// (clinical-reference §3, "Resect-and-discard eligibility figures").

// Resect-and-discard rule sets.
const (
	// RuleSetPIVI judges PIVI 1 and PIVI 2 against 90% (Rex 2011).
	RuleSetPIVI = "pivi"
	// RuleSetESGE2022 judges the sensitivity and specificity of
	// high-confidence optical diagnoses of diminutive polyps (Houwen 2022).
	RuleSetESGE2022 = "esge-2022"
)

// RuleSets lists the selectable eligibility rule sets.
var RuleSets = []string{RuleSetPIVI, RuleSetESGE2022}

// DefaultDiscardMinCases is the minimum number of cases behind an
// eligibility figure when the unit has set none. No published number
// exists; 30 is the program's usual small-numbers minimum (common
// practice), and every output prints the minimum in force.
const DefaultDiscardMinCases = 30

// ESGE2022Source is the printed reference of the ESGE competence standards.
const ESGE2022Source = "Houwen BBSL et al. Definition of competence standards for optical diagnosis of diminutive colorectal polyps: European Society of Gastrointestinal Endoscopy (ESGE) Position Statement. Endoscopy 2022;54:88–99. Thresholds as given in the program's clinical reference, recalled from memory and not verified against the text."

// DiscardSettings are the unit's local choices for the eligibility
// figures: the minimum number of cases behind a figure before it is judged,
// and the rule set judged. A MinCases of 0 or less means
// DefaultDiscardMinCases; an empty RuleSet means RuleSetPIVI.
type DiscardSettings struct {
	MinCases int
	RuleSet  string
}

// DefaultDiscardSettings returns the settings used when the unit has
// chosen none.
func DefaultDiscardSettings() DiscardSettings {
	return DiscardSettings{MinCases: DefaultDiscardMinCases, RuleSet: RuleSetPIVI}
}

// Check reports a rule set the program does not know.
func (s DiscardSettings) Check() error {
	if s.RuleSet == "" {
		return nil
	}
	for _, r := range RuleSets {
		if r == s.RuleSet {
			return nil
		}
	}
	return fmt.Errorf("eligibility rule set %q is not one of %s, %s", s.RuleSet, RuleSetPIVI, RuleSetESGE2022)
}

// WithDefaults fills the empty settings; an unknown rule set is read as
// PIVI (Check reports it to the user first).
func (s DiscardSettings) WithDefaults() DiscardSettings {
	if s.MinCases <= 0 {
		s.MinCases = DefaultDiscardMinCases
	}
	if s.Check() != nil || s.RuleSet == "" {
		s.RuleSet = RuleSetPIVI
	}
	return s
}

// ThresholdCheck is one eligibility threshold judged on one population.
type ThresholdCheck struct {
	// Strategy is "resect_and_discard" or "diagnose_and_leave".
	Strategy string `json:"strategy"`
	// Rule says in plain words what is measured and what it must reach.
	Rule      string    `json:"rule"`
	Source    string    `json:"source"`
	Figure    Indicator `json:"figure"`
	Threshold float64   `json:"threshold"`
	// MetOnValue: the point value reaches the threshold.
	MetOnValue bool `json:"met_on_value"`
	// MetOnLowerLimit: the lower 95% limit reaches it too.
	MetOnLowerLimit bool `json:"met_on_lower_limit"`
	// Cases behind the figure, against the local minimum.
	Cases       int  `json:"cases"`
	MinCases    int  `json:"min_cases"`
	EnoughCases bool `json:"enough_cases"`
}

// newCheck judges fig against threshold.
func newCheck(strategy, rule, source string, fig Indicator, threshold float64, minCases int) ThresholdCheck {
	t := threshold
	fig.Judge(&Target{Minimum: &t}, minCases)
	c := ThresholdCheck{Strategy: strategy, Rule: rule, Source: source, Figure: fig, Threshold: threshold,
		Cases: fig.Denominator, MinCases: minCases, EnoughCases: fig.Denominator >= minCases}
	c.MetOnValue = fig.Value != nil && *fig.Value >= threshold
	c.MetOnLowerLimit = fig.CILow != nil && *fig.CILow >= threshold
	return c
}

// DiscardFigures are the resect-and-discard and diagnose-and-leave
// figures of one population.
type DiscardFigures struct {
	RuleSet  string           `json:"rule_set"`
	MinCases int              `json:"min_cases"`
	Checks   []ThresholdCheck `json:"checks"`
	// DiscardEligible counts diminutive lesions removed by polypectomy and
	// called adenoma, hyperplastic or SSL with high confidence, other than
	// those LeaveEligible counts: the lesions a resect-and-discard policy
	// would not have sent to pathology.
	DiscardEligible int `json:"discard_eligible"`
	// LeaveEligible counts diminutive rectosigmoid lesions called
	// hyperplastic with high confidence: the lesions a diagnose-and-leave
	// policy would have left in place.
	LeaveEligible int `json:"leave_eligible"`
	// SpecimensSaved counts the lesions of both groups that were in fact
	// sent to pathology, one specimen per lesion.
	SpecimensSaved int `json:"specimens_saved"`
	// IntervalsCompared, IntervalShorter, IntervalLonger and IntervalOutside
	// repeat PIVI 1: patients whose interval under optical diagnosis would
	// have been the same, shorter, longer, or outside the guideline.
	IntervalsCompared int    `json:"intervals_compared"`
	IntervalShorter   int    `json:"interval_shorter"`
	IntervalLonger    int    `json:"interval_longer"`
	IntervalOutside   int    `json:"interval_outside"`
	Caution           string `json:"caution"`
}

// discardCounts is the running state of the lesion-level eligibility
// figures.
type discardCounts struct {
	// hcDiminutive is the 2×2 table of high-confidence calls of diminutive
	// lesions with final histology (the ESGE 2022 resect-and-discard
	// figures); hcRectosigmoid the same for diminutive rectosigmoid lesions
	// only (the ESGE 2022 leave-in-situ figures, which concern those lesions
	// alone; clinical-reference §3).
	hcDiminutive, hcRectosigmoid BinaryTable
	discard, leave, saved        int
}

func (e *discardCounts) add(l *logbook.Lesion) {
	if !l.IsDiminutive() || l.Confidence != logbook.HighConfidence {
		return
	}
	if row := callClass(l.OpticalClass); row >= 0 && l.Histology.IsFinal() {
		e.hcDiminutive.Add(row == classAdenoma, l.Histology.IsAdenoma())
		if l.Segment.IsRectosigmoid() {
			e.hcRectosigmoid.Add(row == classAdenoma, l.Histology.IsAdenoma())
		}
	}
	if _, _, ok := surveillance.OpticalStandIn(l); !ok {
		return
	}
	counted := false
	switch {
	case l.OpticalClass == logbook.OpticalHyperplastic && l.Segment.IsRectosigmoid():
		e.leave++
		counted = true
	case l.Resection.IsPolypectomy():
		e.discard++
		counted = true
	}
	if counted && l.SentToPathology == logbook.Yes {
		e.saved++
	}
}

// figures judges the rule set of s against the population's figures.
func (e *discardCounts) figures(s DiscardSettings, pivi1 PIVI1Detail, pivi2 PIVI2Detail) DiscardFigures {
	f := DiscardFigures{
		RuleSet: s.RuleSet, MinCases: s.MinCases,
		DiscardEligible: e.discard, LeaveEligible: e.leave, SpecimensSaved: e.saved,
		IntervalsCompared: pivi1.Agreement.Denominator, IntervalShorter: pivi1.Shorter,
		IntervalLonger: pivi1.Longer, IntervalOutside: pivi1.Outside,
		Caution: DiscardCaution(),
	}
	switch s.RuleSet {
	case RuleSetESGE2022:
		sens := func(id string, t BinaryTable) Indicator {
			return Proportion(id, t.TruePositive, t.TruePositive+t.FalseNegative)
		}
		spec := func(id string, t BinaryTable) Indicator {
			return Proportion(id, t.TrueNegative, t.TrueNegative+t.FalsePositive)
		}
		rs, all := e.hcRectosigmoid, e.hcDiminutive
		f.Checks = []ThresholdCheck{
			newCheck("diagnose_and_leave", "sensitivity for adenoma of high-confidence calls of diminutive rectosigmoid polyps, at least 80%", ESGE2022Source, sens("esge2022_leave_sensitivity", rs), 0.80, s.MinCases),
			newCheck("diagnose_and_leave", "specificity for adenoma of high-confidence calls of diminutive rectosigmoid polyps, at least 90%", ESGE2022Source, spec("esge2022_leave_specificity", rs), 0.90, s.MinCases),
			newCheck("resect_and_discard", "sensitivity for adenoma of high-confidence calls of diminutive polyps, at least 80%", ESGE2022Source, sens("esge2022_sensitivity", all), 0.80, s.MinCases),
			newCheck("resect_and_discard", "specificity for adenoma of high-confidence calls of diminutive polyps, at least 80%", ESGE2022Source, spec("esge2022_specificity", all), 0.80, s.MinCases),
		}
	default:
		f.Checks = []ThresholdCheck{
			newCheck("resect_and_discard", "PIVI 1: surveillance interval from optical diagnosis agrees with the interval from histology in at least 90% of patients ("+string(pivi1.Guideline)+")", PIVISource, pivi1.Agreement, PIVIThreshold, s.MinCases),
			newCheck("diagnose_and_leave", "PIVI 2: negative predictive value for adenoma of high-confidence hyperplastic calls of diminutive rectosigmoid polyps, at least 90%", PIVISource, pivi2.NPV, PIVIThreshold, s.MinCases),
		}
	}
	return f
}
