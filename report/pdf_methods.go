package report

import (
	"fmt"
	"polypledger/audit"
	"polypledger/surveillance"
	"sort"
	"strings"
)

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
		sc := scaler(id)
		ask := ""
		switch {
		case t.Minimum != nil:
			ask = audit.TargetSign(false, t.Strict) + " " + sc.Format(*t.Minimum)
		case t.Maximum != nil:
			ask = audit.TargetSign(true, t.Strict) + " " + sc.Format(*t.Maximum)
		}
		aim := ""
		if t.Aspirational != nil {
			aim = sc.Format(*t.Aspirational)
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
	for _, def := range audit.Catalogue() {
		if def.Method == "" {
			continue // the method of the first figure of its family covers it
		}
		term := def.Title
		if def.MethodTerm != "" {
			term = def.MethodTerm
		}
		text := def.Method
		if def.Source != audit.SourceProfile && def.Source != audit.SourceCommon {
			text += " Source: " + strings.TrimSuffix(def.Source, ".") + "."
		}
		d.definition(term, text)
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
	d.pdf.MultiCell(contentW, 3.7, term, "", "L", false)
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
