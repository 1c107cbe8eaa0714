package audit

import (
	"fmt"
	"strings"
)

// The catalogue of indicators: every figure the engine produces has one
// entry here saying what it is called, how it reads and prints, how it is
// counted and where the definition comes from. The metrics table and JSON,
// the desktop app's figure rows, the charts, the PDF tables and the methods
// page all read it, so adding an indicator is one entry plus its arithmetic
// (TestCatalogueCoversTheEngine checks that the two agree).

// Kind says how an indicator's value reads: a proportion (the zero Kind),
// a mean count, a mean, a median, a yearly count, a difference of two
// proportions or Cohen's kappa. In JSON it is written as its name
// ("ratio", "mean", …) and left out for a proportion.
type Kind int

// Indicator kinds.
const (
	KindProportion Kind = iota // k of n, Wilson (or exact) interval
	KindRatio                  // a mean count per procedure (apc), exact Poisson interval
	KindMean                   // numerator is a sum, denominator a count, Student t interval
	KindMedian                 // numerator is the sum of the values, denominator their count; no interval
	KindPerYear                // numerator procedures, denominator days; value per 365 days
	KindDifference             // a difference of two proportions, Newcombe hybrid interval
	KindKappa                  // Cohen's kappa, numerator the agreements, denominator the items
)

var kindNames = [...]string{"proportion", "ratio", "mean", "median", "per_year", "difference", "kappa"}

// String returns the kind's name as JSON writes it ("per_year").
func (k Kind) String() string {
	if k >= 0 && int(k) < len(kindNames) {
		return kindNames[k]
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// MarshalText writes the kind's name.
func (k Kind) MarshalText() ([]byte, error) {
	if k < 0 || int(k) >= len(kindNames) {
		return nil, fmt.Errorf("unknown indicator kind %d", int(k))
	}
	return []byte(k.String()), nil
}

// UnmarshalText reads a kind's name; an empty name is a proportion.
func (k *Kind) UnmarshalText(b []byte) error {
	if len(b) == 0 {
		*k = KindProportion
		return nil
	}
	for i, n := range kindNames {
		if n == string(b) {
			*k = Kind(i)
			return nil
		}
	}
	return fmt.Errorf("unknown indicator kind %q", b)
}

// Group is the heading an indicator is listed under, in the reports' tables
// and on the figures screen.
type Group int

// Groups, in the order they are shown.
const (
	GroupDetection Group = iota
	GroupCompletion
	GroupWithdrawal
	GroupPolypectomy
	GroupComfort
	GroupSedation
	GroupVolume
	GroupOptical
	GroupSurveillance
	GroupTraining
	nGroups
)

var groupTitles = [nGroups]string{
	"Detection (detection-eligible procedures)",
	"Completion and bowel preparation",
	"Withdrawal",
	"Polypectomy",
	"Comfort and safety",
	"Sedation (median dose)",
	"Volume and computer-aided detection",
	"Optical diagnosis against pathology (lesions)",
	"Surveillance",
	"Training (cases the trainee performed)",
}

// Title returns the group's heading.
func (g Group) Title() string {
	if g >= 0 && g < nGroups {
		return groupTitles[g]
	}
	return "Other figures"
}

// Judging says what an indicator's verdict is judged against.
type Judging int

// How a verdict is reached.
const (
	// ByProfile: the standard profile's target for the indicator's id, if it
	// sets one; otherwise the figure is reported.
	ByProfile Judging = iota
	// ByThreshold: a published threshold the program applies whatever the
	// profile (PIVI's 90%; the ESGE 2022 competence standards).
	ByThreshold
	// NotJudged: always reported without a target (a comparison, or a
	// figure no standard sets a level for).
	NotJudged
)

// Definition is one indicator's entry in the catalogue.
type Definition struct {
	// ID names the indicator in JSON, the metrics table and profile files.
	ID string
	// Title is its printed name in tables, charts and on screen.
	Title string
	// Short is its label in a narrow column.
	Short string
	// Group is the heading it is listed under.
	Group Group
	// Kind says how its value reads.
	Kind Kind
	// Scale is 1000 or 100 for a rare-event proportion printed per 1000 or
	// per 100; 0 otherwise.
	Scale int
	// Unit is the unit of a mean or median ("min", "mg", "µg").
	Unit string
	// Counts names what its denominator counts ("procedures", "lesions").
	Counts string
	// Judged says what its verdict is judged against.
	Judged Judging
	// MethodTerm is the heading its method is printed under on the methods
	// page when the method explains a family of figures; "" prints Title.
	MethodTerm string
	// Method says how it is counted, for the methods page; "" when the
	// method of the first figure of its family covers it.
	Method string
	// Source is where its definition comes from: a publication,
	// SourceProfile where the standard profile's own source defines it, or
	// SourceCommon where no single publication does. The methods page
	// prints a publication after the method.
	Source string
}

// Percent reports whether the figure prints as a percentage: a proportion
// not scaled per 1000 or per 100.
func (d Definition) Percent() bool { return d.Kind == KindProportion && d.Scale == 0 }

// Sources that are not a publication of their own.
const (
	// SourceProfile: the standard profile's own source defines the figure
	// (its population and target), ASGE/ACG 2024, BSG/JAG 2016 or ESGE 2017.
	SourceProfile = "the standard profile's source"
	// SourceCommon: a figure of the trade with no single publication
	// behind its definition (common practice).
	SourceCommon = "common practice"
)

// Publications several entries cite.
const (
	srcRees     = "Rees CJ et al., Gut 2016;65:1923–1929 (BSG/JAG)"
	srcESGE     = "Kaminski MF et al., Endoscopy 2017;49:378–397 (ESGE)"
	srcESGE2022 = "Houwen BBSL et al., Endoscopy 2022;54:88–99 (ESGE), thresholds from memory — verify"
	srcPIVI     = "Rex DK et al., Gastrointest Endosc 2011;73:419–422 (ASGE PIVI)"
)

// catalogue is every indicator in the order reports and screens list them.
var catalogue = []Definition{
	{ID: "adr", Title: "Adenoma detection rate (ADR)", Short: "ADR", Group: GroupDetection, Counts: "procedures", Source: SourceProfile,
		Method: "Detection-eligible procedures with at least one adenoma (tubular, tubulovillous or villous adenoma, or adenocarcinoma) over detection-eligible procedures. adr_male and adr_female split it by recorded sex F and M."},
	{ID: "adr_male", Title: "ADR, men", Short: "ADR men", Group: GroupDetection, Counts: "procedures", Source: SourceProfile},
	{ID: "adr_female", Title: "ADR, women", Short: "ADR women", Group: GroupDetection, Counts: "procedures", Source: SourceProfile},
	{ID: "adr_stool_test_positive", Title: "ADR after a positive stool test", Short: "ADR stool test", Group: GroupDetection, Counts: "procedures", Source: SourceProfile,
		Method: "The same count over procedures for a positive stool test (FIT or FOBT) in the profile's age range and exclusions."},
	{ID: "ssldr", Title: "Sessile serrated lesion detection rate", Short: "SSLDR", Group: GroupDetection, Counts: "procedures", Source: SourceProfile,
		Method: "Eligible procedures with at least one sessile serrated lesion (SSL, with or without dysplasia; not TSA) over eligible procedures."},
	{ID: "pdr", Title: "Polyp detection rate (polypectomy)", Short: "PDR", Group: GroupDetection, Counts: "procedures", Source: SourceCommon,
		Method: "Eligible procedures with at least one polypectomy (cold or hot snare, cold forceps, EMR en bloc or piecemeal, ESD; not biopsy only)."},
	{ID: "aadr", Title: "Advanced adenoma detection rate", Short: "AADR", Group: GroupDetection, Counts: "procedures", Source: SourceCommon,
		Method: "Eligible procedures with an advanced adenoma: an adenoma of 10 mm or more, tubulovillous or villous, with high-grade dysplasia, or adenocarcinoma."},
	{ID: "apc", Title: "Adenomas per colonoscopy", Short: "APC", Group: GroupDetection, Kind: KindRatio, Counts: "procedures", Source: SourceCommon,
		Method: "Adenomas over eligible procedures, a mean count; the interval is the exact Poisson interval on the adenoma count divided by the procedures."},
	{ID: "proximal_sdr", Title: "Proximal serrated lesion detection rate", Short: "Proximal SDR", Group: GroupDetection, Counts: "procedures", Source: SourceCommon,
		Method: "Eligible procedures with a serrated lesion (SSL, TSA, or hyperplastic polyp of 10 mm or more) proximal to the descending colon."},

	{ID: "cir", Title: "Caecal intubation rate (CIR)", Short: "CIR", Group: GroupCompletion, Counts: "procedures", Source: SourceProfile,
		Method: "Procedures reaching the caecum, terminal ileum or an anastomosis over every procedure in the period, whatever age, indication or exclusion. Where the profile's source defines the rate with photo documentation (BSG/JAG 2016: \"unadjusted caecal intubation with photo documentation\"), a complete procedure counts only when the caecal landmarks were photographed; the other standards measure photo documentation as its own figure."},
	{ID: "cir_adjusted", Title: "CIR, adjusted for obstruction, prep, colitis", Short: "CIR adjusted", Group: GroupCompletion, Counts: "procedures", Source: SourceCommon,
		Method: "As the caecal intubation rate (with the same photo rule), with procedures stopped for obstruction, poor preparation or severe colitis left out of the denominator."},
	{ID: "caecal_photo", Title: "Caecal photo documentation", Short: "Caecal photo", Group: GroupCompletion, Counts: "procedures", Source: SourceCommon,
		Method: "Complete procedures with photo documentation of the caecal landmarks over complete procedures."},
	{ID: "prep_adequate", Title: "Adequate bowel prep (every segment ≥2)", Short: "Prep adequate", Group: GroupCompletion, Counts: "procedures", Source: SourceProfile,
		Method: "Outpatient procedures with every Boston segment scored 2 or more over outpatient procedures with all three segments scored; prep_recorded gives the share of all procedures scored, so missing scores cannot flatter the figure. prep_adequate_total6 is ESGE's rule (Boston total 6 or more, inpatients excluded)."},
	{ID: "prep_recorded", Title: "Bowel prep score recorded", Short: "Prep recorded", Group: GroupCompletion, Counts: "procedures", Source: SourceCommon},
	{ID: "prep_adequate_total6", Title: "Adequate bowel prep (Boston total ≥6)", Short: "Prep total ≥6", Group: GroupCompletion, Counts: "procedures", Source: srcESGE},
	{ID: "retroversion", Title: "Rectal retroversion", Short: "Retroversion", Group: GroupCompletion, Counts: "procedures", Source: srcRees,
		Method: "Procedures with rectal retroversion recorded as done over those where it applied."},

	{ID: "withdrawal_negative", Title: "Mean withdrawal time, negative procedures", Short: "Withdrawal", Group: GroupWithdrawal, Kind: KindMean, Unit: "min", Counts: "procedures", Source: SourceProfile,
		Method: "Mean withdrawal time in minutes over eligible, complete, timed procedures with no polypectomy and no biopsy; Student t interval. withdrawal_timed is the share of those procedures timed; withdrawal_6min_share the share of at least 6 minutes."},
	{ID: "withdrawal_timed", Title: "Withdrawal time recorded", Short: "Withdrawal timed", Group: GroupWithdrawal, Counts: "procedures", Source: SourceCommon},
	{ID: "withdrawal_6min_share", Title: "Withdrawal of 6 minutes or more", Short: "Withdrawal ≥6 min", Group: GroupWithdrawal, Counts: "procedures", Source: SourceCommon},

	{ID: "retrieval", Title: "Polyp retrieval", Short: "Retrieval", Group: GroupPolypectomy, Counts: "polypectomies", Source: srcRees,
		Method: "Polypectomies with the lesion retrieved over polypectomies (lesion level)."},
	{ID: "tattoo_large", Title: "Tattoo of large or suspicious lesions", Short: "Tattoo", Group: GroupPolypectomy, Counts: "lesions", Source: srcRees,
		Method: "Lesions of 20 mm or more, or called deep invasive, outside the rectum and caecum, that were tattooed (lesion level)."},
	{ID: "cold_snare_small", Title: "Cold snare for 3–9 mm polypectomy", Short: "Cold snare 3–9 mm", Group: GroupPolypectomy, Counts: "polypectomies", Source: srcESGE + ", definition from memory — verify",
		Method: "Polypectomies of lesions of 3–9 mm done by cold snare over polypectomies of 3–9 mm lesions (lesion level)."},

	{ID: "comfort_discomfort", Title: "Moderate or severe discomfort (comfort 4–5)", Short: "Discomfort", Group: GroupComfort, Counts: "procedures", Source: "Siau K et al., Frontline Gastroenterol 2023;14:201 (JAG certification KPI)",
		Method: "Procedures with a Gloucester comfort score of 4 or 5 over procedures with a score; a maximum. The JAG standard asks for below 10%, a strict maximum: exactly 10% does not meet it. comfort_recorded is the share of procedures scored."},
	{ID: "comfort_recorded", Title: "Comfort score recorded", Short: "Comfort recorded", Group: GroupComfort, Counts: "procedures", Source: srcESGE},
	{ID: "perforation", Title: "Perforation", Short: "Perforation", Group: GroupComfort, Scale: 1000, Counts: "procedures", Source: srcRees,
		Method: "Perforations within 30 days per 1000 procedures; bleeding is bleeding needing intervention per 100 procedures with a polypectomy. Both use the exact Clopper–Pearson interval, as rare events. Where a standard asks for below 1 per 1000 or below 1 per 100, its profile marks the maximum strict, so exactly at the limit does not meet it."},
	{ID: "bleeding", Title: "Post-polypectomy bleeding", Short: "Bleeding", Group: GroupComfort, Scale: 100, Counts: "procedures with a polypectomy", Source: srcRees},

	{ID: "sedation_midazolam_median_under70", Title: "Median midazolam, age under 70", Short: "Midazolam <70", Group: GroupSedation, Kind: KindMedian, Unit: "mg", Counts: "procedures", Source: srcRees,
		MethodTerm: "Sedation medians",
		Method:     "Median doses of midazolam (mg), fentanyl (µg) and pethidine (mg) over procedures with the dose recorded, under 70 and from 70 years; an even count takes the mean of the two middle values."},
	{ID: "sedation_midazolam_median_70plus", Title: "Median midazolam, age 70 and over", Short: "Midazolam ≥70", Group: GroupSedation, Kind: KindMedian, Unit: "mg", Counts: "procedures", Source: srcRees},
	{ID: "sedation_fentanyl_median_under70", Title: "Median fentanyl, age under 70", Short: "Fentanyl <70", Group: GroupSedation, Kind: KindMedian, Unit: "µg", Counts: "procedures", Source: srcRees},
	{ID: "sedation_fentanyl_median_70plus", Title: "Median fentanyl, age 70 and over", Short: "Fentanyl ≥70", Group: GroupSedation, Kind: KindMedian, Unit: "µg", Counts: "procedures", Source: srcRees},
	{ID: "sedation_pethidine_median_under70", Title: "Median pethidine, age under 70", Short: "Pethidine <70", Group: GroupSedation, Kind: KindMedian, Unit: "mg", Counts: "procedures", Source: srcRees},
	{ID: "sedation_pethidine_median_70plus", Title: "Median pethidine, age 70 and over", Short: "Pethidine ≥70", Group: GroupSedation, Kind: KindMedian, Unit: "mg", Counts: "procedures", Source: srcRees},

	{ID: "volume", Title: "Procedures per year", Short: "Volume", Group: GroupVolume, Kind: KindPerYear, Counts: "procedures", Source: srcRees,
		Method: "Procedures in the period scaled to 365 days. It is a count, not a rate, so the minimum number of cases does not apply to it. It is judged per endoscopist only, and only over a period of at least a year (the last day on or after the first day plus one year less one day); over a shorter period, such as a quarter, it is reported with a note."},
	{ID: "adr_with_aid", Title: "ADR with computer-aided detection", Short: "ADR with aid", Group: GroupVolume, Counts: "procedures", Source: SourceCommon,
		Method: "ADR over eligible procedures with computer-aided detection used, and without it; procedures with its use not recorded are in neither group. The difference (with minus without) has Newcombe's hybrid score interval and is never judged."},
	{ID: "adr_without_aid", Title: "ADR without computer-aided detection", Short: "ADR without aid", Group: GroupVolume, Counts: "procedures", Source: SourceCommon},
	{ID: "adr_aid_difference", Title: "ADR difference, with minus without aid", Short: "ADR aid difference", Group: GroupVolume, Kind: KindDifference, Counts: "procedures", Judged: NotJudged, Source: SourceCommon},

	{ID: "pivi1_agreement", Title: "PIVI 1: interval agreement (resect and discard)", Short: "PIVI 1 agreement", Group: GroupOptical, Counts: "procedures", Judged: ByThreshold, Source: srcPIVI,
		Method: "PIVI 1 (resect and discard): procedures with at least one diminutive polyp called adenoma, hyperplastic or SSL with high confidence, every lesion with histology, passing the exam gate. Interval A replaces each such polyp by its call (adenoma as tubular adenoma with low-grade dysplasia); interval B uses histology for all. Agreement is the same interval category; disagreements are split into optical shorter, optical longer (the unsafe direction) and optical outside the guideline."},
	{ID: "pivi2_npv", Title: "PIVI 2: NPV for adenoma (diagnose and leave)", Short: "PIVI 2 NPV", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcPIVI,
		Method: "PIVI 2 (diagnose and leave): diminutive rectosigmoid polyps called hyperplastic with high confidence whose histology is not an adenoma, over such polyps with histology, in every procedure of the period. pivi2_npv_neoplasia also counts SSL and TSA as positive."},
	{ID: "pivi2_npv_neoplasia", Title: "PIVI 2: NPV, SSL and TSA counted positive", Short: "PIVI 2 NPV, SSL/TSA", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcPIVI},
	{ID: "high_confidence_rate", Title: "High-confidence calls, diminutive polyps", Short: "High confidence", Group: GroupOptical, Counts: "diminutive polyps", Judged: NotJudged, Source: SourceCommon,
		Method: "Diminutive lesions (5 mm or less) called with high confidence over diminutive lesions given an optical class."},
	{ID: "optical_sensitivity", Title: "Optical diagnosis: sensitivity for adenoma", Short: "Sensitivity", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon,
		MethodTerm: "Optical diagnosis figures",
		Method:     "Lesions with an optical class other than uncertain and a final histology. Positive is adenoma histology (cancer included); a call of adenoma or deep invasive predicts positive, hyperplastic or SSL predicts negative. Sensitivity, specificity, predictive values and accuracy have Wilson intervals; kappa is Cohen's, with the Fleiss–Cohen–Everitt large-sample standard error (see Statistical methods). The same figures are given for the computer-aided class where recorded."},
	{ID: "optical_specificity", Title: "Optical diagnosis: specificity", Short: "Specificity", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "optical_ppv", Title: "Optical diagnosis: positive predictive value", Short: "PPV", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "optical_npv", Title: "Optical diagnosis: negative predictive value", Short: "NPV", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "optical_accuracy", Title: "Optical diagnosis: accuracy", Short: "Accuracy", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "optical_kappa", Title: "Optical diagnosis: Cohen's kappa", Short: "Kappa", Group: GroupOptical, Kind: KindKappa, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_sensitivity", Title: "Computer-aided call: sensitivity", Short: "Aid sensitivity", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_specificity", Title: "Computer-aided call: specificity", Short: "Aid specificity", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_ppv", Title: "Computer-aided call: positive predictive value", Short: "Aid PPV", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_npv", Title: "Computer-aided call: negative predictive value", Short: "Aid NPV", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_accuracy", Title: "Computer-aided call: accuracy", Short: "Aid accuracy", Group: GroupOptical, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "aid_kappa", Title: "Computer-aided call: Cohen's kappa", Short: "Aid kappa", Group: GroupOptical, Kind: KindKappa, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "optical_aid_kappa", Title: "Endoscopist and aid agreement (kappa)", Short: "Endoscopist–aid kappa", Group: GroupOptical, Kind: KindKappa, Counts: "lesions", Judged: NotJudged, Source: SourceCommon},
	{ID: "esge2022_sensitivity", Title: "High-confidence calls: sensitivity (ESGE 2022)", Short: "ESGE 2022 sensitivity", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcESGE2022},
	{ID: "esge2022_specificity", Title: "High-confidence calls: specificity (ESGE 2022)", Short: "ESGE 2022 specificity", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcESGE2022},
	{ID: "esge2022_leave_sensitivity", Title: "Rectosigmoid high-confidence calls: sensitivity (ESGE 2022)", Short: "ESGE 2022 leave sensitivity", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcESGE2022},
	{ID: "esge2022_leave_specificity", Title: "Rectosigmoid high-confidence calls: specificity (ESGE 2022)", Short: "ESGE 2022 leave specificity", Group: GroupOptical, Counts: "lesions", Judged: ByThreshold, Source: srcESGE2022},

	{ID: "interval_adherence", Title: "Surveillance interval adherence", Short: "Interval adherence", Group: GroupSurveillance, Counts: "procedures", Source: "Rex DK et al., Am J Gastroenterol 2024;119:1754–1780 (ASGE/ACG priority indicator); " + srcESGE + " key measure",
		Method: "Procedures whose recorded recommended interval equals the interval worked out under the guideline, over procedures with a recorded recommendation. A procedure whose worked-out interval still awaits histology has no interval yet: it is left out, and the figure's note says how many were."},

	{ID: "unassisted_caecal_intubation", Title: "Unassisted caecal intubation (trainee)", Short: "Unassisted CIR", Group: GroupTraining, Counts: "procedures", Source: SourceCommon,
		Method: "Trainee cases where the trainee reached the caecum without the trainer taking over, over trainee cases with the outcome recorded."},
}

// byID indexes the catalogue.
var byID = func() map[string]int {
	m := make(map[string]int, len(catalogue))
	for i, d := range catalogue {
		if _, dup := m[d.ID]; dup {
			panic("audit: indicator " + d.ID + " is in the catalogue twice")
		}
		m[d.ID] = i
	}
	return m
}()

// Catalogue returns every indicator's definition in the order reports and
// screens list them.
func Catalogue() []Definition { return append([]Definition(nil), catalogue...) }

// Lookup returns the definition of an indicator id and whether the
// catalogue has it. An id it does not know gets a proportion named by its
// id with underscores turned to spaces, counted in procedures, reported
// without a target and listed under "Other figures".
func Lookup(id string) (Definition, bool) {
	if i, ok := byID[id]; ok {
		return catalogue[i], true
	}
	return Definition{ID: id, Title: strings.ReplaceAll(id, "_", " "), Short: id, Group: nGroups, Counts: "procedures", Judged: NotJudged}, false
}

// define returns the definition of an id the engine produces; the
// catalogue test makes sure it has one.
func define(id string) Definition {
	d, _ := Lookup(id)
	return d
}
