package main

import (
	"context"
	"errors"
	"fmt"

	"polypledger/store"
)

// cmdInit makes a new, empty unit database — a file, or the schema in an
// empty database on a unit server — or upgrades an older one to this
// program's schema. On a server it is run once by the role that owns the
// database (README, "Setting up a unit server").
func cmdInit(ctx context.Context, e *env, args []string) error {
	fs := newCommand("init", e.stderr).withDB("")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	db := &fs.db
	err := store.Create(ctx, *db, store.Options{}, nil)
	if err == nil {
		fmt.Fprintf(e.stdout, "created %s: an empty unit (schema %d)\n", store.Describe(*db), store.SchemaVersion)
		return nil
	}
	if !errors.Is(err, store.ErrExists) {
		return err
	}
	// It is there: opening it for writing upgrades an older schema.
	st, err := store.Open(ctx, *db, store.Options{})
	if err != nil {
		return err
	}
	defer st.Close()
	n, err := st.CountProcedures(ctx, store.ListQuery{})
	if err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "%s is ready: schema %d, %d %s\n", st.Location(), store.SchemaVersion, n, plural(n, "procedure", "procedures"))
	if ok, why := st.Writable(); !ok {
		fmt.Fprintf(e.stdout, "note: %s\n", why)
	}
	return nil
}

// cmdMove copies a unit from one database to a new one — a file onto a
// unit server, or a server's unit into a file for offline audit — all or
// nothing, and checks both.
func cmdMove(ctx context.Context, e *env, args []string) error {
	fs := newCommand("move", e.stderr)
	from := fs.String("from", defaultDB(), "the unit to copy: a database file or a postgres:// URL (default $POLYPLEDGER_DB)")
	to := fs.String("to", "", "where to copy it: a file that does not exist yet, or an empty database on a unit server")
	if err := fs.parseOnly(args); err != nil {
		return err
	}
	for _, f := range [][2]string{{"from", *from}, {"to", *to}} {
		if err := need(f[0], f[1]); err != nil {
			return err
		}
	}
	if err := mustExist(*from); err != nil {
		return err
	}
	src, err := store.Open(ctx, *from, store.Options{ReadOnly: true})
	if err != nil {
		return err
	}
	defer src.Close()
	res, err := store.Move(ctx, src, *to, store.Options{}, func(msg string) { fmt.Fprintln(e.stderr, "move:", msg) })
	if err != nil {
		return fmt.Errorf("move to %s: %w", store.Describe(*to), err)
	}
	fmt.Fprintf(e.stdout, "moved %s to %s: %d %s, %d %s, %d roster %s, %d %s and %d change-log %s; counts and check agree on both sides\n",
		src.Location(), store.Describe(*to),
		res.Procedures, plural(res.Procedures, "procedure", "procedures"), res.Lesions, plural(res.Lesions, "lesion", "lesions"),
		res.Roster, plural(res.Roster, "entry", "entries"), res.Settings, plural(res.Settings, "setting", "settings"),
		res.Changes, plural(res.Changes, "entry", "entries"))
	fmt.Fprintf(e.stdout, "%s was left as it was: point every workstation at the new database, and keep the old one as an archive\n", src.Location())
	return nil
}
