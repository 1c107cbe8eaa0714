package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"polypledger/logbook"
	"polypledger/recipe"
	"polypledger/sheet"
	"polypledger/store"
	"polypledger/workspace"
)

// This file holds the command line's side of other systems' files and of
// workbooks: import through a recipe or from a workbook, import --check,
// export to a workbook, and recipe draft.

// importArgs are the import command's flags and file.
type importArgs struct {
	db, kind, recipe, sheet, file string
	update, check                 bool
}

// importData imports (or checks) one file as the import command's flags
// say: our CSV dialect, a workbook of ours, or another system's file
// through a recipe.
func importData(ctx context.Context, e *env, a importArgs) error {
	req := workspace.ImportRequest{Path: a.file, Sheet: a.sheet, Update: a.update, Check: a.check}
	xlsx := sheet.FormatOf(a.file) == sheet.XLSX
	if a.sheet != "" && !xlsx {
		return usagef("--sheet names a sheet of a workbook (.xlsx); %s is read as CSV", a.file)
	}
	switch {
	case a.recipe != "":
		r, err := recipe.Load(a.recipe)
		if err != nil {
			return err
		}
		if a.kind != "" && a.kind != string(r.Shape) {
			return usagef("--kind %s: the recipe %s is for kind %s (with --recipe, --kind may be left out)", a.kind, a.recipe, r.Shape)
		}
		req.Recipe = r
	case a.kind == "" && xlsx:
		// every sheet named after a kind
	case a.kind == "":
		return usagef("--kind is required for a CSV file of ours (procedures, lesions or histology); another system's file needs --recipe")
	default:
		k, err := store.ParseKind(a.kind)
		if err != nil {
			return usagef("--kind: %v", err)
		}
		req.Kind = k
	}
	if fi, err := os.Stat(a.file); err != nil {
		return fmt.Errorf("cannot open %s: %w", a.file, err)
	} else if fi.IsDir() {
		return fmt.Errorf("%s is a folder, not a file to import", a.file)
	}
	req.Progress = func(rows int, f float64) {
		if f >= 0 {
			fmt.Fprintf(e.stderr, "%s: %d rows read (%d%%)\n", a.file, rows, int(f*100))
		} else {
			fmt.Fprintf(e.stderr, "%s: %d rows read\n", a.file, rows)
		}
	}
	var rep workspace.ImportReport
	run := func(st *store.Store) error {
		var err error
		rep, err = workspace.ImportFile(ctx, st, req)
		return err
	}
	if a.check {
		err := workspace.CheckIn(ctx, a.db, run)
		if rep.Kinds != nil || err == nil || isRefusal(err) {
			printCheck(e.stdout, a.file, rep)
		}
		return err
	}
	// A new database is made whole by Fill: if the import fails, no file
	// is left, and no file is ever deleted. If another program creates the
	// database meanwhile, the file is read again into theirs.
	// Only procedures carry patient references, which need the unit key.
	withKey := req.Kind == "" || req.Kind == store.Procedures
	created, err := workspace.Fill(ctx, a.db, withKey, run)
	if withKey {
		warnKey(e)
	}
	if err != nil {
		if isRefusal(err) {
			printUnused(e.stdout, a.file, rep)
		}
		return err
	}
	if created {
		fmt.Fprintf(e.stdout, "created a new database %s\n", store.Describe(a.db))
	}
	if req.Recipe == nil && req.Kind != "" {
		fmt.Fprintf(e.stdout, "%s: imported %d %s (%d new, %d updated)\n", a.file, rep.Rows, plural(rep.Rows, "row", "rows"), rep.Inserted, rep.Updated)
	} else {
		var parts []string
		for _, k := range logbook.Kinds {
			if c, ok := rep.Kinds[k]; ok && c.New+c.Replacing > 0 {
				parts = append(parts, kindLine(k, c.New, c.Replacing, "new", "replaced"))
			}
		}
		if len(parts) == 0 {
			parts = append(parts, "no records")
		}
		fmt.Fprintf(e.stdout, "%s: imported %d %s: %s\n", a.file, rep.Rows, plural(rep.Rows, "row", "rows"), strings.Join(parts, ", "))
	}
	for _, r := range rep.RosterAdded {
		fmt.Fprintf(e.stdout, "%s: added %s to the roster as %s (give them a name in unit settings)\n", a.file, r.ID, r.Role)
	}
	printUnused(e.stdout, a.file, rep)
	return nil
}

// isRefusal reports whether err is a refused (or checked) file.
func isRefusal(err error) bool {
	var ie *store.ImportError
	return errors.As(err, &ie)
}

// kindLine says how many records of a kind there are, new and replacing.
func kindLine(k store.Kind, n, replacing int, newWord, replaceWord string) string {
	line := k.Count(n + replacing)
	if replacing > 0 {
		line += fmt.Sprintf(" (%d %s, %d %s)", n, newWord, replacing, replaceWord)
	}
	return line
}

// printCheck says what a checked file would store: the records of each
// kind that passed every check, those already in the logbook, the new
// roster ids and the columns not read. Problems are printed apart.
func printCheck(w io.Writer, file string, rep workspace.ImportReport) {
	fmt.Fprintf(w, "%s: checked %d %s; nothing was stored\n", file, rep.Rows, plural(rep.Rows, "row", "rows"))
	any := false
	for _, k := range logbook.Kinds {
		c, ok := rep.Kinds[k]
		if !ok {
			continue
		}
		any = true
		if c.New+c.Replacing > 0 {
			fmt.Fprintf(w, "%s: would store %s\n", file, kindLine(k, c.New, c.Replacing, "new", "replacing stored ones"))
		}
		if c.Clashing > 0 {
			fmt.Fprintf(w, "%s: %s already in the logbook (refused without --update)\n", file, k.Count(c.Clashing))
		}
	}
	if !any {
		fmt.Fprintf(w, "%s: would store nothing\n", file)
	}
	if len(rep.RosterAdded) > 0 {
		var ids []string
		for _, r := range rep.RosterAdded {
			ids = append(ids, fmt.Sprintf("%s (%s)", r.ID, r.Role))
		}
		fmt.Fprintf(w, "%s: would add to the roster: %s\n", file, strings.Join(ids, ", "))
	}
	printUnused(w, file, rep)
}

// printUnused lists, once, the source's columns the recipe does not read.
func printUnused(w io.Writer, file string, rep workspace.ImportReport) {
	for _, warn := range rep.Warnings {
		fmt.Fprintf(w, "%s: recipe: %s\n", file, warn)
	}
	if len(rep.Unused) > 0 {
		fmt.Fprintf(w, "%s: %d %s not in the recipe, not read: %s\n", file, len(rep.Unused), plural(len(rep.Unused), "column", "columns"), strings.Join(rep.Unused, ", "))
	}
}

// exportWorkbook writes the export command's workbook: one sheet of kind,
// or with kind "all" a sheet of every kind.
func exportWorkbook(ctx context.Context, e *env, db, kind string, dest workspace.Output) error {
	kinds := logbook.Kinds
	if kind != "all" {
		k, err := store.ParseKind(kind)
		if err != nil {
			return usagef("--kind: %v (or all, for a workbook of every kind)", err)
		}
		kinds = []store.Kind{k}
	}
	if sheet.FormatOf(dest.Path) != sheet.XLSX {
		return usagef("--kind all writes a workbook: give --out a name ending in .xlsx")
	}
	if err := mustExist(db); err != nil {
		return err
	}
	if err := dest.Check(); err != nil {
		return forceHint(err)
	}
	st, err := store.Open(ctx, db, store.Options{ReadOnly: true})
	if err != nil {
		return err
	}
	defer st.Close()
	var counts map[store.Kind]int
	err = dest.Write(func(w io.Writer) error {
		var err error
		counts, err = st.ExportWorkbook(ctx, kinds, w)
		return err
	})
	if err != nil {
		return forceHint(err)
	}
	var parts []string
	for _, k := range kinds {
		parts = append(parts, fmt.Sprintf("%s (sheet %s)", k.Count(counts[k]), k))
	}
	fmt.Fprintf(e.stdout, "wrote %s: %s\n", dest.Path, strings.Join(parts, ", "))
	return nil
}

func cmdRecipe(ctx context.Context, e *env, args []string) error {
	if len(args) == 0 || args[0] != "draft" {
		if len(args) > 0 && (args[0] == "-h" || args[0] == "--help") {
			fmt.Fprintln(e.stderr, commandUsage("recipe"))
			return errHelp
		}
		return usagef("the recipe command has one action: draft")
	}
	fs := newFlags("recipe draft", "FILE.csv|FILE.xlsx [--sheet NAME] [--out R.toml] [--force]", e.stderr)
	sheetName := fs.String("sheet", "", "workbook sheet to read (default the first)")
	out := fs.String("out", "", "recipe file to write (default: standard output)")
	force := fs.Bool("force", false, "replace the recipe file if it exists")
	pos, err := parse(fs, args[1:])
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("name one data file to draft a recipe for")
	}
	data := pos[0]
	if *sheetName != "" && sheet.FormatOf(data) != sheet.XLSX {
		return usagef("--sheet names a sheet of a workbook (.xlsx); %s is read as CSV", data)
	}
	dest := workspace.Output{Path: *out, Replace: *force}
	if *out != "" {
		if err := dest.Check(); err != nil {
			return forceHint(err)
		}
	}
	text, err := recipe.DraftFile(data, *sheetName)
	if err != nil {
		return err
	}
	if *out == "" {
		_, err := io.WriteString(e.stdout, text)
		return err
	}
	if err := dest.Write(func(w io.Writer) error { _, err := io.WriteString(w, text); return err }); err != nil {
		return forceHint(err)
	}
	checks := strings.Count(text, "# check:")
	fmt.Fprintf(e.stdout, "wrote %s: a proposed recipe for %s, %d %s marked \"# check:\" to look at\n", *out, data, checks, plural(checks, "line", "lines"))
	return nil
}
