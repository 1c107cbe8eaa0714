package workspace

import (
	"context"
	"io"

	"polypledger/assets"
	"polypledger/audit"
	"polypledger/report"
)

// ReportKind is the report req makes: the unit audit, an endoscopist's
// personal report (others appear as anonymous peers) or a trainee's
// logbook, as req.Whose says.
func (req Request) ReportKind() report.ReportKind {
	switch {
	case req.Whose.TraineeID != "":
		return report.TraineeReport
	case req.Whose.OperatorID != "":
		return report.PersonalReport
	}
	return report.UnitReport
}

// subject is the endoscopist or trainee a report is about, "" for the
// unit.
func (req Request) subject() string { return req.Whose.OperatorID + req.Whose.TraineeID }

// ReportInput gathers what report.WritePDF prints for req from figures
// already computed for it.
func (a *Audit) ReportInput(ctx context.Context, req Request, figs audit.Figures) (report.ReportInput, error) {
	roster, err := a.Store.Roster(ctx)
	if err != nil {
		return report.ReportInput{}, err
	}
	names := map[string]string{}
	for _, r := range roster {
		names[r.ID] = r.Name
	}
	return report.ReportInput{
		Kind: req.ReportKind(), UnitName: a.Settings.UnitName, Profile: a.Profile,
		Guideline: figs.Guideline, Discard: a.Discard(),
		From: req.From, To: req.To, GeneratedOn: req.Now, Names: names, SubjectID: req.subject(),
		Data:  figs,
		Fonts: report.ReportFonts{Regular: assets.FontRegular(), Bold: assets.FontBold()},
	}, nil
}

// WriteReport computes the report's figures in one pass (Figures) and
// writes the PDF to w. The command line and the app both make their
// reports here, so that the same request gives the same report. progress
// is passed to Figures; cancelling ctx stops the work.
func (a *Audit) WriteReport(ctx context.Context, w io.Writer, req Request, progress func(cases int)) error {
	req.MetricsOnly = false
	figs, err := a.Figures(ctx, req, progress)
	if err != nil {
		return err
	}
	in, err := a.ReportInput(ctx, req, figs)
	if err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	return report.WritePDF(w, in)
}

// WriteReportFile writes the report (WriteReport) to path as an Output that
// may replace a file there (the app's save dialog has asked) but never a
// database, so that a failed or cancelled report leaves no partial file.
func (a *Audit) WriteReportFile(ctx context.Context, path string, req Request, progress func(cases int)) error {
	return Output{Path: path, Replace: true, Database: a.Store.Path()}.Write(func(w io.Writer) error {
		return a.WriteReport(ctx, w, req, progress)
	})
}
