package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/report"
	"polypledger/store"
	"polypledger/workspace"
)

// loadProfiles reads the shipped standard profiles and the user's own copies
// from the config folder's "standards" subfolder.
func loadProfiles() ([]*report.Profile, error) { return workspace.LoadProfiles() }

// auditSetup is what the metrics, report and interval commands share: the
// open database (read-only), its settings and the chosen profile.
type auditSetup struct {
	st       *store.Store
	settings store.Settings
	profile  *report.Profile
}

func openAudit(ctx context.Context, db, standard string) (*auditSetup, error) {
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
	w, err := workspace.NewAudit(ctx, st, standard, profiles)
	if err != nil {
		st.Close()
		if errors.Is(err, workspace.ErrUnknownStandard) {
			return nil, usagef("--standard: %v", err)
		}
		return nil, err
	}
	return &auditSetup{st: st, settings: w.Settings, profile: w.Profile}, nil
}

// shared is the setup as the workspace package holds it.
func (a *auditSetup) shared() *workspace.Audit {
	return &workspace.Audit{Store: a.st, Settings: a.settings, Profile: a.profile}
}

func (a *auditSetup) guideline(flagValue string) (report.Guideline, error) {
	gl, err := a.shared().Guideline(flagValue)
	if errors.Is(err, workspace.ErrUnknownGuideline) {
		return "", usagef("--guideline: %v", err)
	}
	return gl, err
}

func cmdInterval(ctx context.Context, e *env, args []string) error {
	fs := newFlags("interval", "--db PATH [--procedure ID] [--guideline G] [--format json|text]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	id := fs.String("procedure", "", "procedure id (default: every procedure)")
	guide := fs.String("guideline", "", "usmstf-2020, esge-2020 or bsg-2020 (default from unit settings)")
	format := fs.String("format", "text", "json or text")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
		return err
	}
	if *format != "json" && *format != "text" {
		return usagef("--format must be json or text")
	}
	a, err := openAudit(ctx, *db, "")
	if err != nil {
		return err
	}
	defer a.st.Close()
	g, err := a.guideline(*guide)
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
		s := report.Suggest(g, c)
		rows = append(rows, row{ProcedureID: c.ID, Guideline: string(s.Guideline), Interval: s.Interval, Reasons: s.Reasons, Caution: s.Caution})
		return nil
	}
	if *id != "" {
		c, err := a.st.Case(ctx, *id)
		if err != nil {
			return err
		}
		add(&c)
	} else if err := a.st.ForEachCase(ctx, store.CaseFilter{}, add); err != nil {
		return err
	}
	if *format == "json" {
		if rows == nil {
			rows = []row{}
		}
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rows)
	}
	return writeIntervalText(e.stdout, g, rows, func(r row) (string, logbook.Interval, []string) { return r.ProcedureID, r.Interval, r.Reasons })
}

func writeIntervalText[T any](w io.Writer, g report.Guideline, rows []T, fields func(T) (string, logbook.Interval, []string)) error {
	fmt.Fprintf(w, "Suggested surveillance intervals under %s (%s)\n\n", g, g.Title())
	for _, r := range rows {
		id, iv, reasons := fields(r)
		fmt.Fprintf(w, "%s: %s\n", id, iv.Words())
		for _, why := range reasons {
			fmt.Fprintf(w, "    - %s\n", why)
		}
	}
	fmt.Fprintf(w, "\n%s\n", strings.TrimSpace(report.IntervalCaution(g)))
	return nil
}

// extraFigures are the figures counted beside the profile's indicators in
// the same pass: the optical-diagnosis audit and interval adherence, under
// the unit's guideline and eligibility settings.
func (a *auditSetup) extraFigures(g report.Guideline) []report.AccumulatorFactory {
	return a.shared().ExtraFigures(g)
}

// computeMetrics streams the period's cases once through the indicator
// engine.
func (a *auditSetup) computeMetrics(ctx context.Context, from, to time.Time, g report.Guideline) (report.MetricsResult, error) {
	return a.shared().ComputeMetrics(ctx, from, to, g)
}

func cmdMetrics(ctx context.Context, e *env, args []string) error {
	fs := newFlags("metrics", "--db PATH --from DATE --to DATE [--standard ID] [--operator ID] [--format json|table]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	fromS := fs.String("from", "", "first day of the period (YYYY-MM-DD)")
	toS := fs.String("to", "", "last day of the period (YYYY-MM-DD)")
	standard := fs.String("standard", "", "standard profile id (default from unit settings)")
	operator := fs.String("operator", "", "show only this operator (and the unit)")
	format := fs.String("format", "table", "json or table")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
		return err
	}
	from, to, err := periodFlags(*fromS, *toS)
	if err != nil {
		return err
	}
	if *format != "json" && *format != "table" {
		return usagef("--format must be json or table")
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
	res, err := a.computeMetrics(ctx, from, to, g)
	if err != nil {
		return err
	}
	if *operator != "" {
		var keep []report.OperatorResult
		for _, op := range res.Operators {
			if op.OperatorID == *operator {
				keep = append(keep, op)
			}
		}
		if keep == nil {
			return fmt.Errorf("operator %s has no procedures between %s and %s", *operator, *fromS, *toS)
		}
		res.Operators = keep
	}
	if *format == "json" {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(res)
	}
	return report.WriteTable(e.stdout, res)
}
