package main

import (
	"context"
	"encoding/json"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/workspace"
)

// pdfText is the text of a PDF as pdftotext reads it, with the generation
// date (the one line that differs between two runs) taken out.
func pdfText(t *testing.T, path string) string {
	t.Helper()
	bin, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Skip("pdftotext (poppler-utils) is not installed, so reports cannot be compared; install poppler-utils to run this test")
	}
	out, err := exec.Command(bin, "-layout", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext %s: %v", path, err)
	}
	return regexp.MustCompile(`(?m)^\s*Generated on .*$|\d{1,2} [A-Z][a-z]+ \d{4}\)`).ReplaceAllString(string(out), "")
}

// openDemo makes an invented demo unit of 1,500 procedures and opens it as
// the app does (workspace.NewAudit with the unit's default standard).
func openDemo(t *testing.T) (dir, db string, ws *workspace.Audit) {
	t.Helper()
	dir = unitHome(t)
	db = filepath.Join(dir, "unit.db")
	if code, _, errs := cli(t, "demo", "--db", db, "--procedures", "1500"); code != 0 {
		t.Fatal(errs)
	}
	ctx := context.Background()
	st, err := store.Open(ctx, db, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	profiles, err := workspace.LoadProfiles()
	if err != nil {
		t.Fatal(err)
	}
	ws, err = workspace.NewAudit(ctx, st, "", profiles)
	if err != nil {
		t.Fatal(err)
	}
	return dir, db, ws
}

// TestMetricsAreTheSameFromEveryPath runs one request through the metrics
// command and through the call the desktop app's Audit figures screen makes
// (workspace.Audit.Figures, then Population.Indicators for whose figures
// are shown), and compares every figure, to the last digit, for the unit
// and for one endoscopist.
func TestMetricsAreTheSameFromEveryPath(t *testing.T) {
	_, db, ws := openDemo(t)
	from, to := "2026-01-01", "2026-06-30"
	fromT, _ := logbook.ParseDate(from)
	toT, _ := logbook.ParseDate(to)
	for _, whose := range []workspace.Population{{}, {OperatorID: "E03"}} {
		args := []string{"metrics", "--db", db, "--from", from, "--to", to, "--format", "json"}
		if whose.OperatorID != "" {
			args = append(args, "--operator", whose.OperatorID)
		}
		code, out, errs := cli(t, args...)
		if code != 0 {
			t.Fatal(errs)
		}
		var fromCLI audit.MetricsResult
		if err := json.Unmarshal([]byte(out), &fromCLI); err != nil {
			t.Fatal(err)
		}
		cliInds := fromCLI.Unit.Indicators
		if whose.OperatorID != "" {
			if len(fromCLI.Operators) != 1 || fromCLI.Operators[0].OperatorID != whose.OperatorID {
				t.Fatalf("--operator %s gives %+v", whose.OperatorID, fromCLI.Operators)
			}
			cliInds = fromCLI.Operators[0].Indicators
		}
		figs, err := ws.Figures(context.Background(), workspace.Request{From: fromT, To: toT, Whose: whose}, nil)
		if err != nil {
			t.Fatal(err)
		}
		appInds, ok := whose.Indicators(figs)
		if !ok {
			t.Fatalf("%+v: no figures on the app's path", whose)
		}
		a, _ := json.Marshal(cliInds)
		b, _ := json.Marshal(appInds)
		if len(cliInds) < 30 || string(a) != string(b) {
			t.Errorf("%+v: the metrics command's %d figures differ from the app's %d:\n%s", whose, len(cliInds), len(appInds), firstDifference(string(a), string(b)))
		}
		if fromCLI.From != figs.Metrics.From || fromCLI.To != figs.Metrics.To || fromCLI.Standard != figs.Metrics.Standard {
			t.Errorf("period or standard differ: %s %s %s, %s %s %s", fromCLI.From, fromCLI.To, fromCLI.Standard,
				figs.Metrics.From, figs.Metrics.To, figs.Metrics.Standard)
		}
	}
}

// TestReportsAreTheSameFromEveryPath makes each kind of report for one
// request with the command line and with the workspace call the desktop
// app's Reports screen makes, and compares their text; a trainee's report
// must state the trainee's own figures, with the learning curve from the
// trainee's first case, not the unit's totals.
func TestReportsAreTheSameFromEveryPath(t *testing.T) {
	dir, db, ws := openDemo(t)
	ctx := context.Background()
	st := ws.Store
	from, to := "2026-04-01", "2026-06-30"
	fromT, _ := logbook.ParseDate(from)
	toT, _ := logbook.ParseDate(to)
	for _, k := range []struct {
		kind  report.ReportKind
		flag  []string
		whose workspace.Population
	}{
		{report.UnitReport, nil, workspace.Population{}},
		{report.PersonalReport, []string{"--operator", "E03"}, workspace.Population{OperatorID: "E03"}},
		{report.TraineeReport, []string{"--trainee", "T01"}, workspace.Population{TraineeID: "T01"}},
	} {
		t.Run(string(k.kind), func(t *testing.T) {
			cliOut := filepath.Join(dir, string(k.kind)+"-cli.pdf")
			args := append([]string{"report", "--db", db, "--from", from, "--to", to, "--out", cliOut}, k.flag...)
			if code, _, errs := cli(t, args...); code != 0 {
				t.Fatal(errs)
			}
			appOut := filepath.Join(dir, string(k.kind)+"-app.pdf")
			req := workspace.Request{From: fromT, To: toT, Whose: k.whose, Now: time.Now()}
			if req.ReportKind() != k.kind {
				t.Fatalf("request %+v makes a %s report", req, req.ReportKind())
			}
			if err := ws.WriteReportFile(ctx, appOut, req, nil); err != nil {
				t.Fatal(err)
			}
			a, b := pdfText(t, cliOut), pdfText(t, appOut)
			if a != b {
				t.Errorf("the command line's %s report differs from the app's:\n%s", k.kind, firstDifference(a, b))
			}
			if k.kind != report.TraineeReport {
				return
			}
			// The trainee's own totals: every case T01 held the scope for.
			var inPeriod, upToEnd int
			err := st.ForEachCase(ctx, store.CaseFilter{TraineeID: "T01", To: toT}, func(c *logbook.Case) error {
				upToEnd++
				if !c.PerformedOn.Before(fromT) {
					inPeriod++
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			if upToEnd == inPeriod {
				t.Fatalf("the demo trainee has no case before %s; the test needs some", from)
			}
			for _, want := range []string{
				groupedInt(inPeriod) + " procedures and",
				groupedInt(upToEnd-inPeriod) + " earlier procedures",
			} {
				if !strings.Contains(a, want) {
					t.Errorf("trainee report does not say %q", want)
				}
			}
			// The running total ends at every case up to the period's end.
			if !regexp.MustCompile(`(?m)^\s*2026-06\s.*\s` + groupedInt(upToEnd) + `\s*$`).MatchString(a) {
				t.Errorf("the running total does not reach %d by 2026-06:\n%s", upToEnd, a)
			}
		})
	}
}

// groupedInt prints n with thousands separated, as reports print counts.
func groupedInt(n int) string {
	s := strconv.Itoa(n)
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// firstDifference shows the first line at which two texts differ.
func firstDifference(a, b string) string {
	la, lb := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := range min(len(la), len(lb)) {
		if la[i] != lb[i] {
			return "line " + strconv.Itoa(i+1) + ":\n  " + la[i] + "\n  " + lb[i]
		}
	}
	return "one text is longer"
}
