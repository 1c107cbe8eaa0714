package store

import (
	"bufio"
	"bytes"
	"context"
	"database/sql"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

	"polypledger/logbook"
)

// Kind is the kind of a record file: procedures, lesions or histology
// (the logbook's catalogue of our columns names them).
type Kind = logbook.Kind

// Kinds of record files (architecture.md, "CSV interchange").
const (
	Procedures = logbook.KindProcedures
	Lesions    = logbook.KindLesions
	Histology  = logbook.KindHistology
)

// ParseKind reads a kind name.
func ParseKind(s string) (Kind, error) {
	switch Kind(s) {
	case Procedures, Lesions, Histology:
		return Kind(s), nil
	}
	return "", fmt.Errorf("kind %q is not procedures, lesions or histology", s)
}

// Columns returns the CSV header of a kind, in export order: the names of
// logbook.Columns, which the store's own column tables follow (a test keeps
// them the same).
func Columns(k Kind) []string { return logbook.ColumnNames(k) }

// ImportOptions adjust an import.
type ImportOptions struct {
	// Update lets rows replace records already stored (a procedure, a lesion,
	// or a lesion's final histology); without it they are errors.
	Update bool
	// Progress, when set, is called every ProgressEvery rows with the rows
	// read so far and the bytes read so far (Import only: a Feed reports
	// its own progress).
	Progress func(rows int, bytes int64)
	// Check reads and checks everything as an import does, against the
	// logbook as it is, and then stores nothing: the result says what would
	// have been stored, and the error, as for an import, lists every
	// problem.
	Check bool
}

// ProgressEvery is how many rows pass between progress reports.
const ProgressEvery = 10000

// MaxReportedErrors caps the bad rows listed by an ImportError.
const MaxReportedErrors = 100

// ImportResult says what a successful import stored (with Check: what it
// would store).
type ImportResult struct {
	Rows        int
	Inserted    int
	Updated     int
	RosterAdded []logbook.RosterEntry
	// Kinds counts the records of each kind.
	Kinds map[Kind]KindCount
}

// KindCount is what an import does with the records of one kind.
type KindCount struct {
	// New records are added; Replacing ones replace a record already in
	// the logbook (with Update); Clashing ones are already in the logbook
	// and refused (without Update). A histology result filling a lesion, or
	// correcting its result, counts as new.
	New, Replacing, Clashing int
}

// count notes a record of kind that passed its checks: new or replacing.
func (r *ImportResult) count(kind Kind, replacing bool) {
	r.tally(kind, func(c *KindCount) {
		if replacing {
			c.Replacing++
			r.Updated++
		} else {
			c.New++
			r.Inserted++
		}
	})
}

// recorded notes a histology result applied to its lesion: new for its
// kind, an update of the lesion for the totals.
func (r *ImportResult) recorded(kind Kind) {
	r.tally(kind, func(c *KindCount) { c.New++; r.Updated++ })
}

// clash notes a record of kind already in the logbook and refused.
func (r *ImportResult) clash(kind Kind) {
	r.tally(kind, func(c *KindCount) { c.Clashing++ })
}

func (r *ImportResult) tally(kind Kind, change func(*KindCount)) {
	if r.Kinds == nil {
		r.Kinds = map[Kind]KindCount{}
	}
	c := r.Kinds[kind]
	change(&c)
	r.Kinds[kind] = c
}

// RowError is one refused value: file, line, column and reason.
type RowError struct {
	File   string
	Line   int
	Column string
	Reason string
}

// String returns "FILE:LINE: column: reason" ("FILE: column: reason" for a
// problem of the whole file, on no one line).
func (e RowError) String() string {
	if e.Line <= 0 {
		return fmt.Sprintf("%s: %s: %s", e.File, e.Column, e.Reason)
	}
	return fmt.Sprintf("%s:%d: %s: %s", e.File, e.Line, e.Column, e.Reason)
}

// ImportError is a refused import: nothing was stored. It lists the first
// MaxReportedErrors problems in the order of their lines and counts the
// rest.
type ImportError struct {
	File   string
	Errors []RowError
	More   int // problems beyond those listed
	Rows   int // data rows read
	// Check is set when the import was a check only (ImportOptions.Check).
	Check bool
}

func (e *ImportError) Error() string {
	var b strings.Builder
	for _, r := range e.Errors {
		b.WriteString(r.String())
		b.WriteByte('\n')
	}
	if e.More > 0 {
		fmt.Fprintf(&b, "%s: … and %d more %s not listed\n", e.File, e.More, plural(e.More, "problem", "problems"))
	}
	n := len(e.Errors) + e.More
	what := "nothing was imported"
	if e.Check {
		what = "checked, nothing stored"
	}
	fmt.Fprintf(&b, "%s: %s (%d %s in %d %s)", e.File, what, n, plural(n, "problem", "problems"), e.Rows, plural(e.Rows, "row", "rows"))
	return b.String()
}

// plural picks the word for a count.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func (e *ImportError) add(line int, column, reason string) {
	e.addError(RowError{File: e.File, Line: line, Column: column, Reason: reason})
}

// addError records a problem. Problems are listed in the order of their
// lines (those of one line in the order found) — an import finds a row's
// problems with the logbook only when its batch is checked, after it has
// read the rows that follow — and the first MaxReportedErrors by line are
// kept.
func (e *ImportError) addError(r RowError) {
	n := len(e.Errors)
	if n == MaxReportedErrors && r.Line >= e.Errors[n-1].Line {
		e.More++
		return
	}
	i := n
	for i > 0 && e.Errors[i-1].Line > r.Line {
		i--
	}
	e.Errors = slices.Insert(e.Errors, i, r)
	if len(e.Errors) > MaxReportedErrors {
		e.Errors = e.Errors[:MaxReportedErrors]
		e.More++
	}
}

func (e *ImportError) any() bool { return len(e.Errors) > 0 }

// Limits on what an imported file may hold. Real rows are a few hundred
// bytes; the limits keep a wrong or hostile file (a device that never
// ends, a value of 100 MB, a quote left open) from taking unbounded memory,
// and such a file is refused with a message naming the line.
const (
	// MaxRowBytes bounds one row of a CSV file (one record, which may
	// span lines inside quotes), the header row included.
	MaxRowBytes = 64 << 10
	// MaxValueBytes bounds one value.
	MaxValueBytes = 1 << 10
)

// readBuffer is the CSV reader's buffer; it may read this far ahead.
const readBuffer = 16 << 10

// errRowTooLong stops a file whose row passes MaxRowBytes.
var errRowTooLong = errors.New("row too long")

// boundedReader passes a file's bytes to the CSV reader, counting bytes and
// lines, and fails once the reader is further than MaxRowBytes (and its
// buffer) past the end of the last complete row.
type boundedReader struct {
	r     io.Reader
	n     int64 // bytes read so far
	limit int64 // n may not pass this
	lines int   // line ends read so far
}

func (b *boundedReader) Read(p []byte) (int, error) {
	if b.n >= b.limit {
		return 0, errRowTooLong
	}
	if rem := b.limit - b.n; int64(len(p)) > rem {
		p = p[:rem]
	}
	n, err := b.r.Read(p)
	b.n += int64(n)
	b.lines += bytes.Count(p[:n], []byte{'\n'})
	return n, err
}

// csvFile reads the rows of one CSV file within the limits.
type csvFile struct {
	name string
	kind Kind
	br   *boundedReader
	buf  *bufio.Reader
	cv   *csv.Reader
}

func newCSVFile(name string, kind Kind, r io.Reader) *csvFile {
	br := &boundedReader{r: r, limit: MaxRowBytes + readBuffer}
	buf := bufio.NewReaderSize(br, readBuffer)
	cv := csv.NewReader(buf)
	cv.FieldsPerRecord = -1
	cv.ReuseRecord = true
	return &csvFile{name: name, kind: kind, br: br, buf: buf, cv: cv}
}

// read returns the next row; the reader may then run MaxRowBytes past it.
func (f *csvFile) read() ([]string, error) {
	rec, err := f.cv.Read()
	f.br.limit = f.cv.InputOffset() + MaxRowBytes + readBuffer
	return rec, err
}

// tooLong records the problem of a row past MaxRowBytes.
func (f *csvFile) tooLong(ie *ImportError) {
	ie.add(f.br.lines+1, "row", fmt.Sprintf("is longer than %d bytes, far longer than any row of a %s file; the rest of the file was not read (is it the right file? a quote left open makes the rest of a file one value)", MaxRowBytes, f.kind))
}

// header reads the header row and maps the file's columns to cols: for
// each file column the index in cols (-1 when it is not read), and for each
// of cols whether the file lacks it. ok is false when the first line is not
// a header at all (no column of the kind is named), and then the file's rows
// cannot be read.
func header[T any](f *csvFile, cols []column[T], ie *ImportError) (idx []int, absent []bool, width int, ok bool) {
	if b, _ := f.buf.Peek(2); len(b) == 2 && (b[0] == 0xff && b[1] == 0xfe || b[0] == 0xfe && b[1] == 0xff) {
		ie.add(1, "header", "the file is saved as UTF-16 text; save it as UTF-8 CSV")
		return nil, nil, 0, false
	}
	rec, err := f.read()
	switch {
	case err == io.EOF:
		ie.add(1, "header", "the file is empty")
		return nil, nil, 0, false
	case errors.Is(err, errRowTooLong):
		f.tooLong(ie)
		return nil, nil, 0, false
	case err != nil:
		ie.add(1, "header", csvReason(err))
		return nil, nil, 0, false
	}
	names := make([]string, len(rec))
	for i, name := range rec {
		if i == 0 {
			name = strings.TrimPrefix(name, "\ufeff")
		}
		names[i] = strings.TrimSpace(name)
	}
	idx, absent, ok = checkHeader(f.kind, names, func(column, reason string) { ie.add(1, column, reason) })
	return idx, absent, len(rec), ok
}

// checkHeader maps the column names of a file of ours (trimmed) to the
// columns of kind: for each file column the index in Columns(kind) (-1 when
// it is not read), and for each of ours whether the file lacks it. Each
// problem — a column without a name, not of the kind or named twice, a
// required column missing — goes to add. ok is false when no name is a
// column of the kind: the first row is then not a header at all, and the
// rows cannot be read.
func checkHeader(kind Kind, names []string, add func(column, reason string)) (idx []int, absent []bool, ok bool) {
	cols := logbook.Columns(kind)
	index := func(name string) int {
		for j, c := range cols {
			if c.Name == name {
				return j
			}
		}
		return -1
	}
	expected := "(expected: " + strings.Join(Columns(kind), ", ") + ")"
	idx = make([]int, len(names))
	known := 0
	for i, name := range names {
		idx[i] = index(name)
		if idx[i] >= 0 {
			known++
		}
	}
	if known == 0 {
		add("header", fmt.Sprintf("the first line is not a header row: none of its %d values names a column of a %s file (they are not shown, as they may be patient data); the first line must name the columns %s", len(names), kind, expected))
		return nil, nil, false
	}
	seen := make([]bool, len(cols))
	for i, name := range names {
		j := idx[i]
		switch {
		case name == "":
			add(fmt.Sprintf("column %d", i+1), "has no name in the header")
		case j < 0 && shownAsIs(name):
			add(name, "is not a column of this kind of file "+expected)
		case j < 0:
			add(fmt.Sprintf("column %d", i+1), logbook.QuoteValue(name)+" is not a column of this kind of file "+expected)
		case seen[j]:
			add(name, "appears twice in the header")
			idx[i] = -1 // the first is read
		default:
			seen[j] = true
		}
	}
	absent = make([]bool, len(cols))
	for j, c := range cols {
		if !seen[j] {
			absent[j] = true
			if !c.Optional {
				add(c.Name, "required column is missing from the header")
			}
		}
	}
	return idx, absent, true
}

// CheckHeader checks the header row of a file of ours that is not read
// through Import — a workbook's sheet — exactly as Import checks a CSV
// file's, so that both say the same of the same header. It returns, for
// each column of the file, the index of the column of kind it holds (-1 for
// one not read), for each of Columns(kind) whether the file lacks it, and
// the problems, at line of file. ok is false when the row names no column of
// the kind at all: it is not a header, and the rows cannot be read.
func CheckHeader(kind Kind, file string, line int, names []string) (idx []int, absent []bool, problems []RowError, ok bool) {
	idx, absent, ok = checkHeader(kind, names, func(column, reason string) {
		problems = append(problems, RowError{File: file, Line: line, Column: column, Reason: reason})
	})
	return idx, absent, problems, ok
}

// shownAsIs reports whether a header name may stand in a message as it is:
// short, printable text that QuoteValue would show unchanged.
func shownAsIs(name string) bool {
	if logbook.QuoteValue(name) != strconv.Quote(name) {
		return false
	}
	for _, r := range name {
		if !unicode.IsPrint(r) {
			return false
		}
	}
	return true
}

// columnIndex returns the index of the column called name, or -1.
func columnIndex[T any](cols []column[T], name string) int {
	for j, c := range cols {
		if c.name == name {
			return j
		}
	}
	return -1
}

// rules say how the rows of one kind of file are read and checked before
// the database is asked: the columns, a new empty record, the record's
// validation, and what identifies a row within the file.
type rules[T any] struct {
	cols     []column[T]
	fresh    func() T
	validate func(r T, today time.Time) logbook.Problems
	// keyFields are the columns that identify a row; key returns its
	// identity and the problem reported (in the first key field) when it
	// repeats an earlier row of the file.
	keyFields []string
	key       func(r *T) (key, repeat string)
}

var procedureRules = rules[procRec]{
	cols: procedureColumns, fresh: logbook.NewProcedure, validate: logbook.ValidateProcedure,
	keyFields: []string{"procedure_id"},
	key: func(p *procRec) (string, string) {
		return p.ID, p.ID + " appears more than once in this file"
	},
}

var lesionRules = rules[lesionRec]{
	cols: lesionColumns, fresh: logbook.NewLesion, validate: logbook.ValidateLesion,
	keyFields: []string{"lesion_no", "procedure_id"},
	key: func(l *lesionRec) (string, string) {
		return fmt.Sprintf("%s#%d", l.ProcedureID, l.LesionNo),
			fmt.Sprintf("lesion %d of procedure %s appears more than once in this file", l.LesionNo, l.ProcedureID)
	},
}

var histologyRules = rules[histRec]{
	cols:  histologyColumns,
	fresh: func() histRec { return histRec{LesionNo: logbook.NotRecorded} }, validate: logbook.ValidateHistologyResult,
	keyFields: []string{"lesion_no", "procedure_id"},
	key: func(h *histRec) (string, string) {
		return fmt.Sprintf("%s#%d", h.ProcedureID, h.LesionNo),
			fmt.Sprintf("a result for lesion %d of procedure %s appears more than once in this file", h.LesionNo, h.ProcedureID)
	},
}

// rowSink takes each row whose identity could be read (and that does not
// repeat an earlier one): clean is set when the row has no problem of its
// own. The import's sink checks the row against the database and stores
// it while the file has no problem at all.
type rowSink[T any] func(line int, r *T, clean bool) error

// readRows reads every data row of f and checks it (readRecord, after
// undoing the apostrophe export puts before a formula-like value) and
// repeats within the file. Every problem goes to ie; nothing stops at the
// first one, so a file's problems are all listed in one run. progress,
// when set, is called every ProgressEvery rows.
func readRows[T any](ctx context.Context, f *csvFile, ru rules[T], idx []int, absent []bool, width int,
	cd *codec, today time.Time, ie *ImportError, progress func(rows int, bytes int64), sink rowSink[T]) error {
	seen := map[string]bool{}
	bad := make([]bool, len(ru.cols))
	vals := make([]string, len(ru.cols))
	var order []int // our columns in the file's order
	for _, j := range idx {
		if j >= 0 {
			order = append(order, j)
		}
	}
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		rec, err := f.read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			if errors.Is(err, errRowTooLong) {
				f.tooLong(ie)
				return nil
			}
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				ie.add(pe.Line, "row", csvReason(err))
				ie.Rows++
				continue
			}
			return err
		}
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" && width > 1 {
			continue // a blank line
		}
		// Only a record read without error has field positions; asking
		// after a parse error panics.
		line, _ := f.cv.FieldPos(0)
		ie.Rows++
		if progress != nil && ie.Rows%ProgressEvery == 0 {
			progress(ie.Rows, f.br.n)
		}
		if len(rec) != width {
			ie.add(line, "row", fmt.Sprintf("has %d fields but the header has %d", len(rec), width))
			continue
		}
		for i, v := range rec {
			if j := idx[i]; j >= 0 {
				vals[j] = strings.TrimSpace(v)
			}
		}
		r, clean, usable := readRecord(ru, vals, order, absent, true, cd, today, bad,
			func(_ int, column, reason string) { ie.add(line, column, reason) }, nil)
		if !usable {
			continue
		}
		key, repeat := ru.key(&r)
		if seen[key] {
			ie.add(line, ru.keyFields[0], repeat)
			continue
		}
		seen[key] = true
		if sink != nil {
			if err := sink(line, &r, clean); err != nil {
				return err
			}
		}
	}
}

// readRecord reads one row into a record and checks it: each value of
// vals (vals[j] is the value of ru.cols[j]; order lists the columns to read,
// in the order problems are to be reported) for its size, UTF-8 and the
// column's parser — after PlainCell when plain is set —, then the record's
// rules, leaving out columns already refused and the columns the file lacks
// (absent): a rule broken only because of such a column makes the record
// unfit to store and goes to onAbsent when it is set; otherwise it is passed
// over (the file's header was refused for it). Each problem goes to report with its column's index
// (-1 for a rule naming no column of the kind). It returns the record,
// whether it had no problem, and whether its identity (the key columns)
// could be read. bad is scratch space, one flag per column.
func readRecord[T any](ru rules[T], vals []string, order []int, absent []bool, plain bool, cd *codec, today time.Time, bad []bool,
	report func(j int, column, reason string), onAbsent func(j int, reason string)) (r T, clean, usable bool) {
	r = ru.fresh()
	clear(bad)
	clean = true
	for _, j := range order {
		c := ru.cols[j]
		v := vals[j]
		var reason string
		switch {
		case len(v) > MaxValueBytes:
			reason = fmt.Sprintf("is %d bytes long; no value may be longer than %d", len(v), MaxValueBytes)
		case !utf8.ValidString(v):
			reason = "is not valid UTF-8 text (save the file as UTF-8 CSV)"
		default:
			if plain {
				v = PlainCell(v)
			}
			if err := c.set(&r, v, cd); err != nil {
				reason = err.Error()
			}
		}
		if reason != "" {
			report(j, c.name, reason)
			bad[j], clean = true, false
		}
	}
	for _, p := range ru.validate(r, today) {
		j := columnIndex(ru.cols, p.Field)
		switch {
		case j >= 0 && bad[j]:
			continue
		case j >= 0 && absent[j]:
			// Never stored, even though the problem is said once for the
			// whole file.
			clean = false
			if onAbsent != nil {
				onAbsent(j, p.Reason)
			}
			continue
		}
		report(j, p.Field, p.Reason)
		if j >= 0 {
			bad[j] = true
		}
		clean = false
	}
	usable = true
	for _, k := range ru.keyFields {
		if j := columnIndex(ru.cols, k); bad[j] || absent[j] && vals[j] == "" {
			usable = false
		}
	}
	return r, clean, usable
}

// importer holds one import's transaction and bookkeeping.
type importer struct {
	s      *Store
	ctx    context.Context
	tx     *txn
	ie     *ImportError
	cd     *codec
	res    ImportResult
	opt    ImportOptions
	roster map[string]bool // roster ids already checked
	stmts  map[string]*sql.Stmt
	today  time.Time
	// keyChecked is set once the unit key has been matched to the database.
	keyChecked bool
	// origin names the row being checked in messages: nil for a CSV file
	// of ours (its name and our column names).
	origin *Origin
	// refused holds the procedures of this import that were refused, so
	// that a lesion of one is not reported again as having no procedure.
	refused map[string]bool
	// Of ImportRecords: what each kind's records repeat, scratch space, and
	// the rules already reported for a column a file lacks.
	kind        Kind
	seen        map[Kind]map[string]bool
	order       []int
	absent, bad []bool
	vals        []string
	saidAbsent  map[absentRule]bool
	batchState
}

// absentRule is a rule broken because a file lacks a column.
type absentRule struct {
	file   string
	kind   Kind
	column int
}

func (s *Store) newImporter(ctx context.Context, name string, opt ImportOptions) *importer {
	return &importer{s: s, ctx: ctx, ie: &ImportError{File: name, Check: opt.Check}, opt: opt, cd: &codec{key: s.key},
		roster: map[string]bool{}, stmts: map[string]*sql.Stmt{}, today: s.today(), refused: map[string]bool{},
		batchState: batchState{wrote: map[string]bool{}}}
}

// add records a problem of the row being checked, named as its file names
// it (see origin).
func (im *importer) add(line int, column, reason string) {
	if im.origin == nil {
		im.ie.add(line, column, reason)
		return
	}
	im.ie.addError(RowError{File: im.origin.File, Line: line, Column: im.origin.label(im.kind, column), Reason: reason})
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
	return im.logChange("insert", "roster "+id, nil, rosterMap(r))
}

// Import reads a CSV file of the given kind and stores all of its rows in
// one transaction, or none: on any bad row it returns an *ImportError listing
// FILE:LINE: column: reason for every problem of the file — each value, each
// row's rules, repeats within the file and rows that clash with or refer to
// what is stored — and the database is unchanged. name is the file name
// used in messages. With opt.Check nothing is stored in any case.
func (s *Store) Import(ctx context.Context, kind Kind, name string, r io.Reader, opt ImportOptions) (ImportResult, error) {
	if ok, why := s.Writable(); !ok {
		return ImportResult{}, fmt.Errorf("import %s: %s; nothing was imported", name, why)
	}
	im := s.newImporter(ctx, name, opt)
	f := newCSVFile(name, kind, r)
	var run func() error
	switch kind {
	case Procedures:
		run = importFile(im, f, procedureRules)
	case Lesions:
		run = importFile(im, f, lesionRules)
	case Histology:
		run = importFile(im, f, histologyRules)
	default:
		return ImportResult{}, fmt.Errorf("kind %q is not procedures, lesions or histology", kind)
	}
	if run == nil {
		return ImportResult{}, im.ie // the first line is not a header: no row can be read
	}
	return im.run(run)
}

// errCheckOnly rolls back an import that was a check only.
var errCheckOnly = errors.New("checked only")

// run runs an import's reading in one transaction and commits it when
// nothing was refused (and it was not a check only). Rows are checked
// against the logbook and written in batches (batch.go). Every row that
// passes its checks is written, even after another row was refused, so
// that later rows are checked against it (a histology result against its
// lesion); a refused import is rolled back whole.
func (im *importer) run(read func() error) (ImportResult, error) {
	s := im.s
	err := s.inTx(im.ctx, func(tx *txn) error {
		im.tx = tx
		defer func() {
			im.closeWriters()
			for _, st := range im.stmts {
				st.Close()
			}
		}()
		if err := im.startWriters(); err != nil {
			return err
		}
		if err := read(); err != nil {
			return err
		}
		if err := im.checkBatch(); err != nil {
			return err
		}
		switch {
		case im.ie.any():
			return im.ie // rolls back
		case im.opt.Check:
			return errCheckOnly
		}
		return nil
	})
	im.res.Rows = im.ie.Rows
	if im.opt.Check && (err == nil || errors.Is(err, errCheckOnly) || errors.As(err, new(*ImportError))) {
		if errors.Is(err, errCheckOnly) {
			err = nil
		}
		return im.res, err
	}
	if err != nil {
		var refused *ImportError
		if errors.As(err, &refused) {
			return ImportResult{}, refused
		}
		return ImportResult{}, fmt.Errorf("import %s: %w; nothing was imported", im.ie.File, s.explain(err))
	}
	return im.res, nil
}

// importFile reads f's header and returns the function that reads its rows
// into the import's batches, or nil when the file has no header row.
func importFile[T any](im *importer, f *csvFile, ru rules[T]) func() error {
	idx, absent, width, ok := header(f, ru.cols, im.ie)
	if !ok {
		return nil
	}
	return func() error {
		return readRows(im.ctx, f, ru, idx, absent, width, im.cd, im.s.today(), im.ie, im.opt.Progress, queue[T](im))
	}
}

// CheckFile reads a whole file of the given kind and checks it as Import
// does before it asks the database, without one: every value, every row's
// rules and repeats within the file. It returns the problems found (nil
// when there are none); what Import accepts, it accepts. key
// pseudonymises patient references and today is the date no record may
// pass. The importers' fuzz targets (store/importfuzz) run it in memory,
// thousands of files a second, and hold Import to it.
func CheckFile(kind Kind, name string, r io.Reader, key []byte, today time.Time) *ImportError {
	ie := &ImportError{File: name}
	f := newCSVFile(name, kind, r)
	cd := &codec{key: key}
	ctx := context.Background()
	check := func(ok bool, read func() error) {
		if ok {
			if err := read(); err != nil {
				ie.add(0, "file", err.Error())
			}
		}
	}
	switch kind {
	case Procedures:
		idx, absent, width, ok := header(f, procedureRules.cols, ie)
		check(ok, func() error { return readRows(ctx, f, procedureRules, idx, absent, width, cd, today, ie, nil, nil) })
	case Lesions:
		idx, absent, width, ok := header(f, lesionRules.cols, ie)
		check(ok, func() error { return readRows(ctx, f, lesionRules, idx, absent, width, cd, today, ie, nil, nil) })
	case Histology:
		idx, absent, width, ok := header(f, histologyRules.cols, ie)
		check(ok, func() error { return readRows(ctx, f, histologyRules, idx, absent, width, cd, today, ie, nil, nil) })
	}
	if !ie.any() {
		return nil
	}
	return ie
}

func csvReason(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return "not valid CSV: " + pe.Err.Error()
	}
	return err.Error()
}

func (im *importer) problems(line int, ps logbook.Problems) {
	for _, p := range ps {
		im.add(line, p.Field, p.Reason)
	}
}

// procedure checks one procedures.csv row against the logbook (as its
// batch found it) and stores it.
func (im *importer) procedure(line int, p *logbook.Procedure, clean bool) error {
	found := im.stored[p.ID]
	if found && !im.opt.Update {
		im.add(line, "procedure_id", p.ID+" is already in the logbook (import with --update to replace it)")
		im.res.clash(Procedures)
		im.refused[p.ID] = true
		return nil
	}
	if !clean {
		im.refused[p.ID] = true
		return nil // the import will be refused; keep checking rows
	}
	if im.cd.hashed && !im.keyChecked {
		if err := im.s.checkKey(im.ctx, im.tx); err != nil {
			return err
		}
		im.keyChecked = true
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
		im.res.count(Procedures, true)
		return im.logChange("update", procedureName(p), recordJSON(procedureColumns, &old), recordJSON(procedureColumns, p))
	}
	if err := im.write(im.procW, storedArgs(procedureColumns, p)); err != nil {
		return err
	}
	im.wrote[p.ID] = true
	im.res.count(Procedures, false)
	return im.logChange("insert", procedureName(p), nil, recordJSON(procedureColumns, p))
}

// lesion checks one lesions.csv row against the logbook (as its batch found
// it, and the procedures this import wrote) and stores it.
func (im *importer) lesion(line int, l *logbook.Lesion, clean bool) error {
	if im.refused[l.ProcedureID] {
		return nil // its procedure, earlier in this import, was refused: said there
	}
	if !im.stored[l.ProcedureID] && !im.wrote[l.ProcedureID] {
		im.add(line, "procedure_id", l.ProcedureID+" is not in the logbook (import its procedure first)")
		return nil
	}
	have := im.storedLesions[lesionKey(l.ProcedureID, l.LesionNo)]
	if have && !im.opt.Update {
		im.add(line, "lesion_no", fmt.Sprintf("procedure %s already has lesion %d (import with --update to replace it)", l.ProcedureID, l.LesionNo))
		im.res.clash(Lesions)
		return nil
	}
	if !clean {
		return nil
	}
	key := lesionKey(l.ProcedureID, l.LesionNo)
	if have {
		// The lesion replaced was stored before this import (a repeat
		// within it is refused), so that it is read and deleted here while
		// the batch's new rows wait in the bulk writers — unless a result
		// earlier in the batch changed it: that is written first.
		if im.resulted[key] {
			if err := im.flush(); err != nil {
				return err
			}
		}
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
		if err := im.write(im.lesionW, storedArgs(lesionStoredColumns, l)); err != nil {
			return err
		}
		im.wroteLesions[key] = true
		im.res.count(Lesions, true)
		return im.logChange("update", lesionName(l), recordJSON(lesionStoredColumns, &old), recordJSON(lesionStoredColumns, l))
	}
	if err := im.write(im.lesionW, storedArgs(lesionStoredColumns, l)); err != nil {
		return err
	}
	im.wroteLesions[key] = true
	im.res.count(Lesions, false)
	return im.logChange("insert", lesionName(l), nil, recordJSON(lesionStoredColumns, l))
}

// histology checks one histology.csv row against the lesion it is for, as
// the rows before it left it (resultLesion), with the rules of a result
// recorded on its own (judgeHistology), and applies it. A row with problems
// of its own is checked only for its lesion, so that no problem is
// reported twice.
func (im *importer) histology(line int, h *logbook.HistologyResult, clean bool) error {
	key := lesionKey(h.ProcedureID, h.LesionNo)
	old, ps, err := im.resultLesion(key, h)
	if err != nil || len(ps) > 0 || !clean {
		im.problems(line, ps)
		return err
	}
	updated, change, ps := im.s.judgeHistology(old, *h, im.opt.Update)
	if len(ps) > 0 {
		im.problems(line, ps)
		return nil
	}
	im.res.recorded(Histology)
	if !change {
		return nil
	}
	if err := im.write(im.resultW, resultValues(h)); err != nil {
		return err
	}
	im.lesions[key], im.resulted[key] = updated, true
	return logResult(im.logChange, h, &old, &updated)
}

// resultLesion returns the lesion a result is for as the rows before it in
// the import left it, or the problem of a result for a lesion the logbook
// lacks. A lesion a row of this batch stored is read from the logbook once
// the batch's writes so far are flushed; any other is as the batch's check
// read it (prefetch) or a result earlier in the batch left it.
func (im *importer) resultLesion(key string, h *logbook.HistologyResult) (logbook.Lesion, logbook.Problems, error) {
	if im.wroteLesions[key] {
		if err := im.flush(); err != nil {
			return logbook.Lesion{}, nil, err
		}
		return findLesion(im.ctx, im.tx, h.ProcedureID, h.LesionNo)
	}
	if l, ok := im.lesions[key]; ok {
		return l, nil, nil
	}
	return logbook.Lesion{}, noLesion(h.ProcedureID, h.LesionNo, im.stored[h.ProcedureID] || im.wrote[h.ProcedureID]), nil
}
