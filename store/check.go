package store

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"polypledger/logbook"
)

// Check runs SQLite's integrity and foreign-key checks and then the
// program's own invariants on every record: each procedure and lesion passes
// validation, lesion numbers are unique, operators and trainees are on the
// roster, the schema version is current, and the change log is guarded. It
// returns one line per finding; none means the database is sound.
func (s *Store) Check(ctx context.Context) ([]string, error) {
	out, err := integrityFindings(ctx, s.db)
	if err != nil {
		return nil, s.explain(err)
	}
	if v, err := s.Version(ctx); err != nil {
		return nil, s.explain(err)
	} else if v != SchemaVersion {
		out = append(out, fmt.Sprintf("schema: version %d, expected %d", v, SchemaVersion))
	}
	var triggers int
	if err := s.db.QueryRowContext(ctx, "SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'change_log_no_%'").Scan(&triggers); err != nil {
		return nil, s.explain(err)
	}
	if triggers != 2 {
		out = append(out, "change log: the append-only guards are missing")
	}
	roster, err := s.Roster(ctx)
	if err != nil {
		return nil, err
	}
	onRoster := make(map[string]bool, len(roster))
	for _, r := range roster {
		onRoster[r.ID] = true
		for _, p := range logbook.ValidateRosterEntry(r) {
			out = append(out, fmt.Sprintf("roster %s: %s", r.ID, p))
		}
	}
	// Records are checked against the far future so that a wrong clock
	// elsewhere does not raise findings about dates.
	today := s.today().AddDate(0, 0, 1)
	const maxFindings = 1000
	err = s.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error {
		if len(out) >= maxFindings {
			return nil
		}
		for _, p := range logbook.ValidateProcedure(c.Procedure, today) {
			out = append(out, fmt.Sprintf("procedure %s: %s", c.ID, p))
		}
		for _, id := range []string{c.OperatorID, c.TraineeID} {
			if id != "" && !onRoster[id] {
				out = append(out, fmt.Sprintf("procedure %s: %s is not on the roster", c.ID, id))
			}
		}
		for _, l := range c.Lesions {
			for _, p := range logbook.ValidateLesion(l, today) {
				out = append(out, fmt.Sprintf("lesion %s#%d: %s", c.ID, l.LesionNo, p))
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if len(out) >= maxFindings {
		out = append(out, fmt.Sprintf("… stopped after %d findings", maxFindings))
	}
	return out, nil
}

// Backup writes a consistent copy of the database to out while other
// programs may be writing to it. out must not exist; the copy is written
// beside it under a temporary name, checked, and renamed into place, so a
// failed backup leaves no partial file. The copy is readable by its owner
// only.
func (s *Store) Backup(ctx context.Context, out string) error {
	abs, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	if _, err := os.Stat(abs); err == nil {
		return fmt.Errorf("backup %s: the file already exists; choose a new name", out)
	}
	tmp := abs + ".partial"
	os.Remove(tmp)
	if err := vacuumInto(ctx, s.db, tmp); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("backup %s: %w", out, s.explain(err))
	}
	if err := os.Chmod(tmp, 0o600); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("backup %s: %w", out, err)
	}
	if err := os.Rename(tmp, abs); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("backup %s: %w", out, err)
	}
	return nil
}
