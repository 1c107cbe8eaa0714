package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"polypledger/assets"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
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
	in := report.ReportInput{
		Kind: report.UnitReport, UnitName: a.settings.UnitName, Profile: a.profile, Guideline: g,
		Eligibility: report.EligibilitySettings{MinCases: a.settings.DiscardMinCases, RuleSet: a.settings.EligibilityRules},
		From:        from, To: to, GeneratedOn: time.Now(), Names: names,
		Fonts: report.ReportFonts{Regular: assets.FontRegular(), Bold: assets.FontBold()},
	}
	filter := store.CaseFilter{From: from, To: to}
	switch {
	case *operator != "":
		if _, ok := names[*operator]; !ok {
			return fmt.Errorf("--operator %s is not on the unit's roster", *operator)
		}
		in.Kind, in.SubjectID = report.PersonalReport, *operator
	case *trainee != "":
		if _, ok := names[*trainee]; !ok {
			return fmt.Errorf("--trainee %s is not on the unit's roster", *trainee)
		}
		in.Kind, in.SubjectID = report.TraineeReport, *trainee
		filter.TraineeID = *trainee
	}
	pass, err := report.NewReportPass(a.profile, report.ReportPassOptions{From: from, To: to, Extra: a.extraFigures(g)})
	if err != nil {
		return err
	}
	if err := streamCases(ctx, a.st, filter, pass.Add); err != nil {
		return err
	}
	in.Data = pass.Result()
	return writeFileAtomic(*out, func(f *os.File) error { return report.WritePDF(f, in) })
}

// streamCases feeds every selected case to add in one pass. Reading the
// database and counting run side by side: the reader copies cases into
// batches that a second goroutine counts, so the slower of the two sets
// the pace rather than their sum. add runs on one goroutine only.
func streamCases(ctx context.Context, st *store.Store, f store.CaseFilter, add func(*logbook.Case)) error {
	const batchSize, inFlight = 256, 4
	full := make(chan []logbook.Case, inFlight)
	free := make(chan []logbook.Case, inFlight+1)
	for range inFlight + 1 {
		free <- make([]logbook.Case, 0, batchSize)
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		for b := range full {
			for i := range b {
				add(&b[i])
			}
			free <- b[:0]
		}
	}()
	batch := <-free
	err := st.ForEachCase(ctx, f, func(c *logbook.Case) error {
		n := len(batch)
		batch = batch[:n+1]
		dst := &batch[n]
		lesions := append(dst.Lesions[:0], c.Lesions...)
		*dst = *c
		dst.Lesions = lesions
		if len(batch) == batchSize {
			full <- batch
			batch = <-free
		}
		return nil
	})
	if err == nil && len(batch) > 0 {
		full <- batch
	}
	close(full)
	<-done
	return err
}

// writeFileAtomic writes a file through a temporary file in the same
// folder, so that a failed report never leaves a half-written PDF.
func writeFileAtomic(path string, write func(*os.File) error) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".polypledger-report-*.pdf")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	defer os.Remove(tmp.Name())
	if err := write(tmp); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}
