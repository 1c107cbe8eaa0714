package report

import (
	"os/exec"
	"regexp"
	"strings"
	"testing"
	"time"

	"polypledger/audit"
	"polypledger/logbook"
)

// pdfLayoutText is a PDF's text with its layout kept (pdftotext -layout),
// so that a table header broken inside a word shows as two fragments.
func pdfLayoutText(t *testing.T, path string) string {
	t.Helper()
	bin, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Skip("pdftotext (poppler-utils) is not installed, so the PDF's text cannot be checked; install poppler-utils to run this test")
	}
	out, err := exec.Command(bin, "-layout", "-enc", "UTF-8", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext %s: %v", path, err)
	}
	return string(out)
}

// TestTablesBreakNoWordAndCutNothing writes each kind of report and looks
// for the faults of narrow tables: a header broken inside a word
// ("Procedure s", "Withdrawa l") and a cell cut short with an ellipsis.
func TestTablesBreakNoWordAndCutNothing(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	data := demoReportData(t, p, 4000, period2025From, period2025To, nil)
	for _, k := range []struct {
		kind    ReportKind
		subject string
	}{{UnitReport, ""}, {PersonalReport, "E03"}} {
		path := writeTestPDF(t, testInput(k.kind, p, k.subject, period2025From, period2025To, data), string(k.kind)+".pdf")
		text := pdfLayoutText(t, path)
		for _, broken := range []string{"Procedure s", "Withdrawa l", "Endoscopis t", "adequat e"} {
			if strings.Contains(text, broken) {
				t.Errorf("%s report: a header is broken inside a word: %q", k.kind, broken)
			}
		}
		for _, l := range strings.Split(text, "\n") {
			if strings.Contains(l, "…") && !strings.Contains(l, "… and") {
				t.Errorf("%s report: a cell is cut short: %q", k.kind, strings.TrimSpace(l))
			}
		}
		all := oneLine(strings.Join(pdfPages(t, path), " "))
		for _, want := range []string{"too few cases to judge", "Unit trends by quarter"} {
			if k.kind == UnitReport && !strings.Contains(all, want) {
				t.Errorf("unit report lacks %q", want)
			}
		}
	}
}

// TestUnfinishedPeriodIsProvisional makes a report of a quarter that is not
// over on the day it is made, with many cases still waiting for histology:
// the cover, every indicator table and the verdicts say so.
func TestUnfinishedPeriodIsProvisional(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	from, to := time.Date(2025, 10, 1, 0, 0, 0, 0, time.UTC), time.Date(2025, 12, 31, 0, 0, 0, 0, time.UTC)
	// Half the quarter's lesions sent to pathology are still waiting.
	n := 0
	data := demoReportData(t, p, 4000, from, to, func(c *logbook.Case) bool {
		for i := range c.Lesions {
			l := &c.Lesions[i]
			if l.SentToPathology == logbook.Yes {
				if n++; n%2 == 0 {
					l.Histology, l.Dysplasia, l.ReportedOn = logbook.HistPending, "", time.Time{}
				}
			}
		}
		return true
	})
	in := testInput(UnitReport, p, "", from, to, data)
	in.GeneratedOn = time.Date(2025, 11, 20, 9, 0, 0, 0, time.UTC)
	all := oneLine(strings.Join(pdfPages(t, writeTestPDF(t, in, "unfinished.pdf")), " "))
	for _, want := range []string{
		"Not over on the day this report was made",
		"The period ends on 31 December 2025, after the day this report was made (20 November 2025)",
		"(provisional)",
		"still await histology",
	} {
		if !strings.Contains(all, want) {
			t.Errorf("report of a period not over lacks %q", want)
		}
	}
	// The same period reported once it is over is not provisional.
	in.GeneratedOn = time.Date(2026, 2, 1, 0, 0, 0, 0, time.UTC)
	all = oneLine(strings.Join(pdfPages(t, writeTestPDF(t, in, "finished.pdf")), " "))
	if strings.Contains(all, "Not over on the day") || strings.Contains(all, "the period is not over") {
		t.Error("a period that is over is called unfinished")
	}
}

// TestPersonalCoverStatesTheSubjectsTotals checks that a personal report's
// cover counts the endoscopist's own procedures, not the unit's.
func TestPersonalCoverStatesTheSubjectsTotals(t *testing.T) {
	p := testProfile(t, "asge-acg-2024")
	data := demoReportData(t, p, 4000, period2025From, period2025To, nil)
	own := data.OperatorCompleteness["E03"].Procedures
	if own == 0 || own == data.Completeness.Procedures {
		t.Fatalf("E03 has %d of the unit's %d procedures; the test needs some but not all", own, data.Completeness.Procedures)
	}
	pages := pdfPages(t, writeTestPDF(t, testInput(PersonalReport, p, "E03", period2025From, period2025To, data), "personal.pdf"))
	cover := oneLine(pages[0])
	want := regexp.MustCompile(audit.GroupThousands(int64(own)) + ` procedures and [\d,]+ lesions by this endoscopist`)
	if !want.MatchString(cover) {
		t.Errorf("the personal cover does not state E03's own %d procedures:\n%s", own, cover)
	}
}
