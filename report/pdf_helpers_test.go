package report

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"polypledger/assets"
	"polypledger/audit"
	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/surveillance"
)

// testProfile returns a shipped profile by id.
func testProfile(t testing.TB, id string) *audit.Profile {
	t.Helper()
	ps, err := audit.LoadProfiles(assets.Standards, os.DirFS(t.TempDir()))
	if err != nil {
		t.Fatal(err)
	}
	p, err := audit.FindProfile(ps, id)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// demoNames is the invented demo roster.
func demoNames() map[string]string {
	names := map[string]string{}
	for _, s := range demo.StaffList() {
		names[s.Entry.ID] = s.Entry.Name
	}
	return names
}

// demoReportData runs a report pass over n invented demo cases in the
// period, filtered by keep when it is set.
func demoReportData(t testing.TB, p *audit.Profile, n int, from, to time.Time, keep func(*logbook.Case) bool) audit.Figures {
	t.Helper()
	pass, err := audit.NewPass(p, audit.PassOptions{From: from, To: to, Guideline: surveillance.DefaultGuideline,
		Discard: audit.DefaultDiscardSettings()})
	if err != nil {
		t.Fatal(err)
	}
	rec := func(c *logbook.Case) logbook.Interval {
		return surveillance.Suggest(surveillance.DefaultGuideline, c).Interval
	}
	err = demo.Generate(demo.Options{Procedures: n, Seed: 7, Key: []byte("invented test key"), Recommend: rec}, func(c *logbook.Case) error {
		if keep == nil || keep(c) {
			pass.Add(c)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return pass.Result()
}

// testInput is a report input over data with the test fonts.
func testInput(kind ReportKind, p *audit.Profile, subject string, from, to time.Time, data audit.Figures) ReportInput {
	return ReportInput{
		Kind: kind, UnitName: demo.UnitName, Profile: p, Guideline: surveillance.DefaultGuideline,
		Discard: audit.DefaultDiscardSettings(), From: from, To: to,
		GeneratedOn: time.Date(2026, 11, 2, 0, 0, 0, 0, time.UTC), Names: demoNames(), SubjectID: subject,
		Data: data, Fonts: ReportFonts{Regular: assets.FontRegular(), Bold: assets.FontBold()},
	}
}

// writeTestPDF writes the report into the test's folder (or into
// $POLYPLEDGER_REPORT_DIR, to look at it) and returns its path.
func writeTestPDF(t *testing.T, in ReportInput, name string) string {
	t.Helper()
	dir := os.Getenv("POLYPLEDGER_REPORT_DIR")
	if dir == "" {
		dir = t.TempDir()
	}
	var buf bytes.Buffer
	if err := WritePDF(&buf, in); err != nil {
		t.Fatalf("WritePDF: %v", err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, buf.Bytes(), 0o600); err != nil {
		t.Fatal(err)
	}
	return path
}

// pdfPages returns the text of each page of a PDF, read back by pdftotext
// (poppler-utils); the test is skipped when it is not installed.
func pdfPages(t *testing.T, path string) []string {
	t.Helper()
	bin, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Skip("pdftotext (poppler-utils) is not installed, so the PDF's text cannot be checked; install poppler-utils to run this test")
	}
	out, err := exec.Command(bin, "-enc", "UTF-8", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext %s: %v", path, err)
	}
	pages := strings.Split(string(out), "\f")
	if n := len(pages); n > 0 && strings.TrimSpace(pages[n-1]) == "" {
		pages = pages[:n-1]
	}
	return pages
}

// oneLine joins a page's text into single-spaced words, so that a phrase
// wrapped across lines is still found.
func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }
