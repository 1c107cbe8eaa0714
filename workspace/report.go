package workspace

import (
	"context"
	"io"
	"time"

	"polypledger/assets"
	"polypledger/report"
	"polypledger/surveillance"
)

// ReportRequest is what a PDF report is made for.
type ReportRequest struct {
	Kind report.ReportKind
	// SubjectID is the endoscopist of a personal report or the trainee of a
	// trainee logbook ("" for the unit audit).
	SubjectID string
	From, To  time.Time
	Guideline surveillance.Guideline
	// Now is the generation time printed on the cover.
	Now time.Time
}

// ReportInput gathers what report.WritePDF prints for req from figures
// already computed over the same period.
func (a *Audit) ReportInput(ctx context.Context, req ReportRequest, figs Figures) (report.ReportInput, error) {
	roster, err := a.Store.Roster(ctx)
	if err != nil {
		return report.ReportInput{}, err
	}
	names := map[string]string{}
	for _, r := range roster {
		names[r.ID] = r.Name
	}
	return report.ReportInput{
		Kind: req.Kind, UnitName: a.Settings.UnitName, Profile: a.Profile,
		Guideline: figs.Guideline, Discard: a.Discard(),
		From: req.From, To: req.To, GeneratedOn: req.Now, Names: names, SubjectID: req.SubjectID,
		Data:  figs.Data,
		Fonts: report.ReportFonts{Regular: assets.FontRegular(), Bold: assets.FontBold()},
	}, nil
}

// WriteReport computes the report's figures in one pass (ReportFigures)
// and writes the PDF to w. The command line and the app both make their
// reports here, so that the same request gives the same report. progress
// is passed to ReportFigures; cancelling ctx stops the work.
func (a *Audit) WriteReport(ctx context.Context, w io.Writer, req ReportRequest, progress func(cases int)) error {
	figs, err := a.ReportFigures(ctx, req, progress)
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
func (a *Audit) WriteReportFile(ctx context.Context, path string, req ReportRequest, progress func(cases int)) error {
	return Output{Path: path, Replace: true, Database: a.Store.Path()}.Write(func(w io.Writer) error {
		return a.WriteReport(ctx, w, req, progress)
	})
}
