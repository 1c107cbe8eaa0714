package e2e

import (
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// pdfText is a PDF's text as pdftotext reads it, without the lines that
// differ between two runs of the same request: the generation date.
func pdfText(t *testing.T, path string) string {
	t.Helper()
	out, err := exec.Command("pdftotext", "-layout", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext %s: %v", path, err)
	}
	return regexp.MustCompile(`(?m)^\s*Generated on .*$|\d{1,2} [A-Z][a-z]+ \d{4}\)`).ReplaceAllString(string(out), "")
}

// TestReportsMatchTheCommandLine saves a unit audit and a trainee's
// logbook from the Reports screen, and compares their text with the
// command line's report for the same request.
func TestReportsMatchTheCommandLine(t *testing.T) {
	need(t)
	if _, err := exec.LookPath("pdftotext"); err != nil {
		t.Skip("pdftotext (poppler-utils) is not installed, so reports cannot be compared; scripts/setup-debian --test installs it")
	}
	u := newUnit(t, 1500)
	d := newDisplay(t, 1024, 700)
	s := d.start(u)
	s.showScreen(5, "Make a PDF report")
	s.fillEntry("from YYYY-MM-DD", "2026-04-01")
	s.fillEntry("to YYYY-MM-DD", "2026-06-30")
	requests := []struct {
		kind, person, file string
		flags              []string
	}{
		{"Unit audit (every endoscopist)", "", "audit-unit-2026-04-01-to-2026-06-30.pdf", nil},
		{"Trainee logbook", "T01 – Dr Ada Nwachukwu", "audit-t01-2026-04-01-to-2026-06-30.pdf", []string{"--trainee", "T01"}},
	}
	for _, r := range requests {
		s.choose("Kind of report", r.kind)
		if r.person != "" {
			s.choose("For", r.person)
		}
		s.click("button", "Make the report…")
		s.waitFor("the save dialog with the report's name", func(sc screen) bool {
			for _, e := range sc.Items {
				if e.Kind == "entry" && e.Text == r.file {
					return true
				}
			}
			return false
		})
		s.click("button", "Save")
		s.waitFor("the report to be saved", func(sc screen) bool { return sc.has("Saved " + filepath.Join(u.dir, r.file)) })
		fromApp := filepath.Join(u.dir, r.file)
		fromCLI := filepath.Join(u.dir, "cli-"+r.file)
		u.cli(append([]string{"report", "--db", u.db, "--from", "2026-04-01", "--to", "2026-06-30", "--out", fromCLI}, r.flags...)...)
		a, b := pdfText(t, fromApp), pdfText(t, fromCLI)
		if a != b {
			la, lb := strings.Split(a, "\n"), strings.Split(b, "\n")
			for i := range min(len(la), len(lb)) {
				if la[i] != lb[i] {
					t.Errorf("%s: the app's report differs from the command line's at line %d:\n  app: %s\n  cli: %s", r.kind, i+1, la[i], lb[i])
					break
				}
			}
			if len(la) != len(lb) {
				t.Errorf("%s: the app's report has %d lines, the command line's %d", r.kind, len(la), len(lb))
			}
		}
	}
	s.stop()
}
