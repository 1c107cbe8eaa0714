package store

import (
	"context"
	"fmt"
	"slices"
	"strings"
	"sync"
	"time"

	"polypledger/logbook"
)

// CaseFilter selects the cases ForEachCase streams. Zero fields select all.
type CaseFilter struct {
	From, To   time.Time // performed_on, both ends included
	OperatorID string
	TraineeID  string
}

func (f CaseFilter) where(alias string) (string, []any) { return f.whereOpt(alias, "") }

// whereOpt builds the WHERE clause; datePrefix goes before the date
// column (SQLite's unary plus keeps a condition off an index).
func (f CaseFilter) whereOpt(alias, datePrefix string) (string, []any) {
	var conds []string
	var args []any
	date := datePrefix + alias + "performed_on"
	if !f.From.IsZero() {
		conds = append(conds, date+" >= ?")
		args = append(args, logbook.FormatDate(f.From))
	}
	if !f.To.IsZero() {
		conds = append(conds, date+" <= ?")
		args = append(args, logbook.FormatDate(f.To))
	}
	if f.OperatorID != "" {
		conds = append(conds, alias+"operator_id = ?")
		args = append(args, f.OperatorID)
	}
	if f.TraineeID != "" {
		conds = append(conds, alias+"trainee_id = ?")
		args = append(args, f.TraineeID)
	}
	if len(conds) == 0 {
		return "", nil
	}
	return " WHERE " + strings.Join(conds, " AND "), args
}

// ListQuery selects and orders one page of the case list.
type ListQuery struct {
	CaseFilter
	Indication       logbook.Indication
	HistologyPending bool   // only procedures with a lesion awaiting histology
	SortBy           string // "performed_on" (default), "id", "operator_id", "age", "indication"
	Descending       bool
	Limit, Offset    int
}

// ProcedureRow is one line of the case list.
type ProcedureRow struct {
	Procedure    logbook.Procedure
	Lesions      int
	AwaitingHist int
}

var sortColumns = map[string]string{
	"performed_on": "p.performed_on", "id": "p.id", "operator_id": "p.operator_id",
	"age": "p.age", "indication": "p.indication", "extent": "p.extent",
}

// nullableSorts are the sort columns that may hold NULL.
var nullableSorts = map[string]bool{"p.age": true, "p.indication": true, "p.extent": true}

func (q ListQuery) where() (string, []any) {
	where, args := q.CaseFilter.where("p.")
	var extra []string
	if q.Indication != "" {
		extra = append(extra, "p.indication = ?")
		args = append(args, string(q.Indication))
	}
	if q.HistologyPending {
		extra = append(extra, "p.id IN (SELECT x.procedure_id FROM lesions x WHERE x.histology = 'pending')")
	}
	if len(extra) > 0 {
		if where == "" {
			where = " WHERE " + strings.Join(extra, " AND ")
		} else {
			where += " AND " + strings.Join(extra, " AND ")
		}
	}
	return where, args
}

// reverseFrom is the offset past which a page may be read from the other
// end of the list (a variable for tests).
var reverseFrom = 1000

// ListProcedures returns one page of procedures for the case list, with
// their lesion counts; only the page is read. A page in the second half of
// a long list is read from its end (the list's length is counted once and
// kept until the next change), so that no page walks more than half of the
// list's index.
func (s *Store) ListProcedures(ctx context.Context, q ListQuery) ([]ProcedureRow, error) {
	where, args := q.where()
	order, ok := sortColumns[q.SortBy]
	if !ok {
		order = "p.performed_on"
	}
	if q.Limit <= 0 {
		q.Limit = 100
	}
	descending, reversed := q.Descending, false
	if q.Offset > reverseFrom {
		total, err := s.countCached(ctx, where, args)
		if err != nil {
			return nil, err
		}
		if q.Offset >= total {
			return nil, nil
		}
		if q.Offset > total/2 {
			end := min(total, q.Offset+q.Limit)
			q.Offset, q.Limit = total-end, end-q.Offset
			descending, reversed = !descending, true
		}
	}
	dir := " ASC"
	if descending {
		dir = " DESC"
	}
	pc := make([]string, len(procedureColumns))
	for i, c := range procedureColumns {
		pc[i] = "p." + c.sqlColumn()
	}
	// The page's procedures are found first (an index serves each sort
	// order), and only those rows are read in full and have their lesions
	// counted.
	// A value not recorded sorts before every value, as SQLite sorts NULL
	// (PostgreSQL would put it last unless told).
	nulls := ""
	if nullableSorts[order] {
		nulls = map[string]string{" ASC": " NULLS FIRST", " DESC": " NULLS LAST"}[dir]
	}
	orderBy := " ORDER BY " + order + dir + nulls + ", p.id" + dir
	sqlText := "SELECT " + strings.Join(pc, ", ") +
		", (SELECT count(*) FROM lesions l WHERE l.procedure_id = p.id)" +
		", (SELECT count(*) FROM lesions l WHERE l.procedure_id = p.id AND l.histology = 'pending')" +
		" FROM procedures p WHERE p.id IN (SELECT p.id FROM procedures p" + where + orderBy + " LIMIT ? OFFSET ?)" + orderBy
	rows, err := s.db.QueryContext(ctx, sqlText, append(args, q.Limit, q.Offset)...)
	if err != nil {
		return nil, s.explain(err)
	}
	defer rows.Close()
	dest, vals := nullStrings(len(procedureColumns))
	var out []ProcedureRow
	for rows.Next() {
		var r ProcedureRow
		if err := rows.Scan(append(dest, &r.Lesions, &r.AwaitingHist)...); err != nil {
			return nil, err
		}
		r.Procedure = logbook.NewProcedure()
		if err := scanStored(procedureColumns, vals(), &r.Procedure); err != nil {
			return nil, err
		}
		out = append(out, r)
	}
	if reversed {
		slices.Reverse(out)
	}
	return out, rows.Err()
}

// CountProcedures counts the procedures a list query selects (ignoring its
// page). A count is kept until the next change anyone stores, so that a
// list shown again, or scrolled, does not count a large logbook again.
func (s *Store) CountProcedures(ctx context.Context, q ListQuery) (int, error) {
	where, args := q.where()
	return s.countCached(ctx, where, args)
}

// countCache keeps the counts of list queries for one change mark.
type countCache struct {
	mu     sync.Mutex
	mark   int64
	counts map[string]int
}

// countCached counts the procedures selected by where, or returns the
// count made since the last change (ChangeMark).
func (s *Store) countCached(ctx context.Context, where string, args []any) (int, error) {
	mark, err := s.ChangeMark(ctx)
	if err != nil {
		return 0, err
	}
	key := where + fmt.Sprint(args...)
	c := &s.counts
	c.mu.Lock()
	if c.mark != mark || c.counts == nil {
		c.mark, c.counts = mark, map[string]int{}
	}
	n, ok := c.counts[key]
	c.mu.Unlock()
	if ok {
		return n, nil
	}
	if err := s.db.QueryRowContext(ctx, "SELECT count(*) FROM procedures p"+where, args...).Scan(&n); err != nil {
		return 0, s.explain(err)
	}
	c.mu.Lock()
	if c.mark == mark {
		c.counts[key] = n
	}
	c.mu.Unlock()
	return n, nil
}

// AwaitingLesion is a lesion in the pathology inbox, with its procedure's
// date and operator.
type AwaitingLesion struct {
	Lesion      logbook.Lesion
	PerformedOn time.Time
	OperatorID  string
}

// AwaitingHistology returns one page of lesions whose histology is pending,
// oldest procedure first, grouped by procedure.
func (s *Store) AwaitingHistology(ctx context.Context, limit, offset int) ([]AwaitingLesion, error) {
	lc := make([]string, len(lesionStoredColumns))
	for i, c := range lesionStoredColumns {
		lc[i] = "l." + c.sqlColumn()
	}
	rows, err := s.db.QueryContext(ctx, "SELECT "+strings.Join(lc, ", ")+", p.performed_on, p.operator_id FROM lesions l JOIN procedures p ON p.id = l.procedure_id WHERE l.histology = 'pending' ORDER BY p.performed_on, p.id, l.lesion_no LIMIT ? OFFSET ?", limit, offset)
	if err != nil {
		return nil, s.explain(err)
	}
	defer rows.Close()
	dest, vals := nullStrings(len(lesionStoredColumns))
	var out []AwaitingLesion
	for rows.Next() {
		var a AwaitingLesion
		var date string
		if err := rows.Scan(append(dest, &date, &a.OperatorID)...); err != nil {
			return nil, err
		}
		a.Lesion = logbook.NewLesion()
		if err := scanStored(lesionStoredColumns, vals(), &a.Lesion); err != nil {
			return nil, err
		}
		a.PerformedOn, _ = logbook.ParseDate(date)
		out = append(out, a)
	}
	return out, rows.Err()
}

// CountAwaitingHistology counts lesions whose histology is pending.
func (s *Store) CountAwaitingHistology(ctx context.Context) (int, error) {
	var n int
	err := s.db.QueryRowContext(ctx, "SELECT count(*) FROM lesions WHERE histology = 'pending'").Scan(&n)
	return n, s.explain(err)
}

// Span returns the first and last procedure dates (zero times when empty).
func (s *Store) Span(ctx context.Context) (first, last time.Time, err error) {
	var a, b *string
	if err = s.db.QueryRowContext(ctx, "SELECT min(performed_on), max(performed_on) FROM procedures").Scan(&a, &b); err != nil {
		return first, last, s.explain(err)
	}
	if a != nil {
		first, _ = logbook.ParseDate(*a)
	}
	if b != nil {
		last, _ = logbook.ParseDate(*b)
	}
	return first, last, nil
}
