package audit

import (
	"fmt"
	"math"
	"strings"
)

// indicatorTitles are the printed names of the indicators, in plain words.
var indicatorTitles = map[string]string{
	"adr":                               "Adenoma detection rate (ADR)",
	"adr_male":                          "ADR, men",
	"adr_female":                        "ADR, women",
	"adr_stool_test_positive":           "ADR after a positive stool test",
	"ssldr":                             "Sessile serrated lesion detection rate",
	"pdr":                               "Polyp detection rate (polypectomy)",
	"aadr":                              "Advanced adenoma detection rate",
	"apc":                               "Adenomas per colonoscopy",
	"proximal_sdr":                      "Proximal serrated lesion detection rate",
	"cir":                               "Caecal intubation rate (CIR)",
	"cir_adjusted":                      "CIR, adjusted for obstruction, prep, colitis",
	"caecal_photo":                      "Caecal photo documentation",
	"prep_adequate":                     "Adequate bowel prep (every segment ≥2)",
	"prep_recorded":                     "Bowel prep score recorded",
	"prep_adequate_total6":              "Adequate bowel prep (Boston total ≥6)",
	"withdrawal_negative":               "Mean withdrawal time, negative procedures",
	"withdrawal_timed":                  "Withdrawal time recorded",
	"withdrawal_6min_share":             "Withdrawal of 6 minutes or more",
	"retroversion":                      "Rectal retroversion",
	"retrieval":                         "Polyp retrieval",
	"tattoo_large":                      "Tattoo of large or suspicious lesions",
	"cold_snare_small":                  "Cold snare for 3–9 mm polypectomy",
	"comfort_discomfort":                "Moderate or severe discomfort (comfort 4–5)",
	"comfort_recorded":                  "Comfort score recorded",
	"perforation":                       "Perforation",
	"bleeding":                          "Post-polypectomy bleeding",
	"sedation_midazolam_median_under70": "Median midazolam, age under 70",
	"sedation_midazolam_median_70plus":  "Median midazolam, age 70 and over",
	"sedation_fentanyl_median_under70":  "Median fentanyl, age under 70",
	"sedation_fentanyl_median_70plus":   "Median fentanyl, age 70 and over",
	"sedation_pethidine_median_under70": "Median pethidine, age under 70",
	"sedation_pethidine_median_70plus":  "Median pethidine, age 70 and over",
	"volume":                            "Procedures per year",
	"adr_with_aid":                      "ADR with computer-aided detection",
	"adr_without_aid":                   "ADR without computer-aided detection",
	"adr_aid_difference":                "ADR difference, with minus without aid",
	"pivi1_agreement":                   "PIVI 1: interval agreement (resect and discard)",
	"pivi2_npv":                         "PIVI 2: NPV for adenoma (diagnose and leave)",
	"pivi2_npv_neoplasia":               "PIVI 2: NPV, SSL and TSA counted positive",
	"high_confidence_rate":              "High-confidence calls, diminutive polyps",
	"optical_sensitivity":               "Optical diagnosis: sensitivity for adenoma",
	"optical_specificity":               "Optical diagnosis: specificity",
	"optical_ppv":                       "Optical diagnosis: positive predictive value",
	"optical_npv":                       "Optical diagnosis: negative predictive value",
	"optical_accuracy":                  "Optical diagnosis: accuracy",
	"optical_kappa":                     "Optical diagnosis: Cohen's kappa",
	"aid_sensitivity":                   "Computer-aided call: sensitivity",
	"aid_specificity":                   "Computer-aided call: specificity",
	"aid_ppv":                           "Computer-aided call: positive predictive value",
	"aid_npv":                           "Computer-aided call: negative predictive value",
	"aid_accuracy":                      "Computer-aided call: accuracy",
	"aid_kappa":                         "Computer-aided call: Cohen's kappa",
	"optical_aid_kappa":                 "Endoscopist and aid agreement (kappa)",
	"interval_adherence":                "Surveillance interval adherence",
	"unassisted_caecal_intubation":      "Unassisted caecal intubation (trainee)",
	"esge2022_sensitivity":              "High-confidence calls: sensitivity (ESGE 2022)",
	"esge2022_specificity":              "High-confidence calls: specificity (ESGE 2022)",
	"esge2022_leave_sensitivity":        "Rectosigmoid high-confidence calls: sensitivity (ESGE 2022)",
	"esge2022_leave_specificity":        "Rectosigmoid high-confidence calls: specificity (ESGE 2022)",
}

// IndicatorTitle returns the printed name of an indicator id, for tables,
// chart axes and the desktop app; an id it does not know is returned with
// its underscores turned to spaces.
func IndicatorTitle(id string) string {
	if t, ok := indicatorTitles[id]; ok {
		return t
	}
	return strings.ReplaceAll(id, "_", " ")
}

// DoseUnit returns the unit a sedation median is measured in, or "".
func DoseUnit(id string) string {
	switch {
	case strings.HasPrefix(id, "sedation_fentanyl"):
		return "µg"
	case strings.HasPrefix(id, "sedation_"):
		return "mg"
	}
	return ""
}

// FormatValue prints an indicator's value as the reports do: rates as
// percentages to one decimal, per-1000 and per-100 figures as such, means in
// minutes, sedation medians with their unit, counts with thousands
// separated, and "–" when there are no cases. A value so close to its
// target that one decimal would hide which side it lies on gets the
// decimals that show it ("94.97%" against "≥ 95.0%").
func FormatValue(ind Indicator) string {
	s := numberText(ind, ind.Value, verdictDigits(ind))
	if u := DoseUnit(ind.ID); u != "" && ind.Value != nil {
		s += " " + u
	}
	return s
}

// FormatInterval prints the 95% interval in brackets in the value's unit,
// or "" when there is none.
func FormatInterval(ind Indicator) string { return intervalText(ind) }

// FormatTarget prints the target ("≥ 35.0%", "< 10.0%" for a strict
// maximum, with any aspirational aim and a dose unit), or "" when the
// profile sets none.
func FormatTarget(ind Indicator) string {
	s := targetText(ind)
	if u := DoseUnit(ind.ID); u != "" && s != "" {
		s += " " + u
	}
	return s
}

// FormatCases prints the count behind a figure: "k/n" for proportions and n
// otherwise, thousands separated.
func FormatCases(ind Indicator) string { return casesText(ind) }

// countNouns names what an indicator's denominator counts where it is not
// procedures.
var countNouns = map[string]string{
	"retrieval": "polypectomies", "tattoo_large": "lesions", "cold_snare_small": "polypectomies",
	"bleeding": "procedures with a polypectomy", "pivi2_npv": "lesions", "pivi2_npv_neoplasia": "lesions",
	"high_confidence_rate": "diminutive polyps", "optical_aid_kappa": "lesions",
	"esge2022_sensitivity": "lesions", "esge2022_specificity": "lesions",
}

// CountNoun names what an indicator counts in its denominator:
// "procedures" for most, "lesions" for the optical-diagnosis figures,
// "polypectomies" for retrieval.
func CountNoun(id string) string {
	if n, ok := countNouns[id]; ok {
		return n
	}
	if strings.HasPrefix(id, "optical_") || strings.HasPrefix(id, "aid_") {
		return "lesions"
	}
	return "procedures"
}

// FormatCount prints the count behind a figure in words, naming what is
// counted: "208 of 668 procedures", "332 adenomas in 668 procedures",
// "245 procedures", "1,000 procedures in 365 days".
func FormatCount(ind Indicator) string {
	k := GroupThousands(int64(math.Round(ind.Numerator)))
	n := GroupThousands(int64(ind.Denominator))
	noun := CountNoun(ind.ID)
	switch ind.Kind {
	case "", "proportion":
		return k + " of " + n + " " + noun
	case KindPerYear:
		return k + " procedures in " + n + " days"
	case KindRatio:
		return k + " adenomas in " + n + " " + noun
	case KindDifference:
		return "over " + n + " " + noun
	}
	return n + " " + noun
}

// FormatVerdict prints the verdict in words; a figure whose histology is
// still awaited says how many cases wait.
func FormatVerdict(ind Indicator) string {
	w := ind.Status.Words()
	if ind.AwaitingHistology > 0 {
		w += fmt.Sprintf("; %s awaiting histology", GroupThousands(int64(ind.AwaitingHistology)))
	}
	return w
}

// VerdictShape is the shape printed before a verdict so that it reads
// without colour: ● meets, ▼ below, ○ too few cases to judge, ■ reported
// without a target.
func VerdictShape(s Status) string {
	switch s {
	case Meets:
		return "●"
	case Below:
		return "▼"
	case TooFew:
		return "○"
	}
	return "■"
}
