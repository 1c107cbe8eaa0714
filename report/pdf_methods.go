package report

import (
	"fmt"
	"polypledger/audit"
	"polypledger/surveillance"
	"sort"
)

// indicatorDefinitions state how each figure is counted, in the words of
// the methods page (clinical-reference §2–§5).
func indicatorDefinitions() [][2]string {
	return [][2]string{
		{"adr", "Detection-eligible procedures with at least one adenoma (tubular, tubulovillous or villous adenoma, or adenocarcinoma) over detection-eligible procedures. adr_male and adr_female split it by recorded sex F and M."},
		{"adr_stool_test_positive", "The same count over procedures for a positive stool test (FIT or FOBT) in the profile's age range and exclusions."},
		{"ssldr", "Eligible procedures with at least one sessile serrated lesion (SSL, with or without dysplasia; not TSA) over eligible procedures."},
		{"pdr", "Eligible procedures with at least one polypectomy (cold or hot snare, cold forceps, EMR en bloc or piecemeal, ESD; not biopsy only)."},
		{"aadr", "Eligible procedures with an advanced adenoma: an adenoma of 10 mm or more, tubulovillous or villous, with high-grade dysplasia, or adenocarcinoma."},
		{"apc", "Adenomas over eligible procedures, a mean count; the interval is the exact Poisson interval on the adenoma count divided by the procedures."},
		{"proximal_sdr", "Eligible procedures with a serrated lesion (SSL, TSA, or hyperplastic polyp of 10 mm or more) proximal to the descending colon."},
		{"cir", "Procedures reaching the caecum, terminal ileum or an anastomosis over every procedure in the period, whatever age, indication or exclusion. Where the profile's source defines the rate with photo documentation (BSG/JAG 2016: \"unadjusted caecal intubation with photo documentation\"), a complete procedure counts only when the caecal landmarks were photographed; the other standards measure photo documentation as its own figure."},
		{"cir_adjusted", "As the caecal intubation rate (with the same photo rule), with procedures stopped for obstruction, poor preparation or severe colitis left out of the denominator."},
		{"caecal_photo", "Complete procedures with photo documentation of the caecal landmarks over complete procedures."},
		{"prep_adequate", "Outpatient procedures with every Boston segment scored 2 or more over outpatient procedures with all three segments scored; prep_recorded gives the share of all procedures scored, so missing scores cannot flatter the figure. prep_adequate_total6 is ESGE's rule (Boston total 6 or more, inpatients excluded)."},
		{"withdrawal_negative", "Mean withdrawal time in minutes over eligible, complete, timed procedures with no polypectomy and no biopsy; Student t interval. withdrawal_timed is the share of those procedures timed; withdrawal_6min_share the share of at least 6 minutes."},
		{"retroversion", "Procedures with rectal retroversion recorded as done over those where it applied."},
		{"retrieval", "Polypectomies with the lesion retrieved over polypectomies (lesion level)."},
		{"tattoo_large", "Lesions of 20 mm or more, or called deep invasive, outside the rectum and caecum, that were tattooed (lesion level)."},
		{"cold_snare_small", "Polypectomies of lesions of 3–9 mm done by cold snare over polypectomies of 3–9 mm lesions (lesion level)."},
		{"comfort_discomfort", "Procedures with a Gloucester comfort score of 4 or 5 over procedures with a score; a maximum. The JAG standard asks for below 10%, a strict maximum: exactly 10% does not meet it. comfort_recorded is the share of procedures scored."},
		{"perforation", "Perforations within 30 days per 1000 procedures; bleeding is bleeding needing intervention per 100 procedures with a polypectomy. Both use the exact Clopper–Pearson interval, as rare events. Where a standard asks for below 1 per 1000 or below 1 per 100, its profile marks the maximum strict, so exactly at the limit does not meet it."},
		{"Sedation medians", "Median doses of midazolam (mg), fentanyl (µg) and pethidine (mg) over procedures with the dose recorded, under 70 and from 70 years; an even count takes the mean of the two middle values."},
		{"volume", "Procedures in the period scaled to 365 days. It is a count, not a rate, so the minimum number of cases does not apply to it. It is judged per endoscopist only, and only over a period of at least a year (the last day on or after the first day plus one year less one day); over a shorter period, such as a quarter, it is reported with a note."},
		{"adr_with_aid", "ADR over eligible procedures with computer-aided detection used, and without it; procedures with its use not recorded are in neither group. The difference (with minus without) has Newcombe's hybrid score interval and is never judged."},
		{"Optical diagnosis figures", "Lesions with an optical class other than uncertain and a final histology. Positive is adenoma histology (cancer included); a call of adenoma or deep invasive predicts positive, hyperplastic or SSL predicts negative. Sensitivity, specificity, predictive values and accuracy have Wilson intervals; kappa is Cohen's, with the Fleiss–Cohen–Everitt large-sample standard error (see Statistical methods). The same figures are given for the computer-aided class where recorded."},
		{"high_confidence_rate", "Diminutive lesions (5 mm or less) called with high confidence over diminutive lesions given an optical class."},
		{"pivi2_npv", "PIVI 2 (diagnose and leave): diminutive rectosigmoid polyps called hyperplastic with high confidence whose histology is not an adenoma, over such polyps with histology, in every procedure of the period. pivi2_npv_neoplasia also counts SSL and TSA as positive."},
		{"pivi1_agreement", "PIVI 1 (resect and discard): procedures with at least one diminutive polyp called adenoma, hyperplastic or SSL with high confidence, every lesion with histology, passing the exam gate. Interval A replaces each such polyp by its call (adenoma as tubular adenoma with low-grade dysplasia); interval B uses histology for all. Agreement is the same interval category; disagreements are split into optical shorter, optical longer (the unsafe direction) and optical outside the guideline."},
		{"interval_adherence", "Procedures whose recorded recommended interval equals the interval worked out under the guideline, over procedures with a recorded recommendation. A procedure whose worked-out interval still awaits histology has no interval yet: it is left out, and the figure's note says how many were."},
		{"unassisted_caecal_intubation", "Trainee cases where the trainee reached the caecum without the trainer taking over, over trainee cases with the outcome recorded."},
	}
}

// methods prints the methods pages: the profile, every definition, the
// statistics and the published sources.
func (d *doc) methods() {
	in := d.in
	p := in.Profile
	d.newPage("Methods, definitions and sources", true)
	d.subheading("Counting rules", 20)
	d.para("The period runs from its first to its last day, both included, by date performed. Each procedure counts for its " +
		"accountable endoscopist, trainee cases included; the endoscopists listed are those with at least one procedure in " +
		"the period. A procedure is complete when it reached the caecum, the terminal ileum or an anastomosis. Histology still " +
		"pending counts as no adenoma and no SSL: the procedure stays in the denominator, and the report says how many await " +
		"histology. A figure over fewer cases than the profile's minimum is shown but printed as \"too few cases to judge\", " +
		"never as meeting or missing a target. A figure marked † carries a note, printed under its table, where the bare " +
		"numbers would mislead: procedures left out and why, or why the figure is reported rather than judged.")

	d.subheading("Standard profile: "+p.Title+" ("+p.ID+")", 30)
	d.para("Source: " + p.Source)
	if p.Notes != "" {
		d.para("Notes: " + p.Notes)
	}
	e := p.Detection
	age := "any age"
	if e.MinAge > 0 {
		age = fmt.Sprintf("age %d or over", e.MinAge)
	}
	d.para(fmt.Sprintf("Detection-eligible procedures: %s; indication %s; exclusion %s. Stool-test-positive population: "+
		"indication stool_test_positive, age %d or over, exclusion %s. Minimum cases for a verdict: %d.",
		age, audit.CodeList(e.Indications), audit.CodeList(e.Exclusions), p.StoolTest.MinAge, audit.CodeList(p.StoolTest.Exclusions), p.MinCases))
	ids := make([]string, 0, len(p.Targets))
	for id := range p.Targets {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	var rows [][]string
	for _, id := range ids {
		t := p.Targets[id]
		ind := audit.Indicator{ID: id}
		ind.Kind, _ = audit.IndicatorKind(id)
		if ind.Kind == "proportion" {
			ind.Kind = ""
		}
		if id == "perforation" {
			ind.Scale = 1000
		} else if id == "bleeding" {
			ind.Scale = 100
		}
		ask := ""
		switch {
		case t.Minimum != nil:
			ask = audit.TargetSign(false, t.Strict) + " " + audit.ValueText(ind, t.Minimum)
		case t.Maximum != nil:
			ask = audit.TargetSign(true, t.Strict) + " " + audit.ValueText(ind, t.Maximum)
		}
		if u := audit.DoseUnit(id); u != "" && ask != "" {
			ask += " " + u
		}
		aim := ""
		if t.Aspirational != nil {
			aim = audit.ValueText(ind, t.Aspirational)
		}
		rows = append(rows, []string{audit.IndicatorTitle(id), ask, aim, t.Source})
	}
	if len(rows) > 0 {
		d.subheading("Targets this profile sets", 20)
		for _, r := range rows {
			text := "Target " + r[1]
			if r[2] != "" {
				text += ", aspirational " + r[2]
			}
			if r[3] != "" {
				text += ". Source: " + r[3]
			}
			d.definition(r[0], text)
		}
		d.note("Indicators not listed are reported without a verdict. \"<\" and \">\" mark a strict target, where the " +
			"source says \"below\" or \"less than\": a value exactly at the limit does not meet it.")
	}

	d.subheading("Definitions", 30)
	for _, def := range indicatorDefinitions() {
		d.definition(def[0], def[1])
	}
	d.definition("Boston Bowel Preparation Scale", "Right, transverse and left colon each scored 0–3 after cleansing (Lai EJ et al., Gastrointest Endosc 2009;69:620–625); adequate when every segment scores 2 or more (US Multi-Society Task Force, Johnson DA et al., Gastroenterology 2014;147:903–924).")
	d.definition("Size groups", "Diminutive 5 mm or less, small 6–9 mm, large 10 mm or more; rectosigmoid is rectum or sigmoid; proximal is caecum to splenic flexure (common practice).")

	d.subheading("Statistical methods", 30)
	for _, m := range [][2]string{
		{"Wilson score interval", "95% interval of every rate (Wilson EB, J Am Stat Assoc 1927;22:209–212), z = 1.96."},
		{"Clopper–Pearson exact interval", "For rare events (perforation, bleeding): Beta quantiles of the exact binomial interval (Clopper CJ, Pearson ES, Biometrika 1934;26:404–413)."},
		{"Garwood exact Poisson interval", "For a count such as adenomas per colonoscopy: χ² quantiles, lower χ²(2k, 0.025)/2 and upper χ²(2k+2, 0.975)/2 (Garwood F, Biometrika 1936;28:437–442)."},
		{"Newcombe hybrid score interval", "For a difference of two proportions, method 10 of Newcombe RG, Stat Med 1998;17:873–890."},
		{"Student t interval", "For the mean withdrawal time: mean ± t(0.975, n−1)·s/√n."},
		{"Funnel plots", "Each endoscopist's rate against the cases behind it, with the unit's pooled rate as the centre line and exact binomial 95% and 99.8% control limits at each volume, interpolated as Spiegelhalter DJ describes (Stat Med 2005;24:1185–1202)."},
		{"Cohen's kappa", "κ = (po − pe)/(1 − pe) (Cohen J, Educ Psychol Meas 1960;20:37–46). Its 95% interval is κ ± 1.96·SE with the large-sample standard error of Fleiss JL, Cohen J, Everitt BS (Psychol Bull 1969;72:323–327), the one general-purpose statistics libraries report, clamped to the range of kappa, −1 to 1. Check: the table 20, 5 / 10, 15 gives κ 0.40, SE 0.1270, interval 0.151 to 0.649."},
		{"CUSUM learning curve", "Bolsin S, Colson M, Int J Qual Health Care 2000;12:433–438: P = ln(p1/p0), Q = ln((1−p0)/(1−p1)), s = Q/(P+Q); each success subtracts s, each failure adds 1−s; limits h0 = ln((1−α)/β)/(P+Q) and h1 = ln((1−β)/α)/(P+Q). Defaults p0 0.10, p1 0.20, α = β = 0.10 are a local choice."},
	} {
		d.definition(m[0], m[1])
	}

	d.subheading("Optical diagnosis and surveillance sources", 30)
	d.definition("PIVI", audit.PIVISource)
	d.definition("ESGE 2019", "Bisschops R et al., Endoscopy 2019;51:1155–1179, recommendation 4: optical diagnosis may replace histology for diminutive polyps only under strictly controlled conditions; it sets no numeric threshold.")
	if in.Discard.WithDefaults().RuleSet == audit.RuleSetESGE2022 {
		d.definition("ESGE 2022", "Sensitivity and specificity for adenoma of high-confidence calls: for diagnose-and-leave over "+
			"diminutive rectosigmoid polyps only (at least 80% and 90%), for resect-and-discard over diminutive polyps anywhere "+
			"(at least 80% and 80%). "+audit.ESGE2022Source)
	}
	for _, g := range surveillance.Guidelines {
		mark := ""
		if g == in.Guideline {
			mark = " (used in this report)"
		}
		d.definition(g.Title()+mark, g.Source())
	}
	d.para("Every guideline assumes a complete examination with adequate preparation and complete resection: an incomplete " +
		"procedure, or one with a Boston segment below 2, gets \"repeat examination\" instead of an interval, and findings " +
		"outside the guideline's tables get \"outside the guideline — clinician decides\".")
	d.para("Each lesion is read by its final histology. Without one, a high-confidence optical call of a diminutive polyp " +
		"(adenoma, hyperplastic or SSL) stands in for it. Otherwise a lesion sent to pathology is awaiting histology, while a " +
		"lesion with no specimen (not retrieved, not sent, or left in place) will never have histology and is read as a " +
		"tubular adenoma with low-grade dysplasia of its recorded size, the conservative reading (common practice: no " +
		"guideline table covers a polyp without histology); the interval's reasons say so. Findings outside the tables are " +
		"decided before any lesion awaiting histology can hold the interval at \"pending\", so a known cancer is never shown as " +
		"awaiting: adenocarcinoma; a lesion of 10 mm or more not removed (left in place or only biopsied), since the tables " +
		"assume complete removal; more than 10 SSLs; more than 20 hyperplastic polyps; or the WHO 2019 serrated polyposis " +
		"criteria (from memory, not verified against the text). A TSA counts as a serrated polyp with dysplasia under ESGE " +
		"2020 and BSG 2020, and as an SSL under USMSTF 2020 (piecemeal removal at 20 mm or more: 6 months); both readings " +
		"are from memory and not verified against the texts.")

	d.subheading("Privacy and cautions", 20)
	d.para("The report carries procedure ids and patient short codes (derived from a keyed pseudonym) only; no patient name " +
		"or hospital number is stored or printed. " + audit.AuditCaution() + " " + audit.DiscardCaution())
	if in.Kind == PersonalReport {
		d.para("In this personal report every other endoscopist is shown only as an anonymous peer, numbered by procedure volume.")
	}
	d.contents()
}

// definition prints a bold term followed by its explanation.
func (d *doc) definition(term, text string) {
	d.space(9)
	d.pdf.SetX(marginL)
	d.pdf.SetFont("go", "B", 8)
	w := d.pdf.GetStringWidth(term + ": ")
	if w > 70 {
		w = 70
	}
	label := audit.IndicatorTitle(term)
	d.pdf.SetFont("go", "B", 8)
	d.pdf.MultiCell(contentW, 3.7, label, "", "L", false)
	d.pdf.SetFont("go", "", 8)
	d.pdf.SetX(marginL + 4)
	d.pdf.MultiCell(contentW-4, 3.7, text, "", "L", false)
	d.pdf.Ln(0.8)
}

// reserveContents adds an empty page for the contents, which contents
// fills in once every section's page is known.
func (d *doc) reserveContents() {
	d.pdf.AddPage()
	d.pdf.Bookmark("Contents", 0, -1)
	d.contentsPage = d.pdf.PageNo()
}

// contents prints the list of sections with their pages on the reserved
// page; the page numbers are aliases filled in when the PDF is written.
func (d *doc) contents() {
	if d.contentsPage == 0 || len(d.sections) == 0 {
		return
	}
	last := d.pdf.PageNo()
	d.pdf.SetPage(d.contentsPage)
	d.pdf.SetXY(marginL, marginT)
	d.heading("Contents")
	for _, s := range d.sections {
		d.pdf.SetX(marginL)
		d.pdf.SetFont("go", "", 9)
		d.pdf.CellFormat(contentW-25, 5, d.fit(s.title, contentW-27), "", 0, "L", false, 0, "")
		d.pdf.CellFormat(25, 5, "page "+s.alias, "", 1, "R", false, 0, "")
	}
	d.pdf.Ln(4)
	d.note("Every page ends with the same caution. The methods section states each definition, the standard profile, " +
		"the statistical methods and their published sources.")
	d.pdf.SetPage(last)
}
