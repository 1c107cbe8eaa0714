package main

import (
	"context"
	"fmt"
	"time"

	"polypledger/report"
	"polypledger/workspace"
)

// cmdReport writes a PDF report: the unit audit, an endoscopist's personal
// report (--operator) or a trainee's logbook (--trainee).
func cmdReport(ctx context.Context, e *env, args []string) error {
	fs := newFlags("report", "--db PATH --from DATE --to DATE [--standard ID] [--operator ID | --trainee ID] --out FILE.pdf", e.stderr)
	db := fs.String("db", "", "database file")
	fromS := fs.String("from", "", "first day of the period (YYYY-MM-DD)")
	toS := fs.String("to", "", "last day of the period (YYYY-MM-DD)")
	standard := fs.String("standard", "", "standard profile id (default from unit settings)")
	operator := fs.String("operator", "", "personal report for this endoscopist; others appear as anonymous peers")
	trainee := fs.String("trainee", "", "logbook for this trainee")
	out := fs.String("out", "", "PDF file to write")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
		return err
	}
	if err := need("out", *out); err != nil {
		return err
	}
	from, to, err := periodFlags(*fromS, *toS)
	if err != nil {
		return err
	}
	if *operator != "" && *trainee != "" {
		return usagef("--operator and --trainee cannot both be given")
	}
	a, err := openAudit(ctx, *db, *standard)
	if err != nil {
		return err
	}
	defer a.st.Close()
	g, err := a.guideline("")
	if err != nil {
		return err
	}
	roster, err := a.st.Roster(ctx)
	if err != nil {
		return err
	}
	names := make(map[string]string, len(roster))
	for _, r := range roster {
		names[r.ID] = r.Name
	}
	req := workspace.ReportRequest{Kind: report.UnitReport, From: from, To: to, Guideline: g, Now: time.Now()}
	switch {
	case *operator != "":
		if _, ok := names[*operator]; !ok {
			return fmt.Errorf("--operator %s is not on the unit's roster", *operator)
		}
		req.Kind, req.SubjectID = report.PersonalReport, *operator
	case *trainee != "":
		if _, ok := names[*trainee]; !ok {
			return fmt.Errorf("--trainee %s is not on the unit's roster", *trainee)
		}
		req.Kind, req.SubjectID = report.TraineeReport, *trainee
	}
	return a.shared().WriteReportFile(ctx, *out, req, nil)
}
