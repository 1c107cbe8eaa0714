package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"polypledger/demo"
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
	fs := newFlags("demo", "--db PATH [--procedures N] [--seed S]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	n := fs.Int("procedures", 4000, "how many procedures to invent")
	seed := fs.Uint64("seed", 1, "seed: the same seed gives the same unit")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
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
	created, err := workspace.Fill(ctx, *db, true, func(st *store.Store) error {
		var err error
		count, err = workspace.CreateDemo(ctx, st, *n, *seed, progress)
		return err
	})
	warnKey(e)
	if err != nil {
		return fmt.Errorf("demo %s: %w", store.Describe(*db), err)
	}
	verb := "created"
	switch {
	case store.IsServerURL(*db):
		verb = "filled the empty" // "database NAME on server …"
	case !created:
		verb = "filled the empty database"
	}
	fmt.Fprintf(e.stdout, "%s %s: %s, %d procedures (invented data)\n", verb, store.Describe(*db), demo.UnitName, count)
	return nil
}

// warnKey prints any warning about who else can open the unit key.
func warnKey(e *env) {
	for _, w := range workspace.KeyWarnings() {
		fmt.Fprintln(e.stderr, "polypledger:", w)
	}
}

func cmdImport(ctx context.Context, e *env, args []string) error {
	fs := newFlags("import", "--db PATH --kind procedures|lesions|histology [--update] FILE.csv", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	kindName := fs.String("kind", "", "procedures, lesions or histology")
	update := fs.Bool("update", false, "replace records already stored instead of refusing them")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
		return err
	}
	kind, err := store.ParseKind(*kindName)
	if err != nil {
		return usagef("--kind: %v", err)
	}
	if len(pos) != 1 {
		return usagef("name one CSV file to import")
	}
	name := pos[0]
	f, err := os.Open(name)
	if err != nil {
		return fmt.Errorf("cannot open %s: %w", name, err)
	}
	defer f.Close()
	var size int64
	if fi, err := f.Stat(); err == nil {
		if fi.IsDir() {
			return fmt.Errorf("%s is a folder, not a CSV file", name)
		}
		size = fi.Size()
	}
	opt := store.ImportOptions{
		Update: *update,
		Progress: func(rows int, read int64) {
			if size > 0 {
				fmt.Fprintf(e.stderr, "%s: %d rows read (%d%%)\n", name, rows, min(read, size)*100/size)
			} else {
				fmt.Fprintf(e.stderr, "%s: %d rows read\n", name, rows)
			}
		},
	}
	// A new database is made whole by Fill: if the import fails, no file
	// is left, and no file is ever deleted. If another program creates the
	// database meanwhile, the file is read again into theirs.
	var res store.ImportResult
	reads := 0
	created, err := workspace.Fill(ctx, *db, kind == store.Procedures, func(st *store.Store) error {
		if reads++; reads > 1 {
			if _, err := f.Seek(0, io.SeekStart); err != nil {
				return fmt.Errorf("another program created %s while %s was being read, and %s cannot be read a second time; nothing was imported — run the import again", store.Describe(*db), name, name)
			}
		}
		var err error
		res, err = st.Import(ctx, kind, name, f, opt)
		return err
	})
	if kind == store.Procedures {
		warnKey(e)
	}
	if err != nil {
		return err
	}
	if created {
		fmt.Fprintf(e.stdout, "created a new database %s\n", store.Describe(*db))
	}
	fmt.Fprintf(e.stdout, "%s: imported %d %s (%d new, %d updated)\n", name, res.Rows, plural(res.Rows, "row", "rows"), res.Inserted, res.Updated)
	for _, r := range res.RosterAdded {
		fmt.Fprintf(e.stdout, "%s: added %s to the roster as %s (give them a name in unit settings)\n", name, r.ID, r.Role)
	}
	return nil
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
	fs := newFlags("export", "--db PATH --kind procedures|lesions|histology --out FILE.csv [--force]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	kindName := fs.String("kind", "", "procedures, lesions or histology")
	out := fs.String("out", "", "CSV file to write (- for standard output)")
	force := fs.Bool("force", false, "replace the file if it exists (never a database)")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	for _, f := range [][2]string{{"db", *db}, {"out", *out}} {
		if err := need(f[0], f[1]); err != nil {
			return err
		}
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
	fs := newFlags("check", "--db PATH", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	if err := need("db", *db); err != nil {
		return err
	}
	if err := mustExist(*db); err != nil {
		return err
	}
	st, err := store.Open(ctx, *db, store.Options{ReadOnly: true})
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
	fs := newFlags("backup", "--db PATH --out FILE [--force]", e.stderr)
	db := fs.String("db", defaultDB(), dbUsage)
	out := fs.String("out", "", "backup file to create")
	force := fs.Bool("force", false, "replace the file if it exists (never a database: an older backup is not replaced)")
	if err := parseFlagsOnly(fs, args); err != nil {
		return err
	}
	for _, f := range [][2]string{{"db", *db}, {"out", *out}} {
		if err := need(f[0], f[1]); err != nil {
			return err
		}
	}
	if err := mustExist(*db); err != nil {
		return err
	}
	// Read-only, and an older schema as it is: a backup changes nothing
	// in its source.
	st, err := store.Open(ctx, *db, store.Options{ReadOnly: true, KeepSchema: true})
	if err != nil {
		return err
	}
	defer st.Close()
	if err := st.Backup(ctx, *out, *force); err != nil {
		return forceHint(err)
	}
	fmt.Fprintf(e.stdout, "backed up %s to %s (checked)\n", st.Location(), *out)
	return nil
}
