package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/surveillance"
	"polypledger/workspace"
)

// loadProfiles reads the shipped standard profiles and the user's own copies
// from the config folder's "standards" subfolder.
func loadProfiles() ([]*audit.Profile, error) { return workspace.LoadProfiles() }

// openAudit opens the database read-only for the metrics, report and
// interval commands, with its settings and the standard profile chosen
// (the unit's default when standard is ""); the caller closes a.Store.
func openAudit(ctx context.Context, db, standard string) (*workspace.Audit, error) {
	if err := mustExist(db); err != nil {
		return nil, err
	}
	st, err := store.Open(ctx, db, store.Options{ReadOnly: true})
	if err != nil {
		return nil, err
	}
	profiles, err := loadProfiles()
	if err != nil {
		st.Close()
		return nil, err
	}
	a, err := workspace.NewAudit(ctx, st, standard, profiles)
	if err != nil {
		st.Close()
		if errors.Is(err, workspace.ErrUnknownStandard) {
			return nil, usagef("--standard: %v", err)
		}
		return nil, err
	}
	return a, nil
}

// guidelineFlag resolves a --guideline value ("" for the unit's default),
// an unknown one being a usage error.
func guidelineFlag(a *workspace.Audit, flagValue string) (surveillance.Guideline, error) {
	gl, err := a.Guideline(flagValue)
	if errors.Is(err, workspace.ErrUnknownGuideline) {
		return "", usagef("--guideline: %v", err)
	}
	return gl, err
}

func cmdInterval(ctx context.Context, e *env, args []string) error {
	fs := newCommand("interval", e.stderr).
		withDB("").withGuideline().withFormat("text", "json", "text")
	id := fs.String("procedure", "", "procedure id (default: every procedure)")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	a, err := openAudit(ctx, fs.db, "")
	if err != nil {
		return err
	}
	defer a.Store.Close()
	g, err := guidelineFlag(a, fs.guideline)
	if err != nil {
		return err
	}
	type row struct {
		ProcedureID string           `json:"procedure_id"`
		Guideline   string           `json:"guideline"`
		Interval    logbook.Interval `json:"interval"`
		Reasons     []string         `json:"reasons"`
		Caution     string           `json:"caution"`
	}
	var rows []row
	add := func(c *logbook.Case) error {
		s := surveillance.Suggest(g, c)
		rows = append(rows, row{ProcedureID: c.ID, Guideline: string(s.Guideline), Interval: s.Interval, Reasons: s.Reasons, Caution: s.Caution})
		return nil
	}
	if *id != "" {
		c, err := a.Store.Case(ctx, *id)
		if err != nil {
			return err
		}
		add(&c)
	} else if err := a.Store.ForEachCase(ctx, store.CaseFilter{}, add); err != nil {
		return err
	}
	if fs.format == "json" {
		if rows == nil {
			rows = []row{}
		}
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rows)
	}
	return writeIntervalText(e.stdout, g, rows, func(r row) (string, logbook.Interval, []string) { return r.ProcedureID, r.Interval, r.Reasons })
}

func writeIntervalText[T any](w io.Writer, g surveillance.Guideline, rows []T, fields func(T) (string, logbook.Interval, []string)) error {
	fmt.Fprintf(w, "Suggested surveillance intervals under %s (%s)\n\n", g, g.Title())
	for _, r := range rows {
		id, iv, reasons := fields(r)
		fmt.Fprintf(w, "%s: %s\n", id, iv.Words())
		for _, why := range reasons {
			fmt.Fprintf(w, "    - %s\n", why)
		}
	}
	fmt.Fprintf(w, "\n%s\n", strings.TrimSpace(surveillance.IntervalCaution(g)))
	return nil
}

func cmdMetrics(ctx context.Context, e *env, args []string) error {
	fs := newCommand("metrics", e.stderr).
		withDB("").withPeriod().withStandard().withOperator("show only this operator (and the unit)").withFormat("table", "json", "table")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	a, err := openAudit(ctx, fs.db, fs.standard)
	if err != nil {
		return err
	}
	defer a.Store.Close()
	req := workspace.Request{From: fs.from, To: fs.to, Whose: workspace.Population{OperatorID: fs.operator}, MetricsOnly: true}
	figs, err := a.Figures(ctx, req, nil)
	if err != nil {
		return err
	}
	res := figs.Metrics
	if fs.operator != "" {
		inds, ok := req.Whose.Indicators(figs)
		if !ok {
			return fmt.Errorf("operator %s has no procedures between %s and %s", fs.operator, fs.fromText, fs.toText)
		}
		res.Operators = []audit.OperatorResult{{OperatorID: fs.operator, Indicators: inds}}
	}
	if fs.format == "json" {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(res)
	}
	return report.WriteTable(e.stdout, res)
}
