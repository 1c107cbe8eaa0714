package main

import (
	"context"
	"fmt"
	"io"
	"strings"
	"time"

	"polypledger/assets"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/workspace"
)

// cmdReport writes a PDF report: the unit audit, an endoscopist's personal
// report (--operator) or a trainee's logbook (--trainee).
func cmdReport(ctx context.Context, e *env, args []string) error {
	fs := newFlags("report", "--db PATH --from DATE --to DATE [--standard ID] [--operator ID | --trainee ID] --out FILE.pdf [--force]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	fromS := fs.String("from", "", "first day of the period (YYYY-MM-DD)")
	toS := fs.String("to", "", "last day of the period (YYYY-MM-DD)")
	standard := fs.String("standard", "", "standard profile id (default from unit settings)")
	operator := fs.String("operator", "", "personal report for this endoscopist; others appear as anonymous peers")
	trainee := fs.String("trainee", "", "logbook for this trainee")
	out := fs.String("out", "", "PDF file to write")
	force := fs.Bool("force", false, "replace the file if it exists (never a database)")
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
	dest := output(*out, *force, *db)
	if err := mustExist(*db); err != nil {
		return err
	}
	if err := dest.Check(); err != nil {
		return forceHint(err)
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
	roles := make(map[string]logbook.Role, len(roster))
	for _, r := range roster {
		names[r.ID], roles[r.ID] = r.Name, r.Role
	}
	in := report.ReportInput{
		Kind: report.UnitReport, UnitName: a.settings.UnitName, Profile: a.profile, Guideline: g,
		Eligibility: report.EligibilitySettings{MinCases: a.settings.DiscardMinCases, RuleSet: a.settings.EligibilityRules},
		From:        from, To: to, GeneratedOn: time.Now(), Names: names,
		Fonts: report.ReportFonts{Regular: assets.FontRegular(), Bold: assets.FontBold()},
	}
	filter := store.CaseFilter{From: from, To: to}
	what := "unit audit report"
	switch {
	case *operator != "":
		if err := rosterRole(roster, "operator", *operator, logbook.RoleEndoscopist); err != nil {
			return err
		}
		in.Kind, in.SubjectID = report.PersonalReport, *operator
		what = "personal report for " + *operator
	case *trainee != "":
		if err := rosterRole(roster, "trainee", *trainee, logbook.RoleTrainee); err != nil {
			return err
		}
		in.Kind, in.SubjectID = report.TraineeReport, *trainee
		filter.TraineeID = *trainee
		what = "trainee logbook for " + *trainee
	}
	pass, err := report.NewReportPass(a.profile, report.ReportPassOptions{From: from, To: to, Extra: a.extraFigures(g)})
	if err != nil {
		return err
	}
	if err := streamCases(ctx, a.st, filter, pass.Add); err != nil {
		return err
	}
	in.Data = pass.Result()
	var pages int
	err = dest.Write(func(w io.Writer) error {
		pc := &workspace.PageCounter{W: w}
		err := report.WritePDF(pc, in)
		pages = pc.Pages
		return err
	})
	if err != nil {
		return forceHint(err)
	}
	fmt.Fprintf(e.stdout, "wrote %s: %s, %s to %s, %d %s\n", *out, what, *fromS, *toS, pages, plural(pages, "page", "pages"))
	return nil
}

// rosterRole refuses a --operator or --trainee id that is not on the
// roster in the role the report is for: a trainee's logbook of an
// endoscopist (or the reverse) would be an empty report.
func rosterRole(roster []logbook.RosterEntry, flagName, id string, want logbook.Role) error {
	var same []string
	for _, r := range roster {
		if r.Role == want {
			same = append(same, r.ID)
		}
	}
	list := "none"
	if len(same) > 0 {
		list = strings.Join(same, ", ")
	}
	for _, r := range roster {
		if r.ID != id {
			continue
		}
		if r.Role == want {
			return nil
		}
		return fmt.Errorf("--%s %s: %s is on the roster as %s %s, not %s %s; nothing was written (%ss on the roster: %s)",
			flagName, id, id, article(string(r.Role)), r.Role, article(string(want)), want, want, list)
	}
	return fmt.Errorf("--%s %s is not on the unit's roster; nothing was written (%ss on the roster: %s)", flagName, id, want, list)
}

// article is "a" or "an" before a word.
func article(word string) string {
	if strings.ContainsRune("aeiou", rune(word[0])) {
		return "an"
	}
	return "a"
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
