package report

import (
	"fmt"
	"regexp"
	"strings"
	"testing"
	"time"

	"polypledger/audit"
	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/surveillance"
)

var (
	period2025From = time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC)
	period2025To   = time.Date(2025, 12, 31, 0, 0, 0, 0, time.UTC)
)

// checkEveryPage checks the footer of every page: the caution and "page N
// of M" with the right N and M.
func checkEveryPage(t *testing.T, pages []string) {
	t.Helper()
	for i, p := range pages {
		text := oneLine(p)
		want := fmt.Sprintf("page %d of %d", i+1, len(pages))
		if !strings.Contains(text, want) {
			t.Errorf("page %d: no %q in its footer", i+1, want)
		}
		for _, phrase := range []string{"support audit and appraisal", "responsible clinician", "local policy decides", "not a medical device"} {
			if !strings.Contains(text, phrase) {
				t.Errorf("page %d: footer caution lacks %q", i+1, phrase)
			}
		}
	}
}

func TestUnitReportSections(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	data := demoReportData(t, p, 4000, period2025From, period2025To, nil)
	path := writeTestPDF(t, testInput(UnitReport, p, "", period2025From, period2025To, data), "unit.pdf")
	pages := pdfPages(t, path)
	checkEveryPage(t, pages)
	all := oneLine(strings.Join(pages, " "))

	// Cover, then one section per part of the issue, then the methods.
	want := []string{
		demo.UnitName, "1 January 2025 to 31 December 2025", "Data completeness", "Histology still pending",
		"Contents",
		"Unit summary: every indicator", "Adenoma detection rate (ADR)", "too few cases to judge",
		"Endoscopists at a glance",
		"Funnel plots",
		"Computer-aided detection: ADR with and without",
		"Optical diagnosis and resect-and-discard eligibility", "PIVI 1: resect and discard", "Optical longer (unsafe)",
		"PIVI 2: diagnose and leave", "Eligibility for resect-and-discard",
		"Surveillance interval adherence",
		"Methods, definitions and sources",
		// Every method and source the issue names.
		"Wilson score interval", "Clopper–Pearson", "Garwood", "Newcombe", "Student t", "Spiegelhalter", "Cohen's kappa",
		"PIVI", "Bolsin S, Colson M", "Lai EJ", p.Source,
		surveillance.USMSTF2020.Source(), surveillance.ESGE2020.Source(), surveillance.BSG2020.Source(),
	}
	for _, s := range want {
		if !strings.Contains(all, oneLine(s)) {
			t.Errorf("unit report lacks %q", s)
		}
	}
	// A page for every endoscopist of the period, by id and name.
	for _, o := range data.Metrics.Operators {
		if s := "Endoscopist " + o.OperatorID + ", " + demoNames()[o.OperatorID]; !strings.Contains(all, s) {
			t.Errorf("no page headed %q", s)
		}
	}
	// The summary fits one page: the page with its heading also holds the
	// last indicator of the table.
	for _, pg := range pages {
		if strings.Contains(pg, "Unit summary: every indicator") && !strings.Contains(oneLine(pg), "Surveillance interval adherence") {
			t.Error("the unit summary table runs over its page")
		}
	}
}

func TestEmptyPeriodReport(t *testing.T) {
	p := testProfile(t, "bsg-jag-2016")
	from, to := time.Date(2010, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(2010, 3, 31, 0, 0, 0, 0, time.UTC)
	data := demoReportData(t, p, 200, from, to, nil)
	if data.Completeness.Procedures != 0 {
		t.Fatalf("the demo unit has %d procedures in 2010; want none", data.Completeness.Procedures)
	}
	for _, kind := range []struct {
		kind    ReportKind
		subject string
	}{{UnitReport, ""}, {PersonalReport, "E02"}, {TraineeReport, "T01"}} {
		t.Run(string(kind.kind), func(t *testing.T) {
			path := writeTestPDF(t, testInput(kind.kind, p, kind.subject, from, to, data), "empty-"+string(kind.kind)+".pdf")
			pages := pdfPages(t, path)
			checkEveryPage(t, pages)
			if len(pages) < 2 || !strings.Contains(pages[1], "No procedures in this period") {
				t.Errorf("page 2 does not say there are no procedures; pages: %d", len(pages))
			}
			all := oneLine(strings.Join(pages, " "))
			if !strings.Contains(all, "Methods, definitions and sources") {
				t.Error("no methods section")
			}
			for _, s := range []string{"Unit summary", "Your figures", "Cases by supervision level", "Position on the ADR funnel"} {
				if strings.Contains(all, s) {
					t.Errorf("an empty period printed %q", s)
				}
			}
		})
	}
}

func TestPersonalReportNamesNoOtherOperator(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	data := demoReportData(t, p, 4000, period2025From, period2025To, nil)
	const me = "E03"
	path := writeTestPDF(t, testInput(PersonalReport, p, me, period2025From, period2025To, data), "personal.pdf")
	pages := pdfPages(t, path)
	checkEveryPage(t, pages)
	all := oneLine(strings.Join(pages, " "))
	for _, s := range []string{me, demoNames()[me], "Your figures: every indicator", "Your trends by quarter", "Funnel plots", "peer 1", "peer 7"} {
		if !strings.Contains(all, s) {
			t.Errorf("personal report lacks %q", s)
		}
	}
	for _, s := range demo.StaffList() {
		id := s.Entry.ID
		if id == me {
			continue
		}
		// Whole words only: a patient short code is hexadecimal and may hold
		// the letters of an id inside it.
		if regexp.MustCompile(`\b` + id + `\b`).MatchString(all) {
			t.Errorf("personal report of %s names operator %s", me, id)
		}
		for _, part := range strings.Fields(s.Entry.Name) {
			if part == "Dr" || part == "(trainee)" {
				continue
			}
			if strings.Contains(all, part) {
				t.Errorf("personal report of %s holds %q from another staff name", me, part)
			}
		}
	}
	// The input handed in is not changed by the anonymising.
	if data.Metrics.Operators[0].OperatorID != "E01" {
		t.Errorf("WritePDF changed the caller's data: first operator now %q", data.Metrics.Operators[0].OperatorID)
	}
}

func TestTraineeLogbook(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	const trainee = "T01"
	data := demoReportData(t, p, 4000, period2025From, period2025To, func(c *logbook.Case) bool { return c.TraineeID == trainee })
	path := writeTestPDF(t, testInput(TraineeReport, p, trainee, period2025From, period2025To, data), "trainee.pdf")
	pages := pdfPages(t, path)
	checkEveryPage(t, pages)
	all := oneLine(strings.Join(pages, " "))
	for _, s := range []string{
		trainee, demoNames()[trainee], "Cases by supervision level", "Running total", "2025-01", "2025-12",
		"Learning curve: unassisted caecal intubation (CUSUM)", "p0", "0.10", "0.20",
		// Check values computed from the Bolsin and Colson formulas with the
		// default parameters (clinical-reference §5): s = 0.1452,
		// h0 = h1 = 2.7095.
		"0.1452", "h0 = 2.7095", "h1 = 2.7095",
		"The trainee's own indicators", "Unassisted caecal intubation (trainee)",
	} {
		if !strings.Contains(all, s) {
			t.Errorf("trainee logbook lacks %q", s)
		}
	}
}

func TestWritePDFRefusesBadInput(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	base := testInput(UnitReport, p, "", period2025From, period2025To, audit.Figures{})
	cases := []struct {
		name   string
		change func(*ReportInput)
	}{
		{"no profile", func(in *ReportInput) { in.Profile = nil }},
		{"no font", func(in *ReportInput) { in.Fonts = ReportFonts{} }},
		{"personal without subject", func(in *ReportInput) { in.Kind = PersonalReport }},
		{"unknown kind", func(in *ReportInput) { in.Kind = "weekly" }},
	}
	for _, c := range cases {
		in := base
		c.change(&in)
		if err := WritePDF(&strings.Builder{}, in); err == nil {
			t.Errorf("%s: WritePDF gave no error", c.name)
		}
	}
}
