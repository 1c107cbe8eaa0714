package store

import (
	"cmp"
	"context"
	"errors"
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

// order is the column the list is sorted by (by date when SortBy names
// none).
func (q ListQuery) order() string {
	if order, ok := sortColumns[q.SortBy]; ok {
		return order
	}
	return "p.performed_on"
}

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

// On a server, a page far from both ends of a long list is found from a
// sample of the list's order: the sort key of every sampleEvery-th
// procedure, read in one statement and kept until the next change anyone
// stores. The page is then
// read from the sampled key before it onwards (an index range), walking
// fewer than sampleEvery procedures to its first, where reading it by its
// offset alone walks the index from the nearer end.
// (sampleEvery and sampleFrom are variables for tests.)
var sampleEvery = 1000

// sampleFrom is how far from both ends of the list a page must start for
// the sample to be used: nearer, the walk from the end costs less than
// reading a sample.
var sampleFrom = 20_000

// ListProcedures returns one page of procedures for the case list, with
// their lesion counts; only the page is read. A page in the second half of
// a long list is read from its end, and one far from both ends from the
// list's sample (see sampleEvery); the list's length and sample are kept
// until the next change.
func (s *Store) ListProcedures(ctx context.Context, q ListQuery) ([]ProcedureRow, error) {
	where, args := q.where()
	order := q.order()
	if q.Limit <= 0 {
		q.Limit = 100
	}
	descending, reversed := q.Descending, false
	if q.Offset > reverseFrom {
		mark, err := s.ChangeMark(ctx)
		if err != nil {
			return nil, err
		}
		total, err := s.countAt(ctx, mark, where, args)
		if err != nil {
			return nil, err
		}
		if q.Offset >= total {
			return nil, nil
		}
		end := min(total, q.Offset+q.Limit)
		// The page's first row counted from the start of the ascending
		// order.
		first := q.Offset
		if descending {
			first = total - end
		}
		sampled := false
		if min(first, total-first-(end-q.Offset)) > sampleFrom && s.sampled() {
			key, ok, err := s.sampledKey(ctx, mark, where, args, order, first)
			if err != nil {
				return nil, err
			}
			if sampled = ok; sampled {
				// Read ascending from the sampled key.
				where = andWhere(where, keyCond(order, ">=", "?", "?"))
				if order == "p.id" {
					args = append(args, key.id)
				} else {
					args = append(args, key.sort, key.id)
				}
				q.Offset, q.Limit = first-key.at, end-q.Offset
				reversed = descending
				descending = false
			}
		}
		if !sampled && q.Offset > total/2 {
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
	orderBy := listOrder(order, dir)
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

// listOrder is the ORDER BY of the case list by column order in direction
// dir (" ASC" or " DESC"), ties broken by id. A value not recorded sorts
// before every value, as SQLite sorts NULL (PostgreSQL would put it last
// unless told).
func listOrder(order, dir string) string {
	nulls := ""
	if nullableSorts[order] {
		nulls = map[string]string{" ASC": " NULLS FIRST", " DESC": " NULLS LAST"}[dir]
	}
	return " ORDER BY " + order + dir + nulls + ", p.id" + dir
}

// andWhere adds cond to the WHERE clause where ("" for none).
func andWhere(where, cond string) string {
	if where == "" {
		return " WHERE " + cond
	}
	return where + " AND " + cond
}

// keyCond is the condition that a procedure's key in the list order by key
// (its sort column, then its id) compares by op (">" or ">=") with the key
// k, id (SQL expressions); ordered by id alone, k is left out.
func keyCond(key, op, k, id string) string {
	if key == "p.id" {
		return "p.id " + op + " " + id
	}
	return "(" + key + ", p.id) " + op + " (" + k + ", " + id + ")"
}

// listKey is the sort key of one procedure in a list order, and its place
// in the ascending order (from 0).
type listKey struct {
	sort any // the sort column's stored value
	id   string
	at   int
}

// sampleCache keeps the samples of list orders for one change mark, by
// selection and order. A sample is read in a goroutine of its own, started
// when the list is counted (CountProcedures) — before anyone scrolls — or
// when a page needs it, and read once however many ask for it while it is
// being read. Close stops the reading and waits for it.
type sampleCache struct {
	mu      sync.Mutex
	mark    int64
	samples map[string]*sampling
	// stop ends every reading when the store closes; closed refuses new
	// ones; reading counts those under way.
	stop    context.CancelFunc
	ctx     context.Context
	closed  bool
	reading sync.WaitGroup
}

// sampling is one sample, being read or read.
type sampling struct {
	done chan struct{} // closed when keys and err are set
	keys []listKey
	err  error
}

// sampleFor returns the sampling of the list order by key of the
// procedures selected by where at change mark, starting to read it when
// it is not yet being read. It returns nil when the store is closed.
func (s *Store) sampleFor(mark int64, key, where string, args []any) *sampling {
	ck := key + selectionKey(where, args)
	c := &s.samples
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.closed {
		return nil
	}
	if c.mark != mark || c.samples == nil {
		c.mark, c.samples = mark, map[string]*sampling{}
	}
	if sp, ok := c.samples[ck]; ok {
		return sp
	}
	if c.ctx == nil {
		c.ctx, c.stop = context.WithCancel(context.Background())
	}
	sp := &sampling{done: make(chan struct{})}
	c.samples[ck] = sp
	c.reading.Add(1)
	every := sampleEvery
	go func() {
		defer c.reading.Done()
		keys, err := s.listSample(c.ctx, key, where, args, every)
		c.mu.Lock()
		sp.keys, sp.err = keys, err
		if err != nil && c.samples[ck] == sp {
			delete(c.samples, ck) // the next page asks again
		}
		c.mu.Unlock()
		close(sp.done)
	}()
	return sp
}

// close stops every sample being read and waits for them.
func (c *sampleCache) close() {
	c.mu.Lock()
	c.closed = true
	if c.stop != nil {
		c.stop()
	}
	c.mu.Unlock()
	c.reading.Wait()
}

// errClosed is returned by a store used after Close.
var errClosed = errors.New("the database has been closed")

// sampled reports whether the backend reads samples of list orders (a
// server does; SQLite walks its index in the process instead).
func (s *Store) sampled() bool { return s.be.listSample("", "", sampleEvery) != "" }

// worthSampling reports whether a list of total procedures is long enough
// for a page to lie sampleFrom from both its ends.
func worthSampling(total int) bool { return total > 2*sampleFrom+1 }

// sampledKey returns the sampled key nearest before place first of the
// ascending list order by key (a sort column) of the procedures selected
// by where, waiting for the sample when it is being read and reading it
// when it is not. It reports false when the sample has no key there (the
// page lies among procedures whose key is not recorded, which come first
// and which keys cannot order): the page is then read by its offset.
func (s *Store) sampledKey(ctx context.Context, mark int64, where string, args []any, key string, first int) (listKey, bool, error) {
	sp := s.sampleFor(mark, key, where, args)
	if sp == nil {
		return listKey{}, false, errClosed
	}
	select {
	case <-sp.done:
	case <-ctx.Done():
		return listKey{}, false, ctx.Err()
	}
	if sp.err != nil {
		return listKey{}, false, s.explain(sp.err)
	}
	i, _ := slices.BinarySearchFunc(sp.keys, first+1, func(k listKey, at int) int { return cmp.Compare(k.at, at) })
	if i == 0 {
		return listKey{}, false, nil
	}
	return sp.keys[i-1], true, nil
}

// listSample reads the sample of the ascending list order by key of the
// procedures selected by where: the key of every every-th procedure
// from the first whose key is recorded, with its place. It is read with one
// statement of the backend's (listSample), each step an index range from
// the key before; a backend without one (SQLite, which walks an index in
// the process, without a round trip per row) has no sample, and its pages
// are read by their offset.
func (s *Store) listSample(ctx context.Context, key, where string, args []any, every int) ([]listKey, error) {
	and := func(cond string) string { return andWhere(where, cond) }
	asc := listOrder(key, " ASC")
	start, seedWhere := 0, where
	if nullableSorts[key] {
		seedWhere = and(key + " IS NOT NULL")
	}
	q := s.be.listSample("SELECT "+key+", p.id FROM procedures p"+seedWhere+asc+" LIMIT 1",
		"SELECT "+key+", p.id FROM procedures p"+and(keyCond(key, ">", "s.k", "s.id"))+asc, every)
	if q == "" {
		return nil, nil
	}
	if nullableSorts[key] {
		if err := s.db.QueryRowContext(ctx, "SELECT count(*) FROM procedures p"+and(key+" IS NULL"), args...).Scan(&start); err != nil {
			return nil, err
		}
	}
	rows, err := s.db.QueryContext(ctx, q, append(slices.Clone(args), args...)...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []listKey
	for rows.Next() {
		var k listKey
		if err := rows.Scan(&k.sort, &k.id, &k.at); err != nil {
			return nil, err
		}
		if b, isBytes := k.sort.([]byte); isBytes {
			k.sort = string(b)
		}
		k.at = start + k.at*every
		out = append(out, k)
	}
	return out, rows.Err()
}

// CountProcedures counts the procedures a list query selects (ignoring its
// page). A count is kept until the next change anyone stores, so that a
// list shown again, or scrolled, does not count a large logbook again.
//
// On a server, counting a long list also starts reading the sample of its
// order in the background (see sampleEvery), so that a page far from both
// ends is ready when the list is scrolled there.
func (s *Store) CountProcedures(ctx context.Context, q ListQuery) (int, error) {
	where, args := q.where()
	mark, err := s.ChangeMark(ctx)
	if err != nil {
		return 0, err
	}
	n, err := s.countAt(ctx, mark, where, args)
	if err == nil && worthSampling(n) && s.sampled() {
		s.sampleFor(mark, q.order(), where, args)
	}
	return n, err
}

// countCache keeps the counts of list queries for one change mark.
type countCache struct {
	mu     sync.Mutex
	mark   int64
	counts map[string]int
}

// selectionKey names the procedures a WHERE clause and its arguments
// select, for the case list's caches of counts and samples.
func selectionKey(where string, args []any) string { return where + fmt.Sprint(args...) }

// countAt counts the procedures selected by where at change mark
// (ChangeMark), or returns the count made since.
func (s *Store) countAt(ctx context.Context, mark int64, where string, args []any) (int, error) {
	key := selectionKey(where, args)
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
