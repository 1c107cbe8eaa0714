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

// openStore opens the database named by --db, with the unit key when the
// command needs to pseudonymise patient references.
func openStore(ctx context.Context, path string, withKey bool) (*store.Store, error) {
	return workspace.OpenStore(ctx, path, withKey)
}

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
	db := fs.String("db", "", "database file to create")
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
	_, statErr := os.Stat(*db)
	created := errors.Is(statErr, os.ErrNotExist)
	st, err := openStore(ctx, *db, true)
	if err != nil {
		return err
	}
	progress := func(done int) {
		if *n >= 100_000 && done%(*n/10) < store.ProgressEvery {
			fmt.Fprintf(e.stderr, "demo: %d of %d procedures (%d%%)\n", done, *n, done*100 / *n)
		}
	}
	count, err := workspace.CreateDemo(ctx, st, *n, *seed, progress)
	cerr := st.Close()
	if err != nil {
		if created {
			removeDB(*db)
		}
		return fmt.Errorf("demo %s: %w", *db, err)
	}
	if cerr != nil {
		return cerr
	}
	fmt.Fprintf(e.stdout, "created %s: %s, %d procedures (invented data)\n", *db, demo.UnitName, count)
	return nil
}

// removeDB deletes a database file this command created and its journals.
func removeDB(path string) {
	for _, suffix := range []string{"", "-wal", "-shm"} {
		os.Remove(path + suffix)
	}
}

func cmdImport(ctx context.Context, e *env, args []string) error {
	fs := newFlags("import", "--db PATH --kind procedures|lesions|histology [--update] FILE.csv", e.stderr)
	db := fs.String("db", "", "database file")
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
		size = fi.Size()
	}
	_, statErr := os.Stat(*db)
	created := errors.Is(statErr, os.ErrNotExist)
	st, err := openStore(ctx, *db, kind == store.Procedures)
	if err != nil {
		return err
	}
	res, err := st.Import(ctx, kind, name, f, store.ImportOptions{
		Update: *update,
		Progress: func(rows int, read int64) {
			if size > 0 {
				fmt.Fprintf(e.stderr, "%s: %d rows read (%d%%)\n", name, rows, read*100/size)
			} else {
				fmt.Fprintf(e.stderr, "%s: %d rows read\n", name, rows)
			}
		},
	})
	if cerr := st.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		if created {
			removeDB(*db) // nothing was stored: leave no empty database behind
		}
		return err
	}
	if created {
		fmt.Fprintf(e.stdout, "created a new database %s\n", *db)
	}
	fmt.Fprintf(e.stdout, "%s: imported %d rows (%d new, %d updated)\n", name, res.Rows, res.Inserted, res.Updated)
	for _, r := range res.RosterAdded {
		fmt.Fprintf(e.stdout, "%s: added %s to the roster as %s (give them a name in unit settings)\n", name, r.ID, r.Role)
	}
	return nil
}

func cmdExport(ctx context.Context, e *env, args []string) error {
	fs := newFlags("export", "--db PATH --kind procedures|lesions|histology --out FILE.csv", e.stderr)
	db := fs.String("db", "", "database file")
	kindName := fs.String("kind", "", "procedures, lesions or histology")
	out := fs.String("out", "", "CSV file to write (- for standard output)")
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
	st, err := store.Open(ctx, *db, store.Options{ReadOnly: true})
	if err != nil {
		return err
	}
	defer st.Close()
	if *out == "-" {
		return st.Export(ctx, kind, e.stdout)
	}
	return workspace.WriteFileAtomically(*out, func(w io.Writer) error { return st.Export(ctx, kind, w) })
}

func cmdCheck(ctx context.Context, e *env, args []string) error {
	fs := newFlags("check", "--db PATH", e.stderr)
	db := fs.String("db", "", "database file")
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
		return err
	}
	if len(findings) > 0 {
		return fmt.Errorf("%s has %d problems:\n%s", *db, len(findings), strings.Join(findings, "\n"))
	}
	n, _ := st.CountProcedures(ctx, store.ListQuery{})
	fmt.Fprintf(e.stdout, "%s: ok (schema %d, %d procedures)\n", *db, store.SchemaVersion, n)
	return nil
}

func cmdBackup(ctx context.Context, e *env, args []string) error {
	fs := newFlags("backup", "--db PATH --out FILE", e.stderr)
	db := fs.String("db", "", "database file")
	out := fs.String("out", "", "backup file to create")
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
	st, err := store.Open(ctx, *db, store.Options{})
	if err != nil {
		return err
	}
	defer st.Close()
	if err := st.Backup(ctx, *out); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "backed up %s to %s\n", *db, *out)
	return nil
}
