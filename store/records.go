package store

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"

	"polypledger/logbook"
)

// ErrNotFound is returned (wrapped) when a record asked for does not exist.
var ErrNotFound = errors.New("not found")

// ValidationError is a record refused by validation; each problem names the
// field and reason.
type ValidationError struct {
	Record   string
	Problems logbook.Problems
}

func (e *ValidationError) Error() string {
	parts := make([]string, len(e.Problems))
	for i, p := range e.Problems {
		parts[i] = p.Error()
	}
	return e.Record + ": " + strings.Join(parts, "; ")
}

// changeLogColumns are the change log's columns an entry is written with.
var changeLogColumns = []string{"at", "os_user", "host", "action", "record", "old", "new"}

// logColumns are the columns this store writes a change-log entry with: a
// schema older than 4 (built only by tests of upgrades) has no host.
func (s *Store) logColumns() []string {
	if s.schema < 4 {
		return []string{"at", "os_user", "action", "record", "old", "new"}
	}
	return changeLogColumns
}

// logChange appends one row to the change log inside tx: when, who (the
// OS user and the workstation), what, and the record before and after as
// JSON (nil for none).
func (s *Store) logChange(ctx context.Context, tx *txn, action, record string, old, new any) error {
	cols := s.logColumns()
	_, err := tx.ExecContext(ctx, "INSERT INTO change_log ("+strings.Join(cols, ", ")+") VALUES ("+placeholders(len(cols))+")",
		s.changeValues(action, record, old, new)...)
	return err
}

// changeValues are the values of one change-log entry, in the order of
// logColumns.
func (s *Store) changeValues(action, record string, old, new any) []any {
	v := []any{s.now().UTC().Format(time.RFC3339Nano), s.user, s.host, action, record, jsonText(old), jsonText(new)}
	if s.schema < 4 {
		return append(v[:2:2], v[3:]...)
	}
	return v
}

// jsonText encodes a change-log value; nil stays NULL. The values are maps
// of strings and cannot fail to encode.
func jsonText(v any) any {
	switch v := v.(type) {
	case nil:
		return nil
	case json.RawMessage:
		if v == nil {
			return nil
		}
		return string(v)
	}
	b, err := json.Marshal(v)
	if err != nil {
		return fmt.Sprintf("%q", fmt.Sprint(v))
	}
	return string(b)
}

// caseJSON is the change-log form of a case:
// {"procedure":{…},"lesions":[{…},…]} with fields in column order.
func caseJSON(c *logbook.Case) json.RawMessage {
	b := make([]byte, 0, 1024)
	b = append(b, `{"procedure":`...)
	b = appendJSON(b, procedureColumns, &c.Procedure)
	b = append(b, `,"lesions":[`...)
	for i := range c.Lesions {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendJSON(b, lesionStoredColumns, &c.Lesions[i])
	}
	return append(b, "]}"...)
}

// ChangeLogEntry is one row of the change log.
type ChangeLogEntry struct {
	At     time.Time
	User   string // the OS user
	Host   string // the workstation's host name ("" for entries made before schema 4)
	Action string
	Record string
	Old    string
	New    string
}

// ChangeLog returns the newest limit entries of the change log, newest first.
func (s *Store) ChangeLog(ctx context.Context, limit int) ([]ChangeLogEntry, error) {
	rows, err := s.db.QueryContext(ctx, s.changeLogQuery(), limit)
	if err != nil {
		return nil, s.explain(err)
	}
	defer rows.Close()
	var out []ChangeLogEntry
	for rows.Next() {
		var e ChangeLogEntry
		var at string
		if err := rows.Scan(&at, &e.User, &e.Host, &e.Action, &e.Record, &e.Old, &e.New); err != nil {
			return nil, err
		}
		e.At, _ = time.Parse(time.RFC3339Nano, at)
		out = append(out, e)
	}
	return out, rows.Err()
}

// changeLogQuery reads the newest entries (no host before schema 4).
func (s *Store) changeLogQuery() string {
	host := "coalesce(host, '')"
	if s.schema < 4 {
		host = "''"
	}
	return "SELECT at, os_user, " + host + ", action, record, coalesce(old, ''), coalesce(new, '') FROM change_log ORDER BY id DESC LIMIT ?"
}

// ChangeMark returns a number that grows with every change stored by
// anyone (the newest change-log entry's id; writers take turns, so entries
// are numbered in the order they were committed). The app compares it every
// few seconds to pick up colleagues' new cases without a restart; reading
// it costs one index lookup on either backend.
func (s *Store) ChangeMark(ctx context.Context) (int64, error) {
	var n int64
	err := s.db.QueryRowContext(ctx, "SELECT coalesce(max(id), 0) FROM change_log").Scan(&n)
	return n, s.explain(err)
}

// --- roster ---

// Roster returns the unit's roster in id order.
func (s *Store) Roster(ctx context.Context) ([]logbook.RosterEntry, error) {
	rows, err := s.db.QueryContext(ctx, "SELECT id, name, role, retired FROM roster ORDER BY id")
	if err != nil {
		return nil, s.explain(err)
	}
	defer rows.Close()
	var out []logbook.RosterEntry
	for rows.Next() {
		var r logbook.RosterEntry
		var role string
		if err := rows.Scan(&r.ID, &r.Name, &role, &r.Retired); err != nil {
			return nil, err
		}
		r.Role = logbook.Role(role)
		out = append(out, r)
	}
	return out, rows.Err()
}

func rosterMap(r logbook.RosterEntry) map[string]any {
	return map[string]any{"id": r.ID, "name": r.Name, "role": r.Role, "retired": r.Retired}
}

// SaveRosterEntry adds a roster entry or updates the one with the same id
// (name, role, retired), recording the change.
func (s *Store) SaveRosterEntry(ctx context.Context, r logbook.RosterEntry) error {
	if ps := logbook.ValidateRosterEntry(r); len(ps) > 0 {
		return &ValidationError{Record: "roster entry " + r.ID, Problems: ps}
	}
	return s.explain(s.inTx(ctx, func(tx *txn) error {
		old, found, err := rosterEntry(ctx, tx, r.ID)
		if err != nil {
			return err
		}
		if found {
			if old == r {
				return nil
			}
			if _, err := tx.ExecContext(ctx, "UPDATE roster SET name = ?, role = ?, retired = ? WHERE id = ?", r.Name, string(r.Role), boolInt(r.Retired), r.ID); err != nil {
				return err
			}
			return s.logChange(ctx, tx, "update", "roster "+r.ID, rosterMap(old), rosterMap(r))
		}
		if _, err := tx.ExecContext(ctx, "INSERT INTO roster (id, name, role, retired) VALUES (?, ?, ?, ?)", r.ID, r.Name, string(r.Role), boolInt(r.Retired)); err != nil {
			return err
		}
		return s.logChange(ctx, tx, "insert", "roster "+r.ID, nil, rosterMap(r))
	}))
}

func rosterEntry(ctx context.Context, q querier, id string) (logbook.RosterEntry, bool, error) {
	var r logbook.RosterEntry
	var role string
	err := q.QueryRowContext(ctx, "SELECT id, name, role, retired FROM roster WHERE id = ?", id).Scan(&r.ID, &r.Name, &role, &r.Retired)
	if errors.Is(err, sql.ErrNoRows) {
		return r, false, nil
	}
	r.Role = logbook.Role(role)
	return r, err == nil, err
}

// --- settings ---

// Settings are the unit-wide choices kept in the database, shared by every
// user of the file.
type Settings struct {
	UnitName         string
	DefaultStandard  string // standard profile id
	DefaultGuideline string // surveillance guideline id
	DiscardMinCases  int    // local minimum cases behind a resect-and-discard figure
	EligibilityRules string // "pivi" or "esge-2022"
}

// DefaultSettings are used for keys never set.
var DefaultSettings = Settings{
	UnitName:         "Unnamed unit",
	DefaultStandard:  "asge-acg-2024",
	DefaultGuideline: "usmstf-2020",
	DiscardMinCases:  30,
	EligibilityRules: "pivi",
}

// Settings returns the unit settings, with defaults for anything not set.
func (s *Store) Settings(ctx context.Context) (Settings, error) {
	out := DefaultSettings
	rows, err := s.db.QueryContext(ctx, "SELECT key, value FROM settings")
	if err != nil {
		return out, s.explain(err)
	}
	defer rows.Close()
	for rows.Next() {
		var k, v string
		if err := rows.Scan(&k, &v); err != nil {
			return out, err
		}
		switch k {
		case "unit_name":
			out.UnitName = v
		case "default_standard":
			out.DefaultStandard = v
		case "default_guideline":
			out.DefaultGuideline = v
		case "discard_min_cases":
			if n, err := logbook.ParseCount(v); err == nil && n > 0 {
				out.DiscardMinCases = n
			}
		case "eligibility_rules":
			out.EligibilityRules = v
		}
	}
	return out, rows.Err()
}

func (st Settings) pairs() map[string]string {
	return map[string]string{
		"unit_name": st.UnitName, "default_standard": st.DefaultStandard,
		"default_guideline": st.DefaultGuideline, "discard_min_cases": logbook.FormatCount(st.DiscardMinCases),
		"eligibility_rules": st.EligibilityRules,
	}
}

// SaveSettings stores the unit settings, recording what changed.
func (s *Store) SaveSettings(ctx context.Context, st Settings) error {
	if strings.TrimSpace(st.UnitName) == "" {
		return &ValidationError{Record: "settings", Problems: logbook.Problems{{Field: "unit_name", Reason: "is required"}}}
	}
	if st.DiscardMinCases < 1 {
		return &ValidationError{Record: "settings", Problems: logbook.Problems{{Field: "discard_min_cases", Reason: "must be at least 1"}}}
	}
	old, err := s.Settings(ctx)
	if err != nil {
		return err
	}
	return s.explain(s.inTx(ctx, func(tx *txn) error {
		for k, v := range st.pairs() {
			if _, err := tx.ExecContext(ctx, "INSERT INTO settings (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value", k, v); err != nil {
				return err
			}
		}
		if old == st {
			return nil
		}
		return s.logChange(ctx, tx, "update", "settings", old.pairs(), st.pairs())
	}))
}

// --- procedures and lesions ---

var (
	procedureInsertSQL = "INSERT INTO procedures (" + sqlList(procedureColumns) + ") VALUES (" + placeholders(len(procedureColumns)) + ")"
	lesionInsertSQL    = "INSERT INTO lesions (" + sqlList(lesionStoredColumns) + ") VALUES (" + placeholders(len(lesionStoredColumns)) + ")"
	procedureSelectSQL = "SELECT " + sqlList(procedureColumns) + " FROM procedures"
	lesionSelectSQL    = "SELECT " + sqlList(lesionStoredColumns) + " FROM lesions"
)

// procedureUpdateSQL sets every column but the id.
var procedureUpdateSQL = func() string {
	sets := make([]string, 0, len(procedureColumns)-1)
	for _, c := range procedureColumns[1:] {
		sets = append(sets, c.sqlColumn()+" = ?")
	}
	return "UPDATE procedures SET " + strings.Join(sets, ", ") + " WHERE id = ?"
}()

// nullStrings returns scan destinations for n nullable text columns and a
// function that reads them as *string (nil for NULL).
func nullStrings(n int) ([]any, func() []*string) {
	ns := make([]sql.NullString, n)
	dest := make([]any, n)
	for i := range ns {
		dest[i] = &ns[i]
	}
	out := make([]*string, n)
	return dest, func() []*string {
		for i := range ns {
			if ns[i].Valid {
				out[i] = &ns[i].String
			} else {
				out[i] = nil
			}
		}
		return out
	}
}

func getProcedure(ctx context.Context, q querier, id string) (logbook.Procedure, bool, error) {
	p := logbook.NewProcedure()
	dest, vals := nullStrings(len(procedureColumns))
	err := q.QueryRowContext(ctx, procedureSelectSQL+" WHERE id = ?", id).Scan(dest...)
	if errors.Is(err, sql.ErrNoRows) {
		return p, false, nil
	}
	if err != nil {
		return p, false, err
	}
	return p, true, scanStored(procedureColumns, vals(), &p)
}

func getLesions(ctx context.Context, q querier, procedureID string) ([]logbook.Lesion, error) {
	rows, err := q.QueryContext(ctx, lesionSelectSQL+" WHERE procedure_id = ? ORDER BY lesion_no", procedureID)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []logbook.Lesion
	read := lesionReader()
	for rows.Next() {
		l, err := read(rows.Scan)
		if err != nil {
			return nil, err
		}
		out = append(out, l)
	}
	return out, rows.Err()
}

// lesionReader returns a function that reads one stored lesion with scan
// (rows.Scan of a row of lesionSelectSQL).
func lesionReader() func(scan func(...any) error) (logbook.Lesion, error) {
	dest, vals := nullStrings(len(lesionStoredColumns))
	return func(scan func(...any) error) (logbook.Lesion, error) {
		l := logbook.NewLesion()
		if err := scan(dest...); err != nil {
			return l, err
		}
		return l, scanStored(lesionStoredColumns, vals(), &l)
	}
}

// Case returns a procedure with its lesions.
func (s *Store) Case(ctx context.Context, id string) (logbook.Case, error) {
	p, found, err := getProcedure(ctx, s.db, id)
	if err != nil {
		return logbook.Case{}, s.explain(err)
	}
	if !found {
		return logbook.Case{}, fmt.Errorf("procedure %s: %w", id, ErrNotFound)
	}
	ls, err := getLesions(ctx, s.db, id)
	return logbook.Case{Procedure: p, Lesions: ls}, s.explain(err)
}

// Pseudonymise turns a patient reference as typed (a hospital number) into
// the stored pseudonym under the unit key, after making sure the key is the
// one this database's pseudonyms were made with (ErrOtherKey otherwise).
func (s *Store) Pseudonymise(ref string) (string, error) {
	v, err := logbook.Pseudonymise(s.key, ref)
	if err != nil || v == "" || logbook.IsExportPseudonym(ref) {
		return v, err
	}
	ctx := context.Background()
	if err := s.inTx(ctx, func(tx *txn) error { return s.checkKey(ctx, tx) }); err != nil {
		return "", s.explain(err)
	}
	return v, nil
}

// validateCase runs every record rule on a case: the procedure, each
// lesion, unique lesion numbers, lesions belonging to the procedure, and
// roster membership of the operator and trainee.
func (s *Store) validateCase(ctx context.Context, q querier, c *logbook.Case) error {
	today := s.today()
	ps := logbook.ValidateProcedure(c.Procedure, today)
	for i := range c.Lesions {
		l := &c.Lesions[i]
		if l.ProcedureID == "" {
			l.ProcedureID = c.ID
		}
		if l.ProcedureID != c.ID {
			ps = append(ps, logbook.FieldError{Field: "procedure_id", Reason: fmt.Sprintf("lesion %d belongs to %s, not %s", l.LesionNo, l.ProcedureID, c.ID)})
		}
		for _, p := range logbook.ValidateLesion(*l, today) {
			p.Reason = fmt.Sprintf("lesion %d: %s", l.LesionNo, p.Reason)
			ps = append(ps, p)
		}
	}
	ps = append(ps, logbook.ValidateLesionNumbers(c.Lesions)...)
	for _, who := range []struct{ field, id string }{{"operator_id", c.OperatorID}, {"trainee_id", c.TraineeID}} {
		if who.id == "" {
			continue
		}
		if _, found, err := rosterEntry(ctx, q, who.id); err != nil {
			return err
		} else if !found {
			ps = append(ps, logbook.FieldError{Field: who.field, Reason: who.id + " is not on the unit roster"})
		}
	}
	if len(ps) > 0 {
		return &ValidationError{Record: "procedure " + c.ID, Problems: ps}
	}
	return nil
}

// SaveCase stores a case entered or edited by hand. With isNew, a procedure
// id already present is refused; otherwise the stored case with that id is
// replaced (procedure and lesions) and the change log keeps the old version.
func (s *Store) SaveCase(ctx context.Context, c logbook.Case, isNew bool) error {
	return s.explain(s.inTx(ctx, func(tx *txn) error {
		if err := s.validateCase(ctx, tx, &c); err != nil {
			return err
		}
		old, found, err := getProcedure(ctx, tx, c.ID)
		if err != nil {
			return err
		}
		switch {
		case isNew && found:
			return &ValidationError{Record: "procedure " + c.ID, Problems: logbook.Problems{{Field: "procedure_id", Reason: c.ID + " is already in the logbook"}}}
		case !isNew && !found:
			return fmt.Errorf("procedure %s: %w", c.ID, ErrNotFound)
		}
		if !found {
			if _, err := tx.ExecContext(ctx, procedureInsertSQL, storedArgs(procedureColumns, &c.Procedure)...); err != nil {
				return err
			}
			if err := insertLesions(ctx, tx, c.Lesions); err != nil {
				return err
			}
			return s.logChange(ctx, tx, "insert", "procedure "+c.ID, nil, caseJSON(&c))
		}
		oldLesions, err := getLesions(ctx, tx, c.ID)
		if err != nil {
			return err
		}
		if err := updateProcedure(ctx, tx, &c.Procedure); err != nil {
			return err
		}
		if _, err := tx.ExecContext(ctx, "DELETE FROM lesions WHERE procedure_id = ?", c.ID); err != nil {
			return err
		}
		if err := insertLesions(ctx, tx, c.Lesions); err != nil {
			return err
		}
		return s.logChange(ctx, tx, "update", "procedure "+c.ID, caseJSON(&logbook.Case{Procedure: old, Lesions: oldLesions}), caseJSON(&c))
	}))
}

func updateProcedure(ctx context.Context, tx *txn, p *logbook.Procedure) error {
	args := storedArgs(procedureColumns[1:], p)
	_, err := tx.ExecContext(ctx, procedureUpdateSQL, append(args, p.ID)...)
	return err
}

func insertLesions(ctx context.Context, tx *txn, ls []logbook.Lesion) error {
	for i := range ls {
		if _, err := tx.ExecContext(ctx, lesionInsertSQL, storedArgs(lesionStoredColumns, &ls[i])...); err != nil {
			return err
		}
	}
	return nil
}

// DeleteCase removes a procedure and its lesions; the change log keeps what
// was deleted.
func (s *Store) DeleteCase(ctx context.Context, id string) error {
	return s.explain(s.inTx(ctx, func(tx *txn) error {
		p, found, err := getProcedure(ctx, tx, id)
		if err != nil {
			return err
		}
		if !found {
			return fmt.Errorf("procedure %s: %w", id, ErrNotFound)
		}
		ls, err := getLesions(ctx, tx, id)
		if err != nil {
			return err
		}
		if _, err := tx.ExecContext(ctx, "DELETE FROM procedures WHERE id = ?", id); err != nil {
			return err
		}
		return s.logChange(ctx, tx, "delete", "procedure "+id, caseJSON(&logbook.Case{Procedure: p, Lesions: ls}), nil)
	}))
}

// RecordHistology applies one pathology result to a lesion awaiting it. A
// lesion that already has a final result is refused unless correct is set;
// either way the change log keeps the lesion as it was.
func (s *Store) RecordHistology(ctx context.Context, h logbook.HistologyResult, correct bool) error {
	return s.explain(s.inTx(ctx, func(tx *txn) error {
		if ps := logbook.ValidateHistologyResult(h, s.today()); len(ps) > 0 {
			return &ValidationError{Record: fmt.Sprintf("histology for %s lesion %d", h.ProcedureID, h.LesionNo), Problems: ps}
		}
		ps, err := s.applyHistology(ctx, tx, h, correct)
		if err != nil {
			return err
		}
		if len(ps) > 0 {
			return &ValidationError{Record: fmt.Sprintf("histology for %s lesion %d", h.ProcedureID, h.LesionNo), Problems: ps}
		}
		return nil
	}))
}

// judgeHistology decides a result h for the lesion it is for, as the
// logbook holds it (old): the problems that refuse it, or else the lesion as
// the result leaves it and whether that changes anything (a result that
// repeats the recorded one with the same date changes nothing and is not
// logged). A lesion with a final result takes a different one only when
// correct is set. These are the rules for every result, entered in the app
// or imported; they read and write nothing.
func (s *Store) judgeHistology(old logbook.Lesion, h logbook.HistologyResult, correct bool) (updated logbook.Lesion, change bool, ps logbook.Problems) {
	if old.Histology.IsFinal() && !correct && !sameResult(old, h) {
		when := "no report date recorded"
		if !old.ReportedOn.IsZero() {
			when = "reported " + logbook.FormatDate(old.ReportedOn)
		}
		return old, false, logbook.Problems{{Field: "histology", Reason: fmt.Sprintf("lesion already has histology %s (%s); use --update to correct it", old.Histology, when)}}
	}
	updated = old
	updated.Histology, updated.Dysplasia, updated.ReportedOn = h.Histology, h.Dysplasia, h.ReportedOn
	if ps := logbook.ValidateLesion(updated, s.today()); len(ps) > 0 {
		return old, false, ps
	}
	return updated, !sameResult(old, h) || !old.ReportedOn.Equal(h.ReportedOn), nil
}

// findLesion reads a stored lesion, or says that it or its procedure is
// not in the logbook.
func findLesion(ctx context.Context, q querier, procedureID string, no int) (logbook.Lesion, logbook.Problems, error) {
	ls, err := getLesions(ctx, q, procedureID)
	if err != nil {
		return logbook.Lesion{}, nil, err
	}
	for _, l := range ls {
		if l.LesionNo == no {
			return l, nil, nil
		}
	}
	_, there, err := getProcedure(ctx, q, procedureID)
	if err != nil {
		return logbook.Lesion{}, nil, err
	}
	return logbook.Lesion{}, noLesion(procedureID, no, there), nil
}

// noLesion is the problem of a result for a lesion the logbook does not
// hold: its procedure is not there, or (there) has no such lesion.
func noLesion(procedureID string, no int, procedureThere bool) logbook.Problems {
	if !procedureThere {
		return logbook.Problems{{Field: "procedure_id", Reason: procedureID + " is not in the logbook"}}
	}
	return logbook.Problems{{Field: "lesion_no", Reason: fmt.Sprintf("procedure %s has no lesion %d", procedureID, no)}}
}

// sameResult reports whether h repeats the lesion's recorded result: the
// same histology and dysplasia, with the same report date or adding one the
// lesion lacks (lesions.csv carries no report date, so re-importing an
// export's histology.csv after its lesions.csv does exactly this). Such a
// result is not a correction and needs no --update.
func sameResult(l logbook.Lesion, h logbook.HistologyResult) bool {
	return l.Histology == h.Histology && l.Dysplasia == h.Dysplasia &&
		(l.ReportedOn.IsZero() || l.ReportedOn.Equal(h.ReportedOn))
}

// The columns a result sets, and those that find its lesion; resultValues
// are a result's values for them in that order.
var (
	resultColumns    = []string{"histology", "dysplasia", "reported_on"}
	lesionKeyColumns = []string{"procedure_id", "lesion_no"}
)

func resultValues(h *logbook.HistologyResult) []any {
	return []any{string(h.Histology), nullIfEmpty(string(h.Dysplasia)), logbook.FormatDate(h.ReportedOn), h.ProcedureID, h.LesionNo}
}

// logResult makes, through log, the change-log entry of a result that
// changes its lesion from old to updated.
func logResult(log func(action, record string, old, new any) error, h *logbook.HistologyResult, old, updated *logbook.Lesion) error {
	return log("update", fmt.Sprintf("lesion %s#%d", h.ProcedureID, h.LesionNo), recordJSON(lesionStoredColumns, old), recordJSON(lesionStoredColumns, updated))
}

// applyHistology checks a result and, when it is acceptable, writes it and
// its change-log row inside tx; problems are returned, not stored.
func (s *Store) applyHistology(ctx context.Context, tx *txn, h logbook.HistologyResult, correct bool) (logbook.Problems, error) {
	old, ps, err := findLesion(ctx, tx, h.ProcedureID, h.LesionNo)
	if err != nil || len(ps) > 0 {
		return ps, err
	}
	updated, change, ps := s.judgeHistology(old, h, correct)
	if len(ps) > 0 || !change {
		return ps, nil
	}
	if _, err := tx.ExecContext(ctx, updateSQL("lesions", resultColumns, lesionKeyColumns), resultValues(&h)...); err != nil {
		return nil, err
	}
	return nil, logResult(func(action, record string, old, new any) error {
		return s.logChange(ctx, tx, action, record, old, new)
	}, &h, &old, &updated)
}

// boolInt stores a flag as 0 or 1 (the schema's INTEGER with a CHECK).
func boolInt(b bool) int {
	if b {
		return 1
	}
	return 0
}

func nullIfEmpty(s string) any {
	if s == "" {
		return nil
	}
	return s
}
