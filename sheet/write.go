package sheet

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"

	"github.com/xuri/excelize/v2"
)

// ColumnType says how the writer stores a column's cells.
type ColumnType int

// Column types.
const (
	// Text cells are stored as text, never as a formula.
	Text ColumnType = iota
	// Number cells holding a decimal number are stored as numbers; any
	// other cell of the column is stored as text.
	Number
	// Date cells holding an ISO 8601 date (YYYY-MM-DD) are stored as dates
	// shown as YYYY-MM-DD; any other cell of the column is stored as text.
	Date
)

// Writer writes an .xlsx workbook, one sheet after another, each with a
// bold header row frozen above typed cells. Rows are streamed: the workbook
// keeps only a small buffer in memory and spills the rest to a temporary
// file, so a sheet of a hundred thousand rows stays in bounded memory. The
// workbook is written to the underlying writer by Close.
//
// Formula safety: a text cell is always stored as text, which a spreadsheet
// never runs; a text cell that a spreadsheet would take for a formula if it
// were typed in (FormulaLike, the same rule the CSV export applies) is also
// given the text number format and the quote-prefix flag, so that editing
// it does not turn it into a formula either. Its value is unchanged, so
// reading the workbook back gives exactly what was written.
type Writer struct {
	w      io.Writer
	f      *excelize.File
	sw     *excelize.StreamWriter
	sheets int
	types  []ColumnType
	width  int
	row    int
	styles struct{ header, date, quoted int }
	err    error
}

// NewWriter returns a Writer that writes the workbook to w on Close.
func NewWriter(w io.Writer) (*Writer, error) {
	f := excelize.NewFile()
	wr := &Writer{w: w, f: f}
	var err error
	if wr.styles.header, err = f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}}); err != nil {
		f.Close()
		return nil, err
	}
	iso := "yyyy-mm-dd"
	if wr.styles.date, err = f.NewStyle(&excelize.Style{CustomNumFmt: &iso}); err != nil {
		f.Close()
		return nil, err
	}
	if wr.styles.quoted, err = f.NewStyle(&excelize.Style{NumFmt: 49}); err != nil { // 49 is "@", text
		f.Close()
		return nil, err
	}
	// excelize's Style has no quote-prefix field; set the flag on the cell
	// format it made.
	if f.Styles != nil && f.Styles.CellXfs != nil && wr.styles.quoted < len(f.Styles.CellXfs.Xf) {
		yes := true
		f.Styles.CellXfs.Xf[wr.styles.quoted].QuotePrefix = &yes
	}
	return wr, nil
}

// AddSheet ends the current sheet, if any, and starts a new one named name
// with the given header; types gives each column's type (missing ones are
// Text).
func (w *Writer) AddSheet(name string, header []string, types []ColumnType) error {
	if w.err != nil {
		return w.err
	}
	if err := w.flush(); err != nil {
		return w.fail(err)
	}
	if w.sheets == 0 {
		if err := w.f.SetSheetName(w.f.GetSheetName(0), name); err != nil {
			return w.fail(err)
		}
	} else if _, err := w.f.NewSheet(name); err != nil {
		return w.fail(err)
	}
	w.sheets++
	sw, err := w.f.NewStreamWriter(name)
	if err != nil {
		return w.fail(err)
	}
	w.sw, w.width, w.row = sw, len(header), 1
	w.types = make([]ColumnType, len(header))
	copy(w.types, types)
	for i, h := range header {
		width := float64(len(h)) + 2
		if w.types[i] == Date && width < 12 {
			width = 12
		}
		if width < 8 {
			width = 8
		}
		if err := sw.SetColWidth(i+1, i+1, width); err != nil {
			return w.fail(err)
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return w.fail(err)
	}
	cells := make([]any, len(header))
	for i, h := range header {
		cells[i] = excelize.Cell{StyleID: w.styles.header, Value: h}
	}
	return w.fail(sw.SetRow("A1", cells))
}

// WriteRow writes one row of the current sheet; cells are in the header's
// order, and an empty cell is left empty.
func (w *Writer) WriteRow(cells []string) error {
	if w.err != nil {
		return w.err
	}
	if w.sw == nil {
		return w.fail(errors.New("write row: no sheet started"))
	}
	if len(cells) > w.width {
		return w.fail(fmt.Errorf("write row: %d cells for %d columns", len(cells), w.width))
	}
	w.row++
	vals := make([]any, len(cells))
	for i, v := range cells {
		vals[i] = w.cell(w.types[i], v)
	}
	ref, err := excelize.CoordinatesToCellName(1, w.row)
	if err != nil {
		return w.fail(err)
	}
	return w.fail(w.sw.SetRow(ref, vals))
}

// Close ends the last sheet, writes the workbook and removes its temporary
// files.
func (w *Writer) Close() error {
	defer w.f.Close()
	if w.err != nil {
		return w.err
	}
	if w.sheets == 0 {
		return w.fail(errors.New("write workbook: no sheet"))
	}
	if err := w.flush(); err != nil {
		return w.fail(err)
	}
	_, err := w.f.WriteTo(w.w)
	return w.fail(err)
}

func (w *Writer) flush() error {
	if w.sw == nil {
		return nil
	}
	sw := w.sw
	w.sw = nil
	return sw.Flush()
}

// fail remembers the first error: a workbook half written is not written.
func (w *Writer) fail(err error) error {
	if err != nil && w.err == nil {
		w.err = err
	}
	return err
}

// cell returns the value to store for v in a column of type t.
func (w *Writer) cell(t ColumnType, v string) any {
	if v == "" {
		return nil
	}
	switch t {
	case Number:
		if n, ok := exactNumber(v); ok {
			return n
		}
	case Date:
		if d, err := time.Parse(time.DateOnly, v); err == nil && d.Format(time.DateOnly) == v {
			return excelize.Cell{StyleID: w.styles.date, Value: d}
		}
	}
	if FormulaLike(v) {
		return excelize.Cell{StyleID: w.styles.quoted, Value: v}
	}
	return v
}

// exactNumber returns v as an int64 or a float64 when storing it as a
// number and reading it back gives v again: a whole number without leading
// zeros, or a decimal in its shortest form with at most 15 significant
// digits (a spreadsheet's precision). Anything else is kept as text.
func exactNumber(v string) (any, bool) {
	if n, err := strconv.ParseInt(v, 10, 64); err == nil && strconv.FormatInt(n, 10) == v && n > -1e15 && n < 1e15 {
		return n, true
	}
	f, err := strconv.ParseFloat(v, 64)
	if err != nil || math.IsInf(f, 0) || math.IsNaN(f) || strconv.FormatFloat(f, 'f', -1, 64) != v {
		return nil, false
	}
	if strconv.FormatFloat(f, 'g', 15, 64) != strconv.FormatFloat(f, 'g', -1, 64) {
		return nil, false // more than 15 significant digits
	}
	return f, true
}
