package report

import (
	"polypledger/audit"
	"strings"
	"testing"
	"time"
)

// TestReportsPrintStrictAndNotes renders the unit report over a year and a
// personal report over a quarter under bsg-jag-2016 from the invented demo
// unit and checks that the corrected rules reach the page (clinical-reference
// §2, §4, §6): the strict discomfort maximum prints "<" (below 10%, Siau
// 2023); the caecal intubation note (Rees 2016, photo documentation), the
// unit's volume note and the adherence note sit under the unit summary on
// its pages; a quarter's volume says it is judged only over a year; and
// the methods page names the kappa standard error (Fleiss, Cohen and Everitt
// 1969), the strict sign and the no-specimen reading (common practice).
func TestReportsPrintStrictAndNotes(t *testing.T) {
	p := testProfile(t, "bsg-jag-2016")
	data := demoReportData(t, p, 4000, period2025From, period2025To, nil)
	unitPages := pdfPages(t, writeTestPDF(t, testInput(UnitReport, p, "", period2025From, period2025To, data), "unit-notes.pdf"))
	q2From, q2To := time.Date(2025, 4, 1, 0, 0, 0, 0, time.UTC), time.Date(2025, 6, 30, 0, 0, 0, 0, time.UTC)
	qData := demoReportData(t, p, 4000, q2From, q2To, nil)
	me := qData.Metrics.Operators[0].OperatorID
	personal := oneLine(strings.Join(pdfPages(t, writeTestPDF(t, testInput(PersonalReport, p, me, q2From, q2To, qData), "personal-notes.pdf")), " "))

	var summary, methods string
	inMethods := false
	inSummary := false
	for _, pg := range unitPages {
		// The summary runs from its heading over any page that continues its
		// table (such a page opens with the repeated column header).
		switch {
		case strings.Contains(pg, "Unit summary: every indicator") && !strings.Contains(pg, "Contents"):
			inSummary = true
		case inSummary && !strings.HasPrefix(strings.TrimSpace(afterRunningHeader(pg)), "Indicator"):
			inSummary = false
		}
		if inSummary {
			summary += oneLine(pg) + " "
		}
		// The methods run from their heading to the last page.
		inMethods = inMethods || (strings.Contains(pg, "Methods, definitions and sources") && !strings.Contains(pg, "Contents"))
		if inMethods {
			methods += oneLine(pg) + " "
		}
	}
	adherence, _ := audit.Find(data.Metrics.Unit.Indicators, "interval_adherence")
	tests := []struct {
		name, text, want string
	}{
		{"strict discomfort target", summary, "< 10.0%"},
		{"caecal intubation note", summary, noteMark + " Caecal intubation rate (CIR); CIR, adjusted for obstruction, prep, colitis: " + audit.CIRPhotoNote},
		{"unit volume note", summary, audit.VolumeUnitNote},
		{"adherence note on the summary page", summary, adherence.Note},
		{"the summary holds every indicator", summary, "Surveillance interval adherence"},
		{"a quarter's volume is not judged", personal, "volume is judged over a year or more (target ≥ 100 per year); this period is shorter"},
		{"strict sign on the methods page", methods, "Target < 10.0%"},
		{"kappa standard error", methods, "Fleiss JL, Cohen J, Everitt BS"},
		{"kappa check value", methods, "SE 0.1270, interval 0.151 to 0.649"},
		{"no-specimen reading", methods, "read as a tubular adenoma with low-grade dysplasia of its recorded size"},
		{"adherence leaves pending out", methods, "still awaits histology has no interval yet"},
		{"volume needs a year", methods, "only over a period of at least a year"},
	}
	for _, tc := range tests {
		if tc.want == "" {
			t.Errorf("%s: nothing to look for (the demo's figure has no note)", tc.name)
			continue
		}
		if !strings.Contains(tc.text, oneLine(tc.want)) {
			t.Errorf("%s: the report lacks %q", tc.name, tc.want)
		}
	}
}

// afterRunningHeader returns a page's text after its first line (the
// running header).
func afterRunningHeader(page string) string {
	_, rest, _ := strings.Cut(page, "\n")
	return rest
}
