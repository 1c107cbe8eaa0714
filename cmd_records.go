package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"polypledger/demo"
	"polypledger/sheet"
	"polypledger/store"
	"polypledger/workspace"
)

// version is stamped at build time with -ldflags "-X main.version=…".
var version = "dev"

func cmdVersion(ctx context.Context, e *env, args []string) error {
	fs := newFlags("version", "", e.stderr)
	if _, err := parse(fs, args); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "polypledger %s (database schema %d)\n", version, store.SchemaVersion)
	return nil
}

func cmdDemo(ctx context.Context, e *env, args []string) error {
	fs := newCommand("demo", e.stderr).withDB("database file to create")
	n := fs.Int("procedures", 4000, "how many procedures to invent")
	seed := fs.Uint64("seed", 1, "seed: the same seed gives the same unit")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	if *n < 1 || *n > 20_000_000 {
		return usagef("--procedures must be between 1 and 20000000")
	}
	progress := func(done int) {
		if *n >= 100_000 && done%(*n/10) < store.ProgressEvery {
			fmt.Fprintf(e.stderr, "demo: %d of %d procedures (%d%%)\n", done, *n, done*100 / *n)
		}
	}
	var count int
	created, err := workspace.Fill(ctx, fs.db, true, func(st *store.Store) error {
		var err error
		count, err = workspace.CreateDemo(ctx, st, *n, *seed, progress)
		return err
	})
	warnKey(e)
	if err != nil {
		return fmt.Errorf("demo %s: %w", store.Describe(fs.db), err)
	}
	verb := "created"
	switch {
	case store.IsServerURL(fs.db):
		verb = "filled the empty" // "database NAME on server …"
	case !created:
		verb = "filled the empty database"
	}
	fmt.Fprintf(e.stdout, "%s %s: %s, %d procedures (invented data)\n", verb, store.Describe(fs.db), demo.UnitName, count)
	return nil
}

// warnKey prints any warning about who else can open the unit key.
func warnKey(e *env) {
	for _, w := range workspace.KeyWarnings() {
		fmt.Fprintln(e.stderr, "polypledger:", w)
	}
}

func cmdImport(ctx context.Context, e *env, args []string) error {
	fs := newCommand("import", e.stderr).
		withDB("database file (created if it does not exist)")
	db := &fs.db
	kindName := fs.String("kind", "", "procedures, lesions or histology")
	update := fs.Bool("update", false, "replace records already stored instead of refusing them")
	recipePath := fs.String("recipe", "", "import recipe (TOML) mapping another system's file; it names the kind")
	sheetName := fs.String("sheet", "", "workbook sheet to read (over the recipe's)")
	check := fs.Bool("check", false, "read and check everything, say what would be stored, store nothing")
	pos, err := fs.parse(args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("name one CSV or .xlsx file to import")
	}
	return importData(ctx, e, importArgs{db: *db, kind: *kindName, recipe: *recipePath, sheet: *sheetName, file: pos[0], update: *update, check: *check})
}

// plural picks the word for a count.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// recordWords name what a kind of file holds, one and many.
var recordWords = map[store.Kind][2]string{
	store.Procedures: {"procedure", "procedures"},
	store.Lesions:    {"lesion", "lesions"},
	store.Histology:  {"histology result", "histology results"},
}

// output is where a command writes a file: the --out and --force flags.
func output(out string, force bool, db string) workspace.Output {
	if store.IsServerURL(db) {
		db = "" // no file of the database to protect
	}
	return workspace.Output{Path: out, Replace: force, Database: db}
}

// forceHint adds the way to replace an existing file to the refusal.
func forceHint(err error) error {
	if errors.Is(err, store.ErrExists) {
		return fmt.Errorf("%w, or give --force to replace it", err)
	}
	return err
}

func cmdExport(ctx context.Context, e *env, args []string) error {
	fs := newCommand("export", e.stderr).
		withDB("").withOut("CSV file or .xlsx workbook to write (- for CSV on standard output)").withForce("")
	db, out, force := &fs.db, &fs.out, &fs.force
	kindName := fs.String("kind", "", "procedures, lesions or histology; all for a workbook of every kind")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	if *kindName == "all" || sheet.FormatOf(*out) == sheet.XLSX {
		return exportWorkbook(ctx, e, *db, *kindName, fs.output())
	}
	kind, err := store.ParseKind(*kindName)
	if err != nil {
		return usagef("--kind: %v", err)
	}
	if err := mustExist(*db); err != nil {
		return err
	}
	dest := output(*out, *force, *db)
	if *out != "-" {
		if err := dest.Check(); err != nil {
			return forceHint(err)
		}
	}
	st, err := store.Open(ctx, *db, store.Options{ReadOnly: true})
	if err != nil {
		return err
	}
	defer st.Close()
	words := recordWords[kind]
	if *out == "-" {
		n, err := st.Export(ctx, kind, e.stdout)
		if err == nil {
			fmt.Fprintf(e.stderr, "wrote %d %s to standard output\n", n, plural(n, words[0], words[1]))
		}
		return err
	}
	var n int
	err = dest.Write(func(w io.Writer) error {
		var err error
		n, err = st.Export(ctx, kind, w)
		return err
	})
	if err != nil {
		return forceHint(err)
	}
	fmt.Fprintf(e.stdout, "wrote %s: %d %s\n", *out, n, plural(n, words[0], words[1]))
	return nil
}

func cmdCheck(ctx context.Context, e *env, args []string) error {
	fs := newCommand("check", e.stderr).withDB("")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	if err := mustExist(fs.db); err != nil {
		return err
	}
	st, err := store.Open(ctx, fs.db, store.Options{ReadOnly: true})
	if err != nil {
		return err
	}
	defer st.Close()
	findings, err := st.Check(ctx)
	if err != nil {
		return fmt.Errorf("%s: %w", st.Location(), err)
	}
	if len(findings) > 0 {
		return fmt.Errorf("%s has %d %s:\n%s", st.Location(), len(findings), plural(len(findings), "problem", "problems"), strings.Join(findings, "\n"))
	}
	n, _ := st.CountProcedures(ctx, store.ListQuery{})
	fmt.Fprintf(e.stdout, "%s: ok (schema %d, %d %s)\n", st.Location(), store.SchemaVersion, n, plural(n, "procedure", "procedures"))
	return nil
}

func cmdBackup(ctx context.Context, e *env, args []string) error {
	fs := newCommand("backup", e.stderr).
		withDB("").withOut("backup file to create").withForce("replace the file if it exists (never a database: an older backup is not replaced)")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	if err := mustExist(fs.db); err != nil {
		return err
	}
	// Read-only, and an older schema as it is: a backup changes nothing
	// in its source.
	st, err := store.Open(ctx, fs.db, store.Options{ReadOnly: true, KeepSchema: true})
	if err != nil {
		return err
	}
	defer st.Close()
	if err := st.Backup(ctx, fs.out, fs.force); err != nil {
		return forceHint(err)
	}
	fmt.Fprintf(e.stdout, "backed up %s to %s (checked)\n", st.Location(), fs.out)
	return nil
}
