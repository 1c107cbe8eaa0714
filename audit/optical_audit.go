package audit

import (
	"cmp"
	"slices"
	"strings"

	"polypledger/logbook"
	"polypledger/surveillance"
)

// OpticalAudit is the accumulator of the optical-diagnosis audit for one
// population (the unit or one operator): the endoscopist's and the
// computer-aided calls against histology, split by imaging mode, PIVI 1 and
// PIVI 2, and the eligibility figures. Add every case of the population in
// the period, whatever its indication or exclusion (clinical-reference §3).
// It keeps running counts only, plus the list of PIVI 1 disagreements. An
// OpticalAudit is not safe for concurrent use.
type OpticalAudit struct {
	guideline surveillance.Guideline
	settings  DiscardSettings

	all       opticalCounts
	byImaging [5]opticalCounts // logbook.ImagingModes, then not recorded
	elig      discardCounts

	pivi2N, pivi2NotAdenoma, pivi2NotNeoplastic int

	pivi1N, pivi1Agree, pivi1Shorter, pivi1Longer, pivi1Outside, pivi1MissingHistology int
	disagreements                                                                      []IntervalDisagreement

	iv *caseIntervals // shared within a Pass; nil on its own
}

// NewOpticalAudit starts an optical-diagnosis audit whose PIVI 1 intervals
// follow guideline g (an unknown one is read as DefaultGuideline) and whose
// eligibility figures follow s (see DiscardSettings for its defaults).
func NewOpticalAudit(g surveillance.Guideline, s DiscardSettings) *OpticalAudit {
	if _, err := surveillance.ParseGuideline(string(g)); err != nil {
		g = surveillance.DefaultGuideline
	}
	return &OpticalAudit{guideline: g, settings: s.WithDefaults()}
}

// OpticalAuditFactory returns a factory for the metrics engine's Extra list
// (it converts to AccumulatorFactory).
func OpticalAuditFactory(g surveillance.Guideline, s DiscardSettings) func() Accumulator {
	return func() Accumulator { return NewOpticalAudit(g, s) }
}

// Add counts one case; neither it nor its lesions are retained.
func (a *OpticalAudit) Add(c *logbook.Case) {
	for i := range c.Lesions {
		l := &c.Lesions[i]
		a.all.add(l)
		a.byImaging[imagingSlot(l.Imaging)].add(l)
		a.elig.add(l)
		if counts, notAdenoma, notNeoplastic := PIVI2Lesion(l); counts {
			a.pivi2N++
			if notAdenoma {
				a.pivi2NotAdenoma++
			}
			if notNeoplastic {
				a.pivi2NotNeoplastic++
			}
		}
	}
	r := a.iv.evaluatePIVI1(a.guideline, c)
	if !r.Included {
		if r.Excluded == PIVI1MissingHistology {
			a.pivi1MissingHistology++
		}
		return
	}
	a.pivi1N++
	switch r.Kind {
	case PIVI1Agree:
		a.pivi1Agree++
		return
	case PIVI1OpticalShorter:
		a.pivi1Shorter++
	case PIVI1OpticalLonger:
		a.pivi1Longer++
	case PIVI1OpticalOutside:
		a.pivi1Outside++
	}
	a.disagreements = append(a.disagreements, IntervalDisagreement{
		ProcedureID: strings.Clone(c.ID), Patient: a.iv.shortCode(c),
		OperatorID: strings.Clone(c.OperatorID), PerformedOn: logbook.FormatDate(c.PerformedOn),
		Optical: r.Optical.Interval, Histology: r.Histology.Interval, Kind: r.Kind,
	})
}

// piviTarget returns the PIVI target of 90%.
func piviTarget() *Target {
	t := PIVIThreshold
	return &Target{Minimum: &t}
}

func (a *OpticalAudit) pivi1() PIVI1Detail {
	d := PIVI1Detail{
		Guideline: a.guideline,
		Agreement: Proportion("pivi1_agreement", a.pivi1Agree, a.pivi1N),
		Agree:     a.pivi1Agree, Shorter: a.pivi1Shorter, Longer: a.pivi1Longer, Outside: a.pivi1Outside,
		MissingHistology: a.pivi1MissingHistology,
		Disagreements:    append([]IntervalDisagreement(nil), a.disagreements...),
	}
	// Cases may arrive in any order; list them by date, then id.
	slices.SortFunc(d.Disagreements, func(x, y IntervalDisagreement) int {
		if c := cmp.Compare(x.PerformedOn, y.PerformedOn); c != 0 {
			return c
		}
		return cmp.Compare(x.ProcedureID, y.ProcedureID)
	})
	d.Agreement.Judge(piviTarget(), a.settings.MinCases)
	return d
}

func (a *OpticalAudit) pivi2() PIVI2Detail {
	d := PIVI2Detail{
		NPV:          Proportion("pivi2_npv", a.pivi2NotAdenoma, a.pivi2N),
		NPVNeoplasia: Proportion("pivi2_npv_neoplasia", a.pivi2NotNeoplastic, a.pivi2N),
	}
	d.NPV.Judge(piviTarget(), a.settings.MinCases)
	d.NPVNeoplasia.Judge(piviTarget(), a.settings.MinCases)
	return d
}

// Indicators returns, in this order: pivi1_agreement, pivi2_npv,
// pivi2_npv_neoplasia (targets 90%, too_few under the local minimum),
// high_confidence_rate, optical_sensitivity, optical_specificity,
// optical_ppv, optical_npv, optical_accuracy, optical_kappa, the aid_
// equivalents of the last six, and optical_aid_kappa (endoscopist against
// aid); these are reported without a target.
func (a *OpticalAudit) Indicators() []Indicator {
	p1, p2 := a.pivi1(), a.pivi2()
	f := a.all.figures("all", a.settings.MinCases)
	out := []Indicator{p1.Agreement, p2.NPV, p2.NPVNeoplasia, f.HighConfidence}
	for _, ind := range f.Endoscopist.indicators() {
		out = append(out, *ind)
	}
	for _, ind := range f.Aid.indicators() {
		out = append(out, *ind)
	}
	return append(out, f.EndoscopistVsAid.Kappa)
}

// OpticalDetail is everything the PDF report and the app show of one
// population's optical-diagnosis audit.
type OpticalDetail struct {
	Guideline        surveillance.Guideline `json:"guideline"`
	Endoscopist      OpticalFigures         `json:"endoscopist"`
	Aid              OpticalFigures         `json:"aid"`
	EndoscopistVsAid AgreementFigures       `json:"endoscopist_vs_aid"`
	HighConfidence   Indicator              `json:"high_confidence_rate"`
	ByImaging        []ImagingFigures       `json:"by_imaging"` // modes with at least one lesion counted
	PIVI1            PIVI1Detail            `json:"pivi1"`
	PIVI2            PIVI2Detail            `json:"pivi2"`
	Discard          DiscardFigures         `json:"eligibility"`
	Caution          string                 `json:"caution"`
}

// Detail returns the audit's tables, imaging split, PIVI figures with their
// disagreement list, and the eligibility figures.
func (a *OpticalAudit) Detail() OpticalDetail {
	f := a.all.figures("all", a.settings.MinCases)
	d := OpticalDetail{
		Guideline:   a.guideline,
		Endoscopist: f.Endoscopist, Aid: f.Aid, EndoscopistVsAid: f.EndoscopistVsAid,
		HighConfidence: f.HighConfidence,
		PIVI1:          a.pivi1(), PIVI2: a.pivi2(),
		Caution: AuditCaution(),
	}
	for slot := range a.byImaging {
		if !a.byImaging[slot].empty() {
			d.ByImaging = append(d.ByImaging, a.byImaging[slot].figures(imagingName(slot), a.settings.MinCases))
		}
	}
	d.Discard = a.elig.figures(a.settings, d.PIVI1, d.PIVI2)
	return d
}
