package store

import (
	"context"
	"errors"
	"fmt"

	"polypledger/logbook"
)

// InsertCases stores many new cases in one transaction (all or none), with
// their roster and unit settings: the path the invented demo unit takes.
// Every case is validated as an import row would be. The database must hold
// no procedures yet. Because the whole load is one act on an empty
// logbook, the change log records it as one entry — who, when, source (a
// description such as the demo seed), how many procedures and the first and
// last id — rather than one entry per record as imports and edits do.
// progress, when set, is called every ProgressEvery cases.
func (s *Store) InsertCases(ctx context.Context, st Settings, roster []logbook.RosterEntry, source string,
	each func(emit func(*logbook.Case) error) error, progress func(n int)) (int, error) {
	var n int
	err := s.inTx(ctx, func(tx *txn) error {
		var have int
		if err := tx.QueryRowContext(ctx, "SELECT count(*) FROM procedures").Scan(&have); err != nil {
			return err
		}
		if have > 0 {
			return fmt.Errorf("it already holds %d procedures; choose a new file", have)
		}
		for k, v := range st.pairs() {
			if _, err := tx.ExecContext(ctx, "INSERT INTO settings (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value", k, v); err != nil {
				return err
			}
		}
		if err := s.logChange(ctx, tx, "update", "settings", nil, st.pairs()); err != nil {
			return err
		}
		onRoster := map[string]bool{}
		for _, r := range roster {
			if ps := logbook.ValidateRosterEntry(r); len(ps) > 0 {
				return &ValidationError{Record: "roster entry " + r.ID, Problems: ps}
			}
			if _, err := tx.ExecContext(ctx, "INSERT INTO roster (id, name, role, retired) VALUES (?, ?, ?, ?)", r.ID, r.Name, string(r.Role), boolInt(r.Retired)); err != nil {
				return err
			}
			if err := s.logChange(ctx, tx, "insert", "roster "+r.ID, nil, rosterMap(r)); err != nil {
				return err
			}
			onRoster[r.ID] = true
		}
		cw, err := s.newCaseWriter(ctx, tx)
		if err != nil {
			return err
		}
		defer cw.close()
		today := s.today()
		var first, last string
		var lesions int
		err = each(func(c *logbook.Case) error {
			if err := ctx.Err(); err != nil {
				return err
			}
			probs := logbook.ValidateProcedure(c.Procedure, today)
			for _, l := range c.Lesions {
				probs = append(probs, logbook.ValidateLesion(l, today)...)
			}
			probs = append(probs, logbook.ValidateLesionNumbers(c.Lesions)...)
			for _, id := range []string{c.OperatorID, c.TraineeID} {
				if id != "" && !onRoster[id] {
					probs = append(probs, logbook.FieldError{Field: "operator_id", Reason: id + " is not on the roster"})
				}
			}
			if len(probs) > 0 {
				return &ValidationError{Record: "procedure " + c.ID, Problems: probs}
			}
			if err := cw.write(c); err != nil {
				return err
			}
			if first == "" {
				first = c.ID
			}
			last = c.ID
			lesions += len(c.Lesions)
			n++
			if n%ProgressEvery == 0 {
				if err := cw.flush(); err != nil {
					return err
				}
				if progress != nil {
					progress(n)
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
		return s.logChange(ctx, tx, "insert", "bulk load", nil, map[string]any{
			"source": source, "procedures": n, "lesions": lesions, "first_procedure": first, "last_procedure": last,
		})
	})
	if err != nil {
		var ve *ValidationError
		if errors.As(err, &ve) {
			return 0, err
		}
		return 0, s.explain(err)
	}
	return n, nil
}

// caseWriter stores whole cases in bulk inside a transaction — a prepared
// INSERT each on SQLite, COPY in batches on a server —, procedures before
// the lesions that refer to them. Cases written are stored when flush is
// called; call it every few thousand cases and before the transaction ends.
type caseWriter struct {
	ctx            context.Context
	procs, lesions bulkWriter
}

func (s *Store) newCaseWriter(ctx context.Context, tx *txn) (*caseWriter, error) {
	pw, err := s.be.bulk(ctx, tx, "procedures", columnNames(procedureColumns))
	if err != nil {
		return nil, err
	}
	lw, err := s.be.bulk(ctx, tx, "lesions", columnNames(lesionStoredColumns))
	if err != nil {
		pw.close()
		return nil, err
	}
	return &caseWriter{ctx: ctx, procs: pw, lesions: lw}, nil
}

func (w *caseWriter) write(c *logbook.Case) error {
	if err := w.procs.write(w.ctx, storedArgs(procedureColumns, &c.Procedure)); err != nil {
		return fmt.Errorf("procedure %s: %w", c.ID, err)
	}
	for i := range c.Lesions {
		if err := w.lesions.write(w.ctx, storedArgs(lesionStoredColumns, &c.Lesions[i])); err != nil {
			return fmt.Errorf("procedure %s lesion %d: %w", c.ID, c.Lesions[i].LesionNo, err)
		}
	}
	return nil
}

func (w *caseWriter) flush() error {
	if err := w.procs.flush(w.ctx); err != nil {
		return err
	}
	return w.lesions.flush(w.ctx)
}

func (w *caseWriter) close() {
	w.procs.close()
	w.lesions.close()
}
