package recipe

import (
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"polypledger/sheet"
)

// Origin is where one kind's records of a mapping come from: the source
// file and, for each of our columns, the source header it was read from.
type Origin struct {
	// File is the source's label: its name, and its sheet in brackets
	// when the workbook has several ("audit.xlsx[2025]").
	File string
	Kind Kind
	// Headers holds, for each column of Kind in our order, the source
	// header its value was read from; "" where the value was not read from
	// the source (an unmapped column, or a lesion number counted by the
	// mapping).
	Headers []string
}

// Record is one of our records mapped from a source row, in our own CSV
// dialect: Values holds one cell for each column of Kind in the order of
// logbook.ColumnNames(Kind), with our codes, ISO 8601 dates, yes/no, whole seconds and
// "" for not recorded. Line is the source row it came from (a CSV file's
// line, a workbook's own row number).
type Record struct {
	Kind   Kind
	Line   int
	Values []string
	Origin *Origin
}

// Value returns the record's value for one of our columns ("" if the kind
// has no such column).
func (r Record) Value(column string) string {
	if i := fieldIndex(r.Kind, column); i >= 0 {
		return r.Values[i]
	}
	return ""
}

// Labels returns, for each of our columns of the kind in order, the
// column as messages name it: the source header and the field it feeds
// ("Date of test (performed_on)"), the header alone when it is the field's
// name, the field alone when the value is not read from the source.
func (o *Origin) Labels() []string {
	fs := Fields(o.Kind)
	out := make([]string, len(fs))
	for i, f := range fs {
		out[i] = columnLabel(o.Headers[i], f.Name)
	}
	return out
}

// Missing returns, for each of our columns of the kind in order, whether
// the mapping never gives it a value: the recipe maps no source column to
// it (a lesion's number, which the mapping counts when no column gives it,
// is never missing).
func (o *Origin) Missing() []bool {
	out := make([]bool, len(o.Headers))
	for i, h := range o.Headers {
		out[i] = h == "" && !(o.Kind == Lesions && i == lesionNoAt)
	}
	return out
}

// Header returns the source header a column's value was read from ("" if
// none).
func (r Record) Header(column string) string {
	if i := fieldIndex(r.Kind, column); i >= 0 && r.Origin != nil {
		return r.Origin.Headers[i]
	}
	return ""
}

// Problem returns a problem with one of the record's columns, naming the
// source file, the source line and the source column, so that a check made
// later (the store's validation) points the user at the source, not at our
// dialect.
func (r Record) Problem(column, reason string) Problem {
	file := ""
	if r.Origin != nil {
		file = r.Origin.File
	}
	return Problem{File: file, Line: r.Line, Column: columnLabel(r.Header(column), column), Reason: reason}
}

// columnLabel names a source column and the field it feeds: "Date of test
// (performed_on)"; the header alone when it is the field's name; the field
// alone when the value was not read from the source.
func columnLabel(header, field string) string {
	switch {
	case header == "":
		return field
	case Fold(header) == Fold(field):
		return header
	}
	return header + " (" + field + ")"
}

// Problem is one thing wrong in a source file: file, line, column, reason.
// It never holds a patient reference.
type Problem struct {
	File   string
	Line   int // 0 when not on one line
	Column string
	Reason string
}

// String returns "FILE:LINE: column: reason".
func (p Problem) String() string {
	var b strings.Builder
	b.WriteString(p.File)
	if p.Line > 0 {
		b.WriteString(":" + strconv.Itoa(p.Line))
	}
	b.WriteString(": ")
	if p.Column != "" {
		b.WriteString(p.Column + ": ")
	}
	b.WriteString(p.Reason)
	return b.String()
}

// MaxProblems caps the problems a Result lists; the rest are counted.
const MaxProblems = 1000

// Result says what a mapping read and found.
type Result struct {
	File string
	// Rows counts the source's data rows read.
	Rows int
	// Records counts the records mapped without a problem, by kind.
	Records map[Kind]int
	// Problems lists the first MaxProblems problems in the order found; a
	// value the recipe does not list is reported once, at its first line,
	// with the number of other rows that hold it.
	Problems []Problem
	// More counts the problems beyond those listed.
	More int
	// Unused lists, once, the source columns the recipe does not mention
	// (a warning, not a problem).
	Unused []string
	// Unlisted holds, for each of our fields, the source's values that the
	// recipe does not map (as the source writes them, in the order first
	// seen, at most MaxUnlisted a field): what a person adds to the recipe,
	// under [values.FIELD] or, for a yes/no field, [yes_no].
	Unlisted map[string][]string
}

// MaxUnlisted caps the unlisted values a Result keeps for one field.
const MaxUnlisted = 200

// Err returns nil when the mapping found no problem, else a *MapError.
func (res *Result) Err() error {
	if len(res.Problems) == 0 {
		return nil
	}
	return &MapError{Result: res}
}

// MapError is a mapping that found problems.
type MapError struct{ Result *Result }

func (e *MapError) Error() string {
	var b strings.Builder
	for _, p := range e.Result.Problems {
		b.WriteString(p.String())
		b.WriteByte('\n')
	}
	total := len(e.Result.Problems) + e.Result.More
	if e.Result.More > 0 {
		fmt.Fprintf(&b, "%s: … and %d more problems not listed\n", e.Result.File, e.Result.More)
	}
	fmt.Fprintf(&b, "%s: %d problems in %d rows", e.Result.File, total, e.Result.Rows)
	return b.String()
}

// plan maps one kind's record out of a source row: for wide files, the
// procedure and each lesion slot have a plan of their own.
type plan struct {
	kind   Kind
	fields []Field
	cols   []int // source column of each field, -1 when unmapped
	origin *Origin
	slot   int // a wide file's lesion slot (its default lesion number), else 0
}

// procedureState is what a combined mapping remembers of a procedure.
type procedureState struct {
	line    int
	values  []string
	ok      bool
	lesions int // lesions numbered so far
}

type mapper struct {
	r      *Recipe
	t      *sheet.Table
	res    *Result
	emit   func(Record) error
	plans  []*plan
	procs  map[string]*procedureState
	groups map[string]int // unlisted value → index of its problem
	counts map[int]int    // problem index → further rows with the value
	// row is the preview row being filled, nil when the row is not
	// previewed.
	row *PreviewRow
}

// Map reads every row of the table and hands each record mapped without a
// problem to emit, in the order a store needs them: a procedure before its
// lesions. It collects every problem of the file in the Result (see
// Result.Err); a caller that stores all-or-nothing stores nothing when there
// is one. The error returned is emit's, or a failure to read; problems with
// the file's content are in the Result.
//
// In a combined file a procedure is handed over once, at its first row; its
// columns on later rows must agree with the first. Lesions without a
// lesion number column are numbered 1, 2, 3 … per procedure in the file's
// order; in a wide file a lesion's number is its slot's.
func (r *Recipe) Map(t *sheet.Table, emit func(Record) error) (*Result, error) {
	return r.mapRows(t, emit, 0, nil)
}

// PreviewRow is one source row as a mapping reads it: the records it gives
// and every problem found on it.
type PreviewRow struct {
	Line     int
	Records  []Record
	Problems []Problem
}

// Preview maps the whole table as Map does, handing nothing over, and keeps
// its first rows (up to rows) for a person to look at before importing:
// each with its records and all its problems (a value the recipe does not
// list included, on every row that holds it). The Result covers the whole
// file, so that Result.Unlisted lists every value still to map.
func (r *Recipe) Preview(t *sheet.Table, rows int) ([]PreviewRow, *Result, error) {
	var preview []PreviewRow
	res, err := r.mapRows(t, nil, rows, &preview)
	return preview, res, err
}

// mapRows maps the table, handing records to emit when it is set, and
// keeps the first keep rows in preview.
func (r *Recipe) mapRows(t *sheet.Table, emit func(Record) error, keep int, preview *[]PreviewRow) (*Result, error) {
	m := &mapper{r: r, t: t, emit: emit, res: &Result{File: t.Label(), Records: map[Kind]int{}, Unlisted: map[string][]string{}},
		procs: map[string]*procedureState{}, groups: map[string]int{}, counts: map[int]int{}}
	if !m.resolve() {
		return m.res, nil
	}
	for {
		row, err := t.Next()
		if err == io.EOF {
			break
		}
		m.row = nil
		if preview != nil && len(*preview) < keep {
			*preview = append(*preview, PreviewRow{Line: row.Line})
			m.row = &(*preview)[len(*preview)-1]
		}
		var se *sheet.Error
		if errors.As(err, &se) {
			m.res.Rows++
			p := Problem{File: se.File, Line: se.Line, Column: se.Column, Reason: se.Reason}
			m.add(p)
			if m.row != nil {
				m.row.Line = se.Line
				m.row.Problems = append(m.row.Problems, p)
			}
			if se.RowOnly {
				continue
			}
			break
		}
		if err != nil {
			return m.res, err
		}
		m.res.Rows++
		if err := m.mapRow(row); err != nil {
			return m.res, err
		}
	}
	for i, n := range m.counts {
		if i >= 0 && i < len(m.res.Problems) && n > 0 {
			m.res.Problems[i].Reason += fmt.Sprintf(" (also on %d more %s)", n, plural(n, "row", "rows"))
		}
	}
	return m.res, nil
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func (m *mapper) add(p Problem) int {
	if len(m.res.Problems) >= MaxProblems {
		m.res.More++
		return -1
	}
	m.res.Problems = append(m.res.Problems, p)
	return len(m.res.Problems) - 1
}

// resolve finds each mapped header in the file and lists the unused
// columns; a header problem stops the mapping before any row is read.
func (m *mapper) resolve() bool {
	head := m.t.Header()
	where := map[string][]int{}
	for i, h := range head {
		where[Fold(h)] = append(where[Fold(h)], i)
	}
	used := make([]bool, len(head))
	ok := true
	find := func(field, header string) int {
		idx := where[Fold(header)]
		switch len(idx) {
		case 0:
			m.add(Problem{File: m.res.File, Line: m.t.HeaderLine(), Column: header,
				Reason: fmt.Sprintf("the file has no such column (the recipe's [columns] %s = %q)", field, m.r.Columns[field])})
			ok = false
			return -1
		case 1:
			used[idx[0]] = true
			return idx[0]
		}
		m.add(Problem{File: m.res.File, Line: m.t.HeaderLine(), Column: header,
			Reason: fmt.Sprintf("appears %d times in the header, so the recipe's [columns] %s cannot tell which to read", len(idx), field)})
		ok = false
		return -1
	}
	newPlan := func(k Kind, slot int) *plan {
		fs := Fields(k)
		p := &plan{kind: k, fields: fs, cols: make([]int, len(fs)), slot: slot,
			origin: &Origin{File: m.res.File, Kind: k, Headers: make([]string, len(fs))}}
		for i, f := range fs {
			p.cols[i] = -1
			h, mapped := m.r.Columns[f.Name]
			if !mapped {
				continue
			}
			if slot > 0 {
				h = strings.ReplaceAll(h, SlotMark, strconv.Itoa(slot))
			}
			if c := find(f.Name, h); c >= 0 {
				p.cols[i], p.origin.Headers[i] = c, head[c]
			}
		}
		return p
	}
	switch m.r.Shape {
	case ShapeWide:
		m.plans = append(m.plans, newPlan(Procedures, 0))
		for n := 1; n <= m.r.Slots; n++ {
			m.plans = append(m.plans, newPlan(Lesions, n))
		}
	default:
		for _, k := range m.r.Shape.Kinds() {
			m.plans = append(m.plans, newPlan(k, 0))
		}
	}
	for i, h := range head {
		if !used[i] {
			if h == "" {
				h = fmt.Sprintf("column %d", i+1)
			}
			m.res.Unused = append(m.res.Unused, h)
		}
	}
	return ok
}

// fill maps one plan's fields out of a row; it reports false when a value
// could not be mapped (the problems are recorded).
func (m *mapper) fill(p *plan, row sheet.Row) ([]string, bool) {
	vals := make([]string, len(p.fields))
	ok := true
	for i, f := range p.fields {
		c := p.cols[i]
		if c < 0 {
			continue
		}
		v, prob := m.r.convert(f, strings.TrimSpace(row.Cells[c]))
		if prob != nil {
			m.problem(row.Line, p, i, strings.TrimSpace(row.Cells[c]), prob)
			ok = false
			continue
		}
		vals[i] = v
	}
	return vals, ok
}

// problem records a value problem; a value the recipe does not list is
// recorded once per field and value, and counted on its later rows (a
// previewed row keeps it each time).
func (m *mapper) problem(line int, p *plan, i int, value string, prob *problem) {
	f := p.fields[i]
	pr := Problem{File: m.res.File, Line: line, Column: columnLabel(p.origin.Headers[i], f.Name), Reason: prob.reason}
	if prob.section == "" {
		m.rowProblem(pr)
		return
	}
	if m.row != nil {
		m.row.Problems = append(m.row.Problems, pr)
	}
	key := f.Name + "\x00" + Fold(value)
	if at, seen := m.groups[key]; seen {
		m.counts[at]++
		return
	}
	if list := m.res.Unlisted[f.Name]; len(list) < MaxUnlisted {
		m.res.Unlisted[f.Name] = append(list, value)
	}
	m.groups[key] = m.add(pr)
}

// rowProblem records a problem of the row being mapped.
func (m *mapper) rowProblem(p Problem) {
	m.add(p)
	if m.row != nil {
		m.row.Problems = append(m.row.Problems, p)
	}
}

func (m *mapper) send(p *plan, line int, vals []string) error {
	m.res.Records[p.kind]++
	rec := Record{Kind: p.kind, Line: line, Values: vals, Origin: p.origin}
	if m.row != nil {
		m.row.Records = append(m.row.Records, rec)
	}
	if m.emit == nil {
		return nil
	}
	return m.emit(rec)
}

var (
	procIDAt   = fieldIndex(Procedures, "procedure_id")
	lesionIDAt = fieldIndex(Lesions, "procedure_id")
	lesionNoAt = fieldIndex(Lesions, "lesion_no")
)

func (m *mapper) mapRow(row sheet.Row) error {
	switch m.r.Shape {
	case ShapeCombined:
		return m.combined(row)
	case ShapeWide:
		return m.wide(row)
	}
	p := m.plans[0]
	vals, ok := m.fill(p, row)
	if !ok {
		return nil
	}
	if p.kind == Lesions && p.cols[lesionNoAt] < 0 {
		st := m.state(vals[lesionIDAt], row.Line)
		st.lesions++
		vals[lesionNoAt] = strconv.Itoa(st.lesions)
	}
	return m.send(p, row.Line, vals)
}

func (m *mapper) state(id string, line int) *procedureState {
	st := m.procs[id]
	if st == nil {
		st = &procedureState{line: line}
		m.procs[id] = st
	}
	return st
}

// combined maps a row holding a procedure's columns and, unless they are all
// empty, one lesion's.
func (m *mapper) combined(row sheet.Row) error {
	pp, lp := m.plans[0], m.plans[1]
	pv, pok := m.fill(pp, row)
	id := pv[procIDAt]
	if pok && id == "" {
		m.rowProblem(Problem{File: m.res.File, Line: row.Line, Column: columnLabel(pp.origin.Headers[procIDAt], "procedure_id"),
			Reason: "is empty, so the row cannot be joined to its procedure"})
		return nil
	}
	var st *procedureState
	if id != "" {
		st = m.procs[id]
		if st == nil {
			st = &procedureState{line: row.Line, values: pv, ok: pok}
			m.procs[id] = st
			if pok {
				if err := m.send(pp, row.Line, pv); err != nil {
					return err
				}
			}
		} else if pok && st.ok {
			m.agree(pp, row.Line, st, pv)
		}
	}
	lv, lok := m.fill(lp, row)
	if lok && !hasLesion(lv) {
		return nil
	}
	if !lok || !pok || st == nil || !st.ok {
		return nil // the procedure's problem is reported; its lesions wait for it
	}
	lv[lesionIDAt] = id
	if lp.cols[lesionNoAt] < 0 {
		st.lesions++
		lv[lesionNoAt] = strconv.Itoa(st.lesions)
	}
	return m.send(lp, row.Line, lv)
}

// agree checks a repeated procedure's columns against its first row.
func (m *mapper) agree(p *plan, line int, st *procedureState, vals []string) {
	for i, f := range p.fields {
		if vals[i] == st.values[i] {
			continue
		}
		reason := fmt.Sprintf("differs from line %d of the same procedure", st.line)
		if f.Type != Patient {
			reason = fmt.Sprintf("%s here but %s on line %d of the same procedure (a procedure's columns must agree on all its rows)",
				shown(vals[i]), shown(st.values[i]), st.line)
		}
		m.rowProblem(Problem{File: m.res.File, Line: line, Column: columnLabel(p.origin.Headers[i], f.Name), Reason: reason})
	}
}

func shown(v string) string {
	if v == "" {
		return "empty"
	}
	return quoteShort(v)
}

// hasLesion reports whether a lesion plan found anything beyond the
// procedure id and the lesion number.
func hasLesion(vals []string) bool {
	for i, v := range vals {
		if i != lesionIDAt && i != lesionNoAt && v != "" {
			return true
		}
	}
	return false
}

// wide maps a row holding a procedure and its lesions in numbered slots.
func (m *mapper) wide(row sheet.Row) error {
	pp := m.plans[0]
	pv, pok := m.fill(pp, row)
	if pok {
		if err := m.send(pp, row.Line, pv); err != nil {
			return err
		}
	}
	for _, lp := range m.plans[1:] {
		lv, lok := m.fill(lp, row)
		if !lok || !hasLesion(lv) {
			continue
		}
		lv[lesionIDAt] = pv[procIDAt]
		if lp.cols[lesionNoAt] < 0 {
			lv[lesionNoAt] = strconv.Itoa(lp.slot)
		}
		if pok {
			if err := m.send(lp, row.Line, lv); err != nil {
				return err
			}
		}
	}
	return nil
}
