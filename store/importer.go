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
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

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
		fmt.Fprintf(&b, "%s: … and %d more %s not listed\n", e.File, e.More, plural(e.More, "problem", "problems"))
	}
	n := len(e.Errors) + e.More
	fmt.Fprintf(&b, "%s: nothing was imported (%d %s in %d %s)", e.File, n, plural(n, "problem", "problems"), e.Rows, plural(e.Rows, "row", "rows"))
	return b.String()
}

// plural picks the word for a count.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// add records a problem. Problems are listed in the order of their lines
// (those of one line in the order found), although an import finds the
// problems a row has with the logbook only when its batch is checked, after
// the rows that follow it in the batch; the first MaxReportedErrors by line
// are kept.
func (e *ImportError) add(line int, column, reason string) {
	re := RowError{File: e.File, Line: line, Column: column, Reason: reason}
	n := len(e.Errors)
	if n == MaxReportedErrors && line >= e.Errors[n-1].Line {
		e.More++
		return
	}
	i := n
	for i > 0 && e.Errors[i-1].Line > line {
		i--
	}
	e.Errors = append(e.Errors, RowError{})
	copy(e.Errors[i+1:], e.Errors[i:])
	e.Errors[i] = re
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
	expected := "(expected: " + strings.Join(names(cols), ", ") + ")"
	idx = make([]int, len(rec))
	known := 0
	for i, name := range rec {
		if i == 0 {
			name = strings.TrimPrefix(name, "\ufeff")
		}
		idx[i] = columnIndex(cols, strings.TrimSpace(name))
		if idx[i] >= 0 {
			known++
		}
	}
	if known == 0 {
		ie.add(1, "header", fmt.Sprintf("the first line is not a header row: none of its %d values names a column of a %s file (they are not shown, as they may be patient data); the first line must name the columns %s", len(rec), f.kind, expected))
		return nil, nil, 0, false
	}
	seen := make([]bool, len(cols))
	for i, name := range rec {
		if i == 0 {
			name = strings.TrimPrefix(name, "\ufeff")
		}
		name = strings.TrimSpace(name)
		j := idx[i]
		switch {
		case name == "":
			ie.add(1, fmt.Sprintf("column %d", i+1), "has no name in the header")
		case j < 0 && shownAsIs(name):
			ie.add(1, name, "is not a column of this kind of file "+expected)
		case j < 0:
			ie.add(1, fmt.Sprintf("column %d", i+1), logbook.QuoteValue(name)+" is not a column of this kind of file "+expected)
		case seen[j]:
			ie.add(1, name, "appears twice in the header")
			idx[i] = -1 // the first is read
		default:
			seen[j] = true
		}
	}
	absent = make([]bool, len(cols))
	for j, c := range cols {
		if !seen[j] {
			absent[j] = true
			if !c.optional {
				ie.add(1, c.name, "required column is missing from the header")
			}
		}
	}
	return idx, absent, len(rec), true
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

var procedureRules = rules[P]{
	cols: procedureColumns, fresh: logbook.NewProcedure, validate: logbook.ValidateProcedure,
	keyFields: []string{"procedure_id"},
	key: func(p *P) (string, string) {
		return p.ID, p.ID + " appears more than once in this file"
	},
}

var lesionRules = rules[L]{
	cols: lesionColumns, fresh: logbook.NewLesion, validate: logbook.ValidateLesion,
	keyFields: []string{"lesion_no", "procedure_id"},
	key: func(l *L) (string, string) {
		return fmt.Sprintf("%s#%d", l.ProcedureID, l.LesionNo),
			fmt.Sprintf("lesion %d of procedure %s appears more than once in this file", l.LesionNo, l.ProcedureID)
	},
}

var histologyRules = rules[H]{
	cols:  histologyColumns,
	fresh: func() H { return H{LesionNo: logbook.NotRecorded} }, validate: logbook.ValidateHistologyResult,
	keyFields: []string{"lesion_no", "procedure_id"},
	key: func(h *H) (string, string) {
		return fmt.Sprintf("%s#%d", h.ProcedureID, h.LesionNo),
			fmt.Sprintf("a result for lesion %d of procedure %s appears more than once in this file", h.LesionNo, h.ProcedureID)
	},
}

// rowSink takes each row whose identity could be read (and that does not
// repeat an earlier one): clean is set when the row has no problem of its
// own. The import's sink checks the row against the database and stores
// it while the file has no problem at all.
type rowSink[T any] func(line int, r *T, clean bool) error

// readRows reads every data row of f and checks it: each value (its size,
// UTF-8, and the column's parser, after undoing the apostrophe export puts
// before a formula-like value), the record's validation (leaving out
// fields already refused and columns the header lacks), and repeats within
// the file. Every problem goes to ie; nothing stops at the first one, so a
// file's problems are all listed in one run. progress, when set, is called
// every ProgressEvery rows.
func readRows[T any](ctx context.Context, f *csvFile, ru rules[T], idx []int, absent []bool, width int,
	cd *codec, today time.Time, ie *ImportError, progress func(rows int, bytes int64), sink rowSink[T]) error {
	seen := map[string]bool{}
	bad := make([]bool, len(ru.cols))
	keyCols := make([]int, len(ru.keyFields))
	for i, k := range ru.keyFields {
		keyCols[i] = columnIndex(ru.cols, k)
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
		r := ru.fresh()
		clear(bad)
		clean := true
		for i, v := range rec {
			j := idx[i]
			if j < 0 {
				continue
			}
			c := ru.cols[j]
			v = strings.TrimSpace(v)
			var reason string
			switch {
			case len(v) > MaxValueBytes:
				reason = fmt.Sprintf("is %d bytes long; no value may be longer than %d", len(v), MaxValueBytes)
			case !utf8.ValidString(v):
				reason = "is not valid UTF-8 text (save the file as UTF-8 CSV)"
			default:
				if err := c.set(&r, PlainCell(v), cd); err != nil {
					reason = err.Error()
				}
			}
			if reason != "" {
				ie.add(line, c.name, reason)
				bad[j], clean = true, false
			}
		}
		for _, p := range ru.validate(r, today) {
			if j := columnIndex(ru.cols, p.Field); j >= 0 && (bad[j] || absent[j]) {
				continue
			}
			ie.add(line, p.Field, p.Reason)
			if j := columnIndex(ru.cols, p.Field); j >= 0 {
				bad[j] = true
			}
			clean = false
		}
		usable := true
		for _, j := range keyCols {
			if bad[j] || absent[j] {
				usable = false
			}
		}
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
	// keyChecked is set once the unit key has been matched to the database.
	keyChecked bool
	// Rows are handled in batches of importBatch: what they need to know
	// of the logbook is read for the whole batch at once (procedures and
	// lesions already stored), and their new records and change-log
	// entries go through bulk writers (COPY on a server), flushed at the
	// end of each batch.
	procedures map[string]bool // of the batch's procedure ids, those stored
	lesions    map[string]bool // of the batch's lesions, those stored ("P1#2")
	writers    []bulkWriter
	procW      bulkWriter
	lesionW    bulkWriter
	logW       bulkWriter
}

// importBatch is how many rows are checked against the logbook, and
// written, at once.
const importBatch = 500

// startWriters opens the bulk writers inside the import's transaction.
func (im *importer) startWriters() error {
	for _, w := range []struct {
		to    *bulkWriter
		table string
		cols  []string
	}{
		{&im.procW, "procedures", columnNames(procedureColumns)},
		{&im.lesionW, "lesions", columnNames(lesionStoredColumns)},
		{&im.logW, "change_log", im.s.logColumns()},
	} {
		bw, err := im.s.be.bulk(im.ctx, im.tx, w.table, w.cols)
		if err != nil {
			return err
		}
		*w.to = bw
		im.writers = append(im.writers, bw)
	}
	return nil
}

// flushWriters writes what the bulk writers hold, procedures before the
// lesions that may refer to them.
func (im *importer) flushWriters() error {
	for _, w := range im.writers {
		if err := w.flush(im.ctx); err != nil {
			return err
		}
	}
	return nil
}

// logChange adds a change-log entry through the bulk writer, so that the
// log keeps the order of the file's rows.
func (im *importer) logChange(action, record string, old, new any) error {
	return im.logW.write(im.ctx, im.s.changeValues(action, record, old, new))
}

// batched returns a sink that collects rows and hands each full batch —
// and, through the returned flush, the last one — to prefetch and then,
// row by row, to sink, before writing what the batch stored.
func batched[T any](im *importer, prefetch func(rows []*T) error, sink rowSink[T]) (rowSink[T], func() error) {
	type item struct {
		line  int
		r     T
		clean bool
	}
	var items []item
	flush := func() error {
		if len(items) == 0 {
			return nil
		}
		rs := make([]*T, len(items))
		for i := range items {
			rs[i] = &items[i].r
		}
		if err := prefetch(rs); err != nil {
			return err
		}
		for i := range items {
			if err := sink(items[i].line, &items[i].r, items[i].clean); err != nil {
				return err
			}
		}
		items = items[:0]
		return im.flushWriters()
	}
	return func(line int, r *T, clean bool) error {
		items = append(items, item{line, *r, clean})
		if len(items) == importBatch {
			return flush()
		}
		return nil
	}, flush
}

// storedIDs returns which of ids are procedures in the logbook.
func (im *importer) storedIDs(ids []string) (map[string]bool, error) {
	out := make(map[string]bool, len(ids))
	if len(ids) == 0 {
		return out, nil
	}
	args := make([]any, len(ids))
	for i, id := range ids {
		args[i] = id
	}
	rows, err := im.tx.QueryContext(im.ctx, "SELECT id FROM procedures WHERE id IN ("+placeholders(len(ids))+")", args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			return nil, err
		}
		out[id] = true
	}
	return out, rows.Err()
}

// prefetchProcedures reads which of a batch's procedures are stored.
func (im *importer) prefetchProcedures(rows []*logbook.Procedure) error {
	var err error
	im.procedures, err = im.storedIDs(distinct(rows, func(p *logbook.Procedure) string { return p.ID }))
	return err
}

// prefetchLesions reads which of a batch's procedures, and which of their
// lesions, are stored.
func (im *importer) prefetchLesions(rows []*logbook.Lesion) error {
	ids := distinct(rows, func(l *logbook.Lesion) string { return l.ProcedureID })
	var err error
	if im.procedures, err = im.storedIDs(ids); err != nil {
		return err
	}
	im.lesions = map[string]bool{}
	if len(ids) == 0 {
		return nil
	}
	args := make([]any, len(ids))
	for i, id := range ids {
		args[i] = id
	}
	q, err := im.tx.QueryContext(im.ctx, "SELECT procedure_id, lesion_no FROM lesions WHERE procedure_id IN ("+placeholders(len(ids))+")", args...)
	if err != nil {
		return err
	}
	defer q.Close()
	for q.Next() {
		var id string
		var no int
		if err := q.Scan(&id, &no); err != nil {
			return err
		}
		im.lesions[lesionKey(id, no)] = true
	}
	return q.Err()
}

func lesionKey(procedureID string, no int) string { return fmt.Sprintf("%s#%d", procedureID, no) }

// distinct returns the different keys of rows, in order of first use.
func distinct[T any](rows []*T, key func(*T) string) []string {
	seen := make(map[string]bool, len(rows))
	var out []string
	for _, r := range rows {
		if k := key(r); !seen[k] {
			seen[k] = true
			out = append(out, k)
		}
	}
	return out
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

// writing reports whether a row that passed its checks is to be stored:
// only while the file has no problem (a refused import writes nothing).
func (im *importer) writing(clean bool) bool { return clean && !im.ie.any() }

// Import reads a CSV file of the given kind and stores all of its rows in
// one transaction, or none: on any bad row it returns an *ImportError listing
// FILE:LINE: column: reason for every problem of the file — each value, each
// row's rules, repeats within the file and rows that clash with or refer to
// what is stored — and the database is unchanged. name is the file name
// used in messages.
func (s *Store) Import(ctx context.Context, kind Kind, name string, r io.Reader, opt ImportOptions) (ImportResult, error) {
	if ok, why := s.Writable(); !ok {
		return ImportResult{}, fmt.Errorf("import %s: %s; nothing was imported", name, why)
	}
	ie := &ImportError{File: name}
	im := &importer{s: s, ctx: ctx, ie: ie, opt: opt, cd: &codec{key: s.key}, roster: map[string]bool{}, stmts: map[string]*sql.Stmt{}}
	f := newCSVFile(name, kind, r)
	var run func() error
	switch kind {
	case Procedures:
		run = importFile(im, f, procedureRules, im.prefetchProcedures, im.procedure)
	case Lesions:
		run = importFile(im, f, lesionRules, im.prefetchLesions, im.lesion)
	case Histology:
		run = importFile(im, f, histologyRules, func([]*H) error { return nil }, im.histology)
	default:
		return ImportResult{}, fmt.Errorf("kind %q is not procedures, lesions or histology", kind)
	}
	if run == nil {
		return ImportResult{}, ie // the first line is not a header: no row can be read
	}
	err := s.inTx(ctx, func(tx *txn) error {
		im.tx = tx
		defer func() {
			for _, st := range im.stmts {
				st.Close()
			}
			for _, w := range im.writers {
				w.close()
			}
		}()
		if err := im.startWriters(); err != nil {
			return err
		}
		if err := run(); err != nil {
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
	im.res.Rows = ie.Rows
	return im.res, nil
}

// importFile reads f's header and returns the function that reads its rows
// into the import in batches (see batched), or nil when the file has no
// header row.
func importFile[T any](im *importer, f *csvFile, ru rules[T], prefetch func([]*T) error, sink rowSink[T]) func() error {
	idx, absent, width, ok := header(f, ru.cols, im.ie)
	if !ok {
		return nil
	}
	return func() error {
		each, last := batched(im, prefetch, sink)
		if err := readRows(im.ctx, f, ru, idx, absent, width, im.cd, im.s.today(), im.ie, im.opt.Progress, each); err != nil {
			return err
		}
		return last()
	}
}

// checkFile reads a whole file of the given kind and checks it as Import
// does, without a database: every value, every row's rules and repeats
// within the file. It returns the problems found (nil when there are
// none). key pseudonymises patient references. The fuzz targets run it in
// memory, thousands of files a second.
func checkFile(kind Kind, name string, r io.Reader, key []byte, today time.Time) *ImportError {
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
		im.ie.add(line, p.Field, p.Reason)
	}
}

// procedure checks one procedures.csv row against the logbook and stores
// it.
func (im *importer) procedure(line int, p *logbook.Procedure, clean bool) error {
	found := im.procedures[p.ID]
	if found && !im.opt.Update {
		im.ie.add(line, "procedure_id", p.ID+" is already in the logbook (import with --update to replace it)")
		return nil
	}
	if !im.writing(clean) {
		return nil // the import will be refused; keep checking rows without writing
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
		im.res.Updated++
		return im.logChange("update", "procedure "+p.ID, recordJSON(procedureColumns, &old), recordJSON(procedureColumns, p))
	}
	if err := im.procW.write(im.ctx, storedArgs(procedureColumns, p)); err != nil {
		return err
	}
	im.res.Inserted++
	return im.logChange("insert", "procedure "+p.ID, nil, recordJSON(procedureColumns, p))
}

// lesion checks one lesions.csv row against the logbook and stores it.
func (im *importer) lesion(line int, l *logbook.Lesion, clean bool) error {
	if !im.procedures[l.ProcedureID] {
		im.ie.add(line, "procedure_id", l.ProcedureID+" is not in the logbook (import its procedure first)")
		return nil
	}
	have := im.lesions[lesionKey(l.ProcedureID, l.LesionNo)]
	if have && !im.opt.Update {
		im.ie.add(line, "lesion_no", fmt.Sprintf("procedure %s already has lesion %d (import with --update to replace it)", l.ProcedureID, l.LesionNo))
		return nil
	}
	if !im.writing(clean) {
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
		return im.logChange("update", "lesion "+lesionKey(l.ProcedureID, l.LesionNo), recordJSON(lesionStoredColumns, &old), recordJSON(lesionStoredColumns, l))
	}
	if err := im.lesionW.write(im.ctx, storedArgs(lesionStoredColumns, l)); err != nil {
		return err
	}
	im.res.Inserted++
	return im.logChange("insert", "lesion "+lesionKey(l.ProcedureID, l.LesionNo), nil, recordJSON(lesionStoredColumns, l))
}

// histology checks one histology.csv row against the lesion it is for and
// applies it. A row with problems of its own is checked only for its
// lesion, so that no problem is reported twice.
func (im *importer) histology(line int, h *logbook.HistologyResult, clean bool) error {
	if !clean {
		_, ps, err := findLesion(im.ctx, im.tx, h.ProcedureID, h.LesionNo)
		im.problems(line, ps)
		return err
	}
	if !im.writing(clean) {
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
