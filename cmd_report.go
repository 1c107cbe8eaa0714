package main

import (
	"context"
	"fmt"
	"io"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/workspace"
)

// cmdReport writes a PDF report: the unit audit, an endoscopist's personal
// report (--operator) or a trainee's logbook (--trainee).
func cmdReport(ctx context.Context, e *env, args []string) error {
	fs := newCommand("report", e.stderr).
		withDB("").withPeriod().withStandard().
		withOperator("personal report for this endoscopist; others appear as anonymous peers").
		withOut("PDF file to write").withForce("")
	trainee := fs.String("trainee", "", "logbook for this trainee")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	if fs.operator != "" && *trainee != "" {
		return usagef("--operator and --trainee cannot both be given")
	}
	dest := fs.output()
	if err := mustExist(fs.db); err != nil {
		return err
	}
	if err := dest.Check(); err != nil {
		return forceHint(err)
	}
	a, err := openAudit(ctx, fs.db, fs.standard)
	if err != nil {
		return err
	}
	defer a.Store.Close()
	roster, err := a.Store.Roster(ctx)
	if err != nil {
		return err
	}
	req := workspace.Request{From: fs.from, To: fs.to, Now: time.Now()}
	what := "unit audit report"
	switch {
	case fs.operator != "":
		if err := rosterRole(roster, "operator", fs.operator, logbook.RoleEndoscopist); err != nil {
			return err
		}
		req.Whose.OperatorID = fs.operator
		what = "personal report for " + fs.operator
	case *trainee != "":
		if err := rosterRole(roster, "trainee", *trainee, logbook.RoleTrainee); err != nil {
			return err
		}
		req.Whose.TraineeID = *trainee
		what = "trainee logbook for " + *trainee
	}
	var pages int
	err = dest.Write(func(w io.Writer) error {
		pc := &workspace.PageCounter{W: w}
		err := a.WriteReport(ctx, pc, req, nil)
		pages = pc.Pages
		return err
	})
	if err != nil {
		return forceHint(err)
	}
	fmt.Fprintf(e.stdout, "wrote %s: %s, %s to %s, %d %s\n", fs.out, what, fs.fromText, fs.toText, pages, plural(pages, "page", "pages"))
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
