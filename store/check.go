package store

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync"

	"polypledger/internal/safefile"
	"polypledger/logbook"
)

// Check runs the backend's own checks (SQLite's integrity and foreign-key
// checks; on a server, that every lesion has its procedure and every
// constraint and guard is in force) and then the program's own invariants
// on every record: each procedure and lesion passes validation, lesion
// numbers are unique, operators and trainees are on the roster, the schema
// version is current, and the change log is guarded. It returns one line
// per finding; none means the database is sound.
func (s *Store) Check(ctx context.Context) ([]string, error) {
	out, err := s.be.integrity(ctx, s)
	if err != nil {
		return nil, s.explain(err)
	}
	if v, err := s.Version(ctx); err != nil {
		return nil, s.explain(err)
	} else if v != SchemaVersion {
		out = append(out, fmt.Sprintf("schema: version %d, expected %d", v, SchemaVersion))
	}
	if ok, err := s.be.guarded(ctx, s.db); err != nil {
		return nil, s.explain(err)
	} else if !ok {
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
	// A stored value that cannot be read is a finding about its record;
	// the check goes on, and does not report the same field again as
	// missing.
	var mu sync.Mutex
	unread := map[string]map[string]bool{} // record → columns
	onBad := func(record, column string, err error) {
		mu.Lock()
		defer mu.Unlock()
		if unread[record] == nil {
			unread[record] = map[string]bool{}
		}
		unread[record][column] = true
		out = append(out, fmt.Sprintf("%s: stored %s: %v", record, column, err))
	}
	add := func(record string, ps logbook.Problems) {
		for _, p := range ps {
			if !unread[record][p.Field] {
				out = append(out, record+": "+p.Error())
			}
		}
	}
	err = s.forEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error {
		mu.Lock()
		defer mu.Unlock()
		if len(out) >= maxFindings {
			return nil
		}
		name := procedureName(&c.Procedure)
		add(name, logbook.ValidateProcedure(c.Procedure, today))
		for _, id := range []string{c.OperatorID, c.TraineeID} {
			if id != "" && !onRoster[id] {
				out = append(out, fmt.Sprintf("%s: %s is not on the roster", name, id))
			}
		}
		for i := range c.Lesions {
			add(lesionName(&c.Lesions[i]), logbook.ValidateLesion(c.Lesions[i], today))
		}
		return nil
	}, onBad)
	if err != nil {
		return nil, err
	}
	if len(out) >= maxFindings {
		out = append(out, fmt.Sprintf("… stopped after %d findings", maxFindings))
	}
	return out, nil
}

// Backup writes a consistent copy of the database to out while other
// programs may be writing to it, and changes nothing in the database (open
// it ReadOnly, with KeepSchema for an older schema, to be sure of that). A
// database that fails SQLite's quick integrity check is refused
// (ErrDamaged). The copy is written beside out under a temporary name,
// readable by its owner only from the moment it exists, checked — SQLite's
// full integrity check, and the same schema as the database — synced to
// disk, and only then put at out, so a failed backup leaves no file. out
// must not exist unless replace is set, and is never the database itself,
// one of its journals, or any SQLite database (see CheckOutput): an older
// backup is not replaced.
func (s *Store) Backup(ctx context.Context, out string, replace bool) error {
	abs, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	if err := CheckOutput(abs, s.path, replace); err != nil {
		return fmt.Errorf("backup %s: %w", out, err)
	}
	if s.OnServer() {
		return s.backupServer(ctx, out, abs, replace)
	}
	if err := quickCheck(ctx, s.db); err != nil {
		return fmt.Errorf("backup refused: %w", s.explain(err))
	}
	version, err := s.Version(ctx)
	if err != nil {
		return fmt.Errorf("backup %s: %w", out, s.explain(err))
	}
	tmp, err := tempDatabase(abs)
	if err != nil {
		return fmt.Errorf("backup %s: %w", out, err)
	}
	defer removeJournals(tmp)
	if err := vacuumInto(ctx, s.db.pool, tmp); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("backup %s: %w", out, s.explain(err))
	}
	if err := verifyCopy(ctx, tmp, version); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("backup %s: the copy failed its check, so no backup was made: %w", out, err)
	}
	if err := safefile.Place(tmp, abs, replace); err != nil {
		if errors.Is(err, ErrExists) {
			return fmt.Errorf("backup %s: the file already exists; choose a new name", out)
		}
		return fmt.Errorf("backup %s: %w", out, err)
	}
	return nil
}
