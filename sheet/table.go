// Package sheet reads a tabular file — CSV or an .xlsx workbook — as a
// header and rows of text cells, and writes .xlsx workbooks for export.
//
// Reading is streamed: a sheet of a hundred thousand rows is read row by row
// in bounded memory, and every size is capped (bytes per cell, cells per row,
// rows; see Limits), so that a damaged or hostile file gets a clear error
// instead of exhausting the machine. Errors name the file, the line (the
// sheet's own row number for a workbook) and the column, and never echo a
// cell's value: a value may be a patient reference, or megabytes long.
//
// Workbook cells are typed: a cell formatted as a date comes back as an ISO
// 8601 date ("2026-03-05", or "2026-03-05 14:30" when the format shows a
// time of day), whatever the workbook's own date format, so that a date is
// never read in the wrong day/month order; a number comes back as the number
// it holds, to Excel's own 15 significant digits ("6", "8.5", never
// "6.000000000000001" nor a display rounding such as "8.50" or "1.2E+11");
// a cell formatted as a time of day only (a duration such as "8:30") comes
// back as the workbook shows it; TRUE and FALSE come back as those words.
//
// The package knows nothing of polypledger's records: the recipe package
// maps rows onto them, and the store writes them.
package sheet

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// Format is the kind of a tabular file.
type Format int

// Formats, chosen by the file's extension (FormatOf).
const (
	CSV  Format = iota // RFC 4180, UTF-8, an optional byte-order mark
	XLSX               // an Office Open XML workbook
)

// FormatOf returns the format of a file from its extension: ".xlsx" (any
// case) is a workbook, anything else is read as CSV.
func FormatOf(name string) Format {
	if strings.EqualFold(filepath.Ext(name), ".xlsx") {
		return XLSX
	}
	return CSV
}

// Limits caps what a reader accepts. A zero field takes the default.
type Limits struct {
	// FieldBytes caps the bytes of one cell (default 64 KiB).
	FieldBytes int
	// Fields caps the cells of one row (default 1,024).
	Fields int
	// Rows caps the data rows after the header (default 1,048,576, a
	// workbook sheet's own limit).
	Rows int
	// RowBytes caps the bytes of one CSV record, read before it is split
	// into cells (default 4 MiB).
	RowBytes int
	// WorkbookBytes caps the uncompressed size of a workbook (default 2 GiB).
	WorkbookBytes int64
}

// DefaultLimits are the limits used for zero fields of Limits.
var DefaultLimits = Limits{
	FieldBytes:    64 << 10,
	Fields:        1024,
	Rows:          1 << 20,
	RowBytes:      4 << 20,
	WorkbookBytes: 2 << 30,
}

func (l Limits) withDefaults() Limits {
	d := DefaultLimits
	if l.FieldBytes > 0 {
		d.FieldBytes = l.FieldBytes
	}
	if l.Fields > 0 {
		d.Fields = l.Fields
	}
	if l.Rows > 0 {
		d.Rows = l.Rows
	}
	if l.RowBytes > 0 {
		d.RowBytes = l.RowBytes
	}
	if l.WorkbookBytes > 0 {
		d.WorkbookBytes = l.WorkbookBytes
	}
	return d
}

// Options choose what to read.
type Options struct {
	// Sheet names the workbook sheet to read; empty reads the first.
	// Ignored for CSV.
	Sheet string
	// HeaderRow is the row holding the column names (1 when zero); rows
	// above it (titles, notes) are skipped.
	HeaderRow int
	// NoHeader reads every row as data, from the first, each with the
	// cells it has: for looking at a file before its header row is known.
	NoHeader bool
	// Limits caps sizes; zero fields take DefaultLimits.
	Limits Limits
}

// Row is one data row: its line (a CSV file's line where the record starts,
// a workbook's own row number) and its cells, exactly as many as the header
// has columns (missing trailing cells are empty).
type Row struct {
	Line  int
	Cells []string
}

// Error is a fault found in the file, at a line and, where it is known, a
// column. It never holds a cell's value.
type Error struct {
	File   string // the file's label (Table.Label)
	Line   int    // 0 when the fault is not on one line
	Column string // a header name or "column N"; may be empty
	Reason string
	// RowOnly marks a fault confined to one row: Next skipped the row, and
	// reading may go on.
	RowOnly bool
}

// Error returns "FILE:LINE: column: reason" (parts that are unknown are left
// out).
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Column != "" {
		b.WriteString(e.Column)
		b.WriteString(": ")
	}
	b.WriteString(e.Reason)
	return b.String()
}

// Table is an open tabular file read row by row. It is not safe for
// concurrent use.
type Table struct {
	name       string
	sheet      string
	sheets     []string
	header     []string
	headerLine int
	limits     Limits
	rows       int
	next       func() (line int, cells []string, err error)
	close      func() error
}

// OpenFile opens the file at path, choosing the format by its extension, and
// reads up to its header row. The caller closes the table.
func OpenFile(path string, opt Options) (*Table, error) {
	name := filepath.Base(path)
	if FormatOf(path) == XLSX {
		return openXLSXFile(path, name, opt)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	t, err := openCSV(name, f, opt)
	if err != nil {
		f.Close()
		return nil, err
	}
	t.close = f.Close
	return t, nil
}

// Open reads a tabular file from r; name (a file name) chooses the format and
// labels messages. A workbook is read into memory first (its format needs
// random access); a CSV file is streamed. The caller closes the table (which
// does not close r).
func Open(name string, r io.Reader, opt Options) (*Table, error) {
	if FormatOf(name) == XLSX {
		return openXLSXReader(name, r, opt)
	}
	return openCSV(name, r, opt)
}

// Name returns the file name given to Open (OpenFile: the path's last
// element).
func (t *Table) Name() string { return t.name }

// Sheet returns the name of the workbook sheet being read ("" for CSV).
func (t *Table) Sheet() string { return t.sheet }

// Sheets returns the workbook's sheet names in order (nil for CSV).
func (t *Table) Sheets() []string { return t.sheets }

// Label returns the file as messages name it: the file name, followed by the
// sheet in brackets when the workbook has several sheets ("audit.xlsx[2025]").
func (t *Table) Label() string {
	if len(t.sheets) > 1 {
		return t.name + "[" + t.sheet + "]"
	}
	return t.name
}

// Header returns the column names, trimmed of surrounding spaces (and of a
// CSV byte-order mark); nil when the table was opened with NoHeader.
func (t *Table) Header() []string { return t.header }

// HeaderLine returns the line of the header row.
func (t *Table) HeaderLine() int { return t.headerLine }

// Next returns the next data row, skipping rows whose cells are all empty.
// At the end it returns io.EOF. An *Error with RowOnly set is a fault in
// one row, which is skipped: the caller may note it and call Next again. Any
// other error ends the reading.
func (t *Table) Next() (Row, error) {
	for {
		line, cells, err := t.next()
		if err != nil {
			return Row{}, err
		}
		if blank(cells) {
			continue
		}
		t.rows++
		if t.rows > t.limits.Rows {
			return Row{}, &Error{File: t.Label(), Line: line, Reason: fmt.Sprintf("more than %d data rows; split the file", t.limits.Rows)}
		}
		if err := t.check(line, cells); err != nil {
			return Row{Line: line}, err
		}
		return Row{Line: line, Cells: t.fit(cells)}, nil
	}
}

// Close releases the file and any temporary files.
func (t *Table) Close() error {
	if t.close == nil {
		return nil
	}
	c := t.close
	t.close = nil
	return c()
}

// check applies the per-row limits and the header's width.
func (t *Table) check(line int, cells []string) error {
	if len(cells) > t.limits.Fields {
		return &Error{File: t.Label(), Line: line, Reason: fmt.Sprintf("has %d cells, more than the limit of %d", len(cells), t.limits.Fields), RowOnly: true}
	}
	for i, c := range cells {
		if len(c) > t.limits.FieldBytes {
			return &Error{File: t.Label(), Line: line, Column: t.columnName(i), Reason: fmt.Sprintf("a value longer than %s", byteSize(t.limits.FieldBytes)), RowOnly: true}
		}
		if t.header != nil && i >= len(t.header) && strings.TrimSpace(c) != "" {
			return &Error{File: t.Label(), Line: line, Column: t.columnName(i), Reason: fmt.Sprintf("a value beyond the header's %d columns", len(t.header)), RowOnly: true}
		}
	}
	return nil
}

// fit returns cells padded or cut to the header's width (check has made sure
// that only empty cells are cut).
func (t *Table) fit(cells []string) []string {
	n := len(t.header)
	if len(cells) == n || t.header == nil {
		return cells
	}
	out := make([]string, n)
	copy(out, cells)
	return out
}

// columnName names column i (0-based) by its header, or "column N".
func (t *Table) columnName(i int) string {
	if i < len(t.header) && t.header[i] != "" {
		return t.header[i]
	}
	return fmt.Sprintf("column %d", i+1)
}

// setHeader takes the header row's cells after checking them against the
// limits.
func (t *Table) setHeader(line int, cells []string) error {
	if len(cells) > t.limits.Fields {
		return &Error{File: t.Label(), Line: line, Reason: fmt.Sprintf("the header has %d columns, more than the limit of %d", len(cells), t.limits.Fields)}
	}
	h := make([]string, len(cells))
	for i, c := range cells {
		if len(c) > t.limits.FieldBytes {
			return &Error{File: t.Label(), Line: line, Column: fmt.Sprintf("column %d", i+1), Reason: "a column name longer than " + byteSize(t.limits.FieldBytes)}
		}
		if i == 0 {
			c = strings.TrimPrefix(c, "\ufeff")
		}
		h[i] = strings.TrimSpace(c)
	}
	for len(h) > 0 && h[len(h)-1] == "" {
		h = h[:len(h)-1] // trailing unnamed columns carry nothing
	}
	if len(h) == 0 {
		return &Error{File: t.Label(), Line: line, Reason: "the header row is empty"}
	}
	t.header, t.headerLine = h, line
	return nil
}

// readHeader skips the rows above the header row and reads it.
func (t *Table) readHeader(opt Options) error {
	if opt.NoHeader {
		return nil
	}
	headerRow := opt.HeaderRow
	if headerRow <= 0 {
		headerRow = 1
	}
	for {
		line, cells, err := t.next()
		if errors.Is(err, io.EOF) {
			return &Error{File: t.Label(), Line: headerRow, Reason: "the file ends before its header row"}
		}
		if err != nil {
			return err
		}
		if line < headerRow {
			continue
		}
		if line > headerRow {
			// The header row itself was missing (an empty workbook row).
			return &Error{File: t.Label(), Line: headerRow, Reason: "the header row is empty"}
		}
		return t.setHeader(line, cells)
	}
}

func blank(cells []string) bool {
	for _, c := range cells {
		if strings.TrimSpace(c) != "" {
			return false
		}
	}
	return true
}

// byteSize writes a limit in plain units.
func byteSize(n int) string {
	switch {
	case n >= 1<<20 && n%(1<<20) == 0:
		return fmt.Sprintf("%d MiB", n>>20)
	case n >= 1<<10 && n%(1<<10) == 0:
		return fmt.Sprintf("%d KiB", n>>10)
	}
	return fmt.Sprintf("%d bytes", n)
}
