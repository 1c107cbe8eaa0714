package store

import (
	"bufio"
	"context"
	"database/sql"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"

	"polypledger/logbook"
)

// Kind is the kind of CSV file: procedures, lesions or histology.
type Kind string

// CSV kinds (architecture.md, "CSV interchange").
const (
	Procedures Kind = "procedures"
	Lesions    Kind = "lesions"
	Histology  Kind = "histology"
)

// ParseKind reads a kind name.
func ParseKind(s string) (Kind, error) {
	switch Kind(s) {
	case Procedures, Lesions, Histology:
		return Kind(s), nil
	}
	return "", fmt.Errorf("kind %q is not procedures, lesions or histology", s)
}

// Columns returns the CSV header of a kind, in export order.
func Columns(k Kind) []string {
	switch k {
	case Procedures:
		return names(procedureColumns)
	case Lesions:
		return names(lesionColumns)
	case Histology:
		return names(histologyColumns)
	}
	return nil
}

// ImportOptions adjust an import.
type ImportOptions struct {
	// Update lets rows replace records already stored (a procedure, a lesion,
	// or a lesion's final histology); without it they are errors.
	Update bool
	// Progress, when set, is called every ProgressEvery rows with the rows
	// read so far and the bytes read so far.
	Progress func(rows int, bytes int64)
}

// ProgressEvery is how many rows pass between progress reports.
const ProgressEvery = 10000

// MaxReportedErrors caps the bad rows listed by an ImportError.
const MaxReportedErrors = 100

// ImportResult says what a successful import stored.
type ImportResult struct {
	Rows        int
	Inserted    int
	Updated     int
	RosterAdded []logbook.RosterEntry
}

// RowError is one refused value: file, line, column and reason.
type RowError struct {
	File   string
	Line   int
	Column string
	Reason string
}

// String returns "FILE:LINE: column: reason".
func (e RowError) String() string {
	return fmt.Sprintf("%s:%d: %s: %s", e.File, e.Line, e.Column, e.Reason)
}

// ImportError is a refused import: nothing was stored. It lists the first
// MaxReportedErrors problems and counts the rest.
type ImportError struct {
	File   string
	Errors []RowError
	More   int // problems beyond those listed
	Rows   int // data rows read
}

func (e *ImportError) Error() string {
	var b strings.Builder
	for _, r := range e.Errors {
		b.WriteString(r.String())
		b.WriteByte('\n')
	}
	if e.More > 0 {
		fmt.Fprintf(&b, "%s: … and %d more problems not listed\n", e.File, e.More)
	}
	fmt.Fprintf(&b, "%s: nothing was imported (%d problems in %d rows)", e.File, len(e.Errors)+e.More, e.Rows)
	return b.String()
}

func (e *ImportError) add(line int, column, reason string) {
	if len(e.Errors) < MaxReportedErrors {
		e.Errors = append(e.Errors, RowError{File: e.File, Line: line, Column: column, Reason: reason})
	} else {
		e.More++
	}
}

func (e *ImportError) any() bool { return len(e.Errors) > 0 }

// countingReader counts the bytes read, for progress.
type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// header maps the file's columns to the kind's columns, refusing unknown,
// repeated or missing ones.
func header[T any](cols []column[T], rec []string, ie *ImportError) []int {
	idx := make([]int, len(rec)) // file column → cols index
	seen := map[string]bool{}
	for i, name := range rec {
		if i == 0 {
			name = strings.TrimPrefix(name, "\ufeff")
		}
		name = strings.TrimSpace(name)
		idx[i] = -1
		for j, c := range cols {
			if c.name == name {
				idx[i] = j
			}
		}
		switch {
		case name == "":
			ie.add(1, fmt.Sprintf("column %d", i+1), "has no name in the header")
		case idx[i] < 0:
			ie.add(1, name, "is not a column of this kind of file (expected: "+strings.Join(names(cols), ", ")+")")
		case seen[name]:
			ie.add(1, name, "appears twice in the header")
		}
		seen[name] = true
	}
	for _, c := range cols {
		if !seen[c.name] && !c.optional {
			ie.add(1, c.name, "required column is missing from the header")
		}
	}
	return idx
}

// parseRow fills r from one CSV record; bad values are added to ie.
func parseRow[T any](cols []column[T], idx []int, rec []string, line int, cd *codec, r *T, ie *ImportError) bool {
	ok := true
	for i, v := range rec {
		c := cols[idx[i]]
		if err := c.set(r, strings.TrimSpace(v), cd); err != nil {
			ie.add(line, c.name, err.Error())
			ok = false
		}
	}
	return ok
}

// importer holds one import's transaction and bookkeeping.
type importer struct {
	s      *Store
	ctx    context.Context
	tx     *sql.Tx
	ie     *ImportError
	res    ImportResult
	opt    ImportOptions
	roster map[string]bool // roster ids already checked
	seen   map[string]bool // record keys already read from this file
	stmts  map[string]*sql.Stmt
	// keyChecked is set once the unit key has been matched to the database.
	keyChecked bool
}

func (im *importer) stmt(q string) (*sql.Stmt, error) {
	if st, ok := im.stmts[q]; ok {
		return st, nil
	}
	st, err := im.tx.PrepareContext(im.ctx, q)
	if err != nil {
		return nil, err
	}
	im.stmts[q] = st
	return st, nil
}

func (im *importer) exec(q string, args ...any) error {
	st, err := im.stmt(q)
	if err != nil {
		return err
	}
	_, err = st.ExecContext(im.ctx, args...)
	return err
}

func (im *importer) exists(q string, args ...any) (bool, error) {
	st, err := im.stmt(q)
	if err != nil {
		return false, err
	}
	var one int
	err = st.QueryRowContext(im.ctx, args...).Scan(&one)
	if errors.Is(err, sql.ErrNoRows) {
		return false, nil
	}
	return err == nil, err
}

// ensureOnRoster adds an id named by an import to the roster if it is not
// there yet, and remembers it to say so.
func (im *importer) ensureOnRoster(id string, role logbook.Role) error {
	if id == "" || im.roster[id] {
		return nil
	}
	im.roster[id] = true
	found, err := im.exists("SELECT 1 FROM roster WHERE id = ?", id)
	if err != nil || found {
		return err
	}
	r := logbook.RosterEntry{ID: id, Role: role}
	if err := im.exec("INSERT INTO roster (id, name, role, retired) VALUES (?, '', ?, 0)", id, string(role)); err != nil {
		return err
	}
	im.res.RosterAdded = append(im.res.RosterAdded, r)
	return im.s.logChange(im.ctx, im.tx, "insert", "roster "+id, nil, rosterMap(r))
}

// Import reads a CSV file of the given kind and stores all of its rows in
// one transaction, or none: on any bad row it returns an *ImportError listing
// FILE:LINE: column: reason for each problem and the database is unchanged.
// name is the file name used in messages.
func (s *Store) Import(ctx context.Context, kind Kind, name string, r io.Reader, opt ImportOptions) (ImportResult, error) {
	if s.readOnly {
		return ImportResult{}, errors.New("the database is open read-only")
	}
	ie := &ImportError{File: name}
	cr := &countingReader{r: r}
	cv := csv.NewReader(bufio.NewReaderSize(cr, 1<<16))
	cv.FieldsPerRecord = -1
	cv.ReuseRecord = true
	head, err := cv.Read()
	if err == io.EOF {
		ie.add(1, "header", "the file is empty")
		return ImportResult{}, ie
	}
	if err != nil {
		ie.add(1, "header", csvReason(err))
		return ImportResult{}, ie
	}
	head = append([]string(nil), head...)
	var run func(im *importer) error
	switch kind {
	case Procedures:
		idx := header(procedureColumns, head, ie)
		run = func(im *importer) error {
			return importRows(im, cv, cr, procedureColumns, idx, len(head), im.procedure, logbook.NewProcedure)
		}
	case Lesions:
		idx := header(lesionColumns, head, ie)
		run = func(im *importer) error {
			return importRows(im, cv, cr, lesionColumns, idx, len(head), im.lesion, logbook.NewLesion)
		}
	case Histology:
		idx := header(histologyColumns, head, ie)
		run = func(im *importer) error {
			return importRows(im, cv, cr, histologyColumns, idx, len(head), im.histology, func() logbook.HistologyResult { return logbook.HistologyResult{LesionNo: logbook.NotRecorded} })
		}
	default:
		return ImportResult{}, fmt.Errorf("kind %q is not procedures, lesions or histology", kind)
	}
	if ie.any() {
		return ImportResult{}, ie // header problems: no row is read
	}
	im := &importer{s: s, ctx: ctx, ie: ie, opt: opt, roster: map[string]bool{}, seen: map[string]bool{}, stmts: map[string]*sql.Stmt{}}
	err = s.inTx(ctx, func(tx *sql.Tx) error {
		im.tx = tx
		defer func() {
			for _, st := range im.stmts {
				st.Close()
			}
		}()
		if err := run(im); err != nil {
			return err
		}
		if ie.any() {
			return ie // rolls back
		}
		return nil
	})
	if err != nil {
		var refused *ImportError
		if errors.As(err, &refused) {
			return ImportResult{}, refused
		}
		return ImportResult{}, fmt.Errorf("import %s: %w; nothing was imported", name, s.explain(err))
	}
	return im.res, nil
}

func csvReason(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return "not valid CSV: " + pe.Err.Error()
	}
	return err.Error()
}

// importRows reads every data row, parses it with cols and hands it to
// store; parse and validation problems accumulate in im.ie.
func importRows[T any](im *importer, cv *csv.Reader, cr *countingReader, cols []column[T], idx []int, width int,
	store func(line int, r *T) error, fresh func() T) error {
	cd := &codec{key: im.s.key}
	for {
		if err := im.ctx.Err(); err != nil {
			return err
		}
		rec, err := cv.Read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				im.ie.add(pe.Line, "row", csvReason(err))
				im.ie.Rows++
				if pe.Err == csv.ErrFieldCount || pe.Err == csv.ErrQuote || pe.Err == csv.ErrBareQuote {
					continue
				}
			}
			return err
		}
		// Only a record read without error has field positions; asking
		// after a parse error panics.
		line, _ := cv.FieldPos(0)
		im.ie.Rows++
		im.res.Rows++
		if im.opt.Progress != nil && im.res.Rows%ProgressEvery == 0 {
			im.opt.Progress(im.res.Rows, cr.n)
		}
		if len(rec) != width {
			im.ie.add(line, "row", fmt.Sprintf("has %d fields but the header has %d", len(rec), width))
			continue
		}
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue // a blank line
		}
		r := fresh()
		if !parseRow(cols, idx, rec, line, cd, &r, im.ie) {
			continue
		}
		if cd.hashed && !im.keyChecked {
			if err := im.s.checkKey(im.ctx, im.tx); err != nil {
				return err
			}
			im.keyChecked = true
		}
		if err := store(line, &r); err != nil {
			return err
		}
	}
}

func (im *importer) problems(line int, ps logbook.Problems) {
	for _, p := range ps {
		im.ie.add(line, p.Field, p.Reason)
	}
}

// procedure checks and stores one procedures.csv row.
func (im *importer) procedure(line int, p *logbook.Procedure) error {
	ps := logbook.ValidateProcedure(*p, im.s.today())
	if len(ps) > 0 {
		im.problems(line, ps)
		return nil
	}
	seenKey := "p" + p.ID
	if im.seen[seenKey] {
		im.ie.add(line, "procedure_id", p.ID+" appears more than once in this file")
		return nil
	}
	im.seen[seenKey] = true
	found, err := im.exists("SELECT 1 FROM procedures WHERE id = ?", p.ID)
	if err != nil {
		return err
	}
	if found && !im.opt.Update {
		im.ie.add(line, "procedure_id", p.ID+" is already in the logbook (import with --update to replace it)")
		return nil
	}
	if im.ie.any() {
		return nil // the import will be refused; keep checking rows without writing
	}
	if err := im.ensureOnRoster(p.OperatorID, logbook.RoleEndoscopist); err != nil {
		return err
	}
	if err := im.ensureOnRoster(p.TraineeID, logbook.RoleTrainee); err != nil {
		return err
	}
	if found {
		old, _, err := getProcedure(im.ctx, im.tx, p.ID)
		if err != nil {
			return err
		}
		if err := updateProcedure(im.ctx, im.tx, p); err != nil {
			return err
		}
		im.res.Updated++
		return im.s.logChange(im.ctx, im.tx, "update", "procedure "+p.ID, recordJSON(procedureColumns, &old), recordJSON(procedureColumns, p))
	}
	if err := im.exec(procedureInsertSQL, storedArgs(procedureColumns, p)...); err != nil {
		return err
	}
	im.res.Inserted++
	return im.s.logChange(im.ctx, im.tx, "insert", "procedure "+p.ID, nil, recordJSON(procedureColumns, p))
}

// lesion checks and stores one lesions.csv row.
func (im *importer) lesion(line int, l *logbook.Lesion) error {
	ps := logbook.ValidateLesion(*l, im.s.today())
	if len(ps) > 0 {
		im.problems(line, ps)
		return nil
	}
	key := fmt.Sprintf("l%s#%d", l.ProcedureID, l.LesionNo)
	if im.seen[key] {
		im.ie.add(line, "lesion_no", fmt.Sprintf("lesion %d of procedure %s appears more than once in this file", l.LesionNo, l.ProcedureID))
		return nil
	}
	im.seen[key] = true
	found, err := im.exists("SELECT 1 FROM procedures WHERE id = ?", l.ProcedureID)
	if err != nil {
		return err
	}
	if !found {
		im.ie.add(line, "procedure_id", l.ProcedureID+" is not in the logbook (import its procedure first)")
		return nil
	}
	have, err := im.exists("SELECT 1 FROM lesions WHERE procedure_id = ? AND lesion_no = ?", l.ProcedureID, l.LesionNo)
	if err != nil {
		return err
	}
	if have && !im.opt.Update {
		im.ie.add(line, "lesion_no", fmt.Sprintf("procedure %s already has lesion %d (import with --update to replace it)", l.ProcedureID, l.LesionNo))
		return nil
	}
	if im.ie.any() {
		return nil
	}
	if have {
		ls, err := getLesions(im.ctx, im.tx, l.ProcedureID)
		if err != nil {
			return err
		}
		var old logbook.Lesion
		for _, o := range ls {
			if o.LesionNo == l.LesionNo {
				old = o
			}
		}
		if l.Histology.IsFinal() && l.Histology == old.Histology {
			l.ReportedOn = old.ReportedOn // lesions.csv carries no report date; keep the one recorded
		}
		if err := im.exec("DELETE FROM lesions WHERE procedure_id = ? AND lesion_no = ?", l.ProcedureID, l.LesionNo); err != nil {
			return err
		}
		if err := im.exec(lesionInsertSQL, storedArgs(lesionStoredColumns, l)...); err != nil {
			return err
		}
		im.res.Updated++
		return im.s.logChange(im.ctx, im.tx, "update", fmt.Sprintf("lesion %s#%d", l.ProcedureID, l.LesionNo), recordJSON(lesionStoredColumns, &old), recordJSON(lesionStoredColumns, l))
	}
	if err := im.exec(lesionInsertSQL, storedArgs(lesionStoredColumns, l)...); err != nil {
		return err
	}
	im.res.Inserted++
	return im.s.logChange(im.ctx, im.tx, "insert", fmt.Sprintf("lesion %s#%d", l.ProcedureID, l.LesionNo), nil, recordJSON(lesionStoredColumns, l))
}

// histology checks and applies one histology.csv row.
func (im *importer) histology(line int, h *logbook.HistologyResult) error {
	if ps := logbook.ValidateHistologyResult(*h, im.s.today()); len(ps) > 0 {
		im.problems(line, ps)
		return nil
	}
	key := fmt.Sprintf("h%s#%d", h.ProcedureID, h.LesionNo)
	if im.seen[key] {
		im.ie.add(line, "lesion_no", fmt.Sprintf("a result for lesion %d of procedure %s appears more than once in this file", h.LesionNo, h.ProcedureID))
		return nil
	}
	im.seen[key] = true
	if im.ie.any() {
		// The import will be refused: go on checking, without writing.
		_, _, ps, err := im.s.checkHistology(im.ctx, im.tx, *h, im.opt.Update)
		im.problems(line, ps)
		return err
	}
	ps, err := im.s.applyHistology(im.ctx, im.tx, *h, im.opt.Update)
	if err != nil {
		return err
	}
	if len(ps) > 0 {
		im.problems(line, ps)
		return nil
	}
	im.res.Updated++
	return nil
}
