package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"

	"polypledger/logbook"
)

// MoveResult says what Move copied.
type MoveResult struct {
	Procedures, Lesions, Roster, Settings, Changes int
}

// counts reads how many rows each table holds.
func (s *Store) tableCounts(ctx context.Context, q querier) (MoveResult, error) {
	var r MoveResult
	err := q.QueryRowContext(ctx, `SELECT
		(SELECT count(*) FROM procedures), (SELECT count(*) FROM lesions), (SELECT count(*) FROM roster),
		(SELECT count(*) FROM settings), (SELECT count(*) FROM change_log)`).
		Scan(&r.Procedures, &r.Lesions, &r.Roster, &r.Settings, &r.Changes)
	return r, err
}

// Move copies the whole unit in src — settings (the unit key's
// fingerprint among them), roster, every procedure and lesion in the order
// they were stored, and the change log — into a new database at dst: a
// file that does not exist yet, or an empty database on a server. It is
// all or nothing: the copy is made in one transaction (on a server) or
// under a temporary name (a file) and appears only once every table's count
// matches the source; a failure leaves dst as it was. The source, opened
// read-only, must pass Check first, and must not change while it is copied
// (every write adds a change-log entry, so a change is seen and the move
// refused). A destination that already holds a unit, or another program's
// tables, is refused. The moved change log ends with one entry saying where
// the unit came from. progress, when set, is told how far the copy is.
// Check runs on the destination as well before Move reports success.
func Move(ctx context.Context, src *Store, dst string, opt Options, progress func(msg string)) (MoveResult, error) {
	say := func(format string, args ...any) {
		if progress != nil {
			progress(fmt.Sprintf(format, args...))
		}
	}
	if v, err := src.Version(ctx); err != nil {
		return MoveResult{}, src.explain(err)
	} else if v != SchemaVersion {
		return MoveResult{}, fmt.Errorf("%s has schema %d and must be upgraded to %d before it is moved: open it once for writing", src.Location(), v, SchemaVersion)
	}
	say("checking %s", src.Location())
	findings, err := src.Check(ctx)
	if err != nil {
		return MoveResult{}, err
	}
	if len(findings) > 0 {
		return MoveResult{}, fmt.Errorf("%s has %d %s, so it was not moved — run polypledger check on it for the list:\n%s", src.Location(), len(findings), plural(len(findings), "problem", "problems"), strings.Join(findings[:min(len(findings), 10)], "\n"))
	}
	var res MoveResult
	fill := func(d *Store) error {
		r, err := copyUnit(ctx, src, d, say)
		res = r
		return err
	}
	if err := Create(ctx, dst, opt, fill); err != nil {
		if errors.Is(err, ErrExists) {
			return MoveResult{}, fmt.Errorf("%w; a unit is moved only into a new file or an empty server database, so nothing was copied", err)
		}
		return MoveResult{}, fmt.Errorf("%w; nothing was copied", err)
	}
	say("checking %s", Describe(dst))
	d, err := Open(ctx, dst, Options{ReadOnly: true})
	if err != nil {
		return res, err
	}
	defer d.Close()
	findings, err = d.Check(ctx)
	if err != nil {
		return res, err
	}
	if len(findings) > 0 {
		return res, fmt.Errorf("the unit was copied to %s, but check finds %d %s there:\n%s", d.Location(), len(findings), plural(len(findings), "problem", "problems"), strings.Join(findings[:min(len(findings), 10)], "\n"))
	}
	return res, nil
}

// copyUnit copies every table of src into d, which is new and empty, in
// one transaction, and verifies the counts before it ends.
func copyUnit(ctx context.Context, src, d *Store, say func(string, ...any)) (MoveResult, error) {
	mark, err := src.ChangeMark(ctx)
	if err != nil {
		return MoveResult{}, err
	}
	want, err := src.tableCounts(ctx, src.db)
	if err != nil {
		return MoveResult{}, src.explain(err)
	}
	var got MoveResult
	err = d.inTx(ctx, func(tx *txn) error {
		var have int
		if err := tx.QueryRowContext(ctx, "SELECT count(*) FROM procedures").Scan(&have); err != nil {
			return err
		}
		if have > 0 {
			return fmt.Errorf("it already holds %d procedures", have)
		}
		if err := copyTable(ctx, src, d, tx, "settings", []string{"key", "value"}, "key"); err != nil {
			return err
		}
		if err := copyTable(ctx, src, d, tx, "roster", []string{"id", "name", "role", "retired"}, "id"); err != nil {
			return err
		}
		cw, err := d.newCaseWriter(ctx, tx)
		if err != nil {
			return err
		}
		defer cw.close()
		n := 0
		err = src.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error {
			if err := cw.write(c); err != nil {
				return err
			}
			if n++; n%ProgressEvery == 0 {
				if err := cw.flush(); err != nil {
					return err
				}
				// Every 10,000 procedures, or every tenth of a large unit.
				if every := max(ProgressEvery, want.Procedures/10/ProgressEvery*ProgressEvery); n%every == 0 {
					say("copied %d of %d procedures (%d%%)", n, want.Procedures, n*100/max(want.Procedures, 1))
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
		if err := cw.flush(); err != nil {
			return err
		}
		say("copying the change log (%d entries)", want.Changes)
		if err := copyTable(ctx, src, d, tx, "change_log", changeLogColumns, "id"); err != nil {
			return err
		}
		if err := d.logChange(ctx, tx, "insert", "unit", nil, map[string]any{
			"copied_from": src.Location(), "procedures": want.Procedures, "lesions": want.Lesions,
		}); err != nil {
			return err
		}
		if got, err = d.tableCounts(ctx, tx); err != nil {
			return err
		}
		want.Changes++
		if got != want {
			return fmt.Errorf("the copy does not match its source: %s", countsDifference(want, got))
		}
		// Every write adds a change-log entry: the source is unchanged
		// only if its newest entry is still the same.
		if now, err := src.ChangeMark(ctx); err != nil {
			return err
		} else if now != mark {
			return fmt.Errorf("%s changed while it was being copied (another program wrote to it) — close the programs using it and try again", src.Location())
		}
		return nil
	})
	if err != nil {
		return got, err
	}
	// A new file is checked whole before it appears; a server database is
	// checked by Move once its transaction has committed.
	if !d.OnServer() {
		say("checking the new file")
		findings, err := d.Check(ctx)
		if err != nil {
			return got, err
		}
		if len(findings) > 0 {
			return got, fmt.Errorf("check finds %d %s in the copy: %s", len(findings), plural(len(findings), "problem", "problems"), strings.Join(findings[:min(len(findings), 10)], "; "))
		}
	}
	return got, nil
}

func countsDifference(want, got MoveResult) string {
	var parts []string
	for _, c := range []struct {
		name      string
		want, got int
	}{
		{"procedures", want.Procedures, got.Procedures}, {"lesions", want.Lesions, got.Lesions},
		{"roster entries", want.Roster, got.Roster}, {"settings", want.Settings, got.Settings},
		{"change-log entries", want.Changes, got.Changes},
	} {
		if c.want != c.got {
			parts = append(parts, fmt.Sprintf("%d %s where the source has %d", c.got, c.name, c.want))
		}
	}
	return strings.Join(parts, ", ")
}

// copyTable copies the named columns of every row of a table from src
// into d's transaction, in the order of orderBy.
func copyTable(ctx context.Context, src, d *Store, tx *txn, table string, columns []string, orderBy string) error {
	rows, err := src.db.QueryContext(ctx, "SELECT "+strings.Join(columns, ", ")+" FROM "+table+" ORDER BY "+orderBy)
	if err != nil {
		return src.explain(err)
	}
	defer rows.Close()
	w, err := d.be.bulk(ctx, tx, table, columns)
	if err != nil {
		return err
	}
	defer w.close()
	vals := make([]sql.NullString, len(columns))
	dest := make([]any, len(columns))
	for i := range vals {
		dest[i] = &vals[i]
	}
	args := make([]any, len(columns))
	n := 0
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return err
		}
		for i, v := range vals {
			if v.Valid {
				args[i] = v.String
			} else {
				args[i] = nil
			}
		}
		if err := w.write(ctx, args); err != nil {
			return err
		}
		if n++; n%ProgressEvery == 0 {
			if err := w.flush(ctx); err != nil {
				return err
			}
		}
	}
	if err := rows.Err(); err != nil {
		return src.explain(err)
	}
	return w.flush(ctx)
}

// backupServer writes a consistent, checked copy of a server database as
// a polypledger file at out (abs), under a temporary name until it is
// whole; the server's own backups are pg_dump's work (README).
func (s *Store) backupServer(ctx context.Context, out, abs string, replace bool) error {
	fill := func(d *Store) error {
		_, err := copyUnit(ctx, s, d, func(string, ...any) {})
		return err
	}
	if err := buildFile(ctx, abs, out, Options{User: s.user, Host: s.host}, fill, replace); err != nil {
		return fmt.Errorf("backup %s: %w; no backup was made", out, err)
	}
	return nil
}
