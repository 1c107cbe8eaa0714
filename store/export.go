package store

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"strings"

	"polypledger/logbook"
	"polypledger/sheet"
)

// Export writes every record of a kind as CSV with the same columns import
// reads, in procedure date-then-id order: procedures.csv, lesions.csv
// (always with the optional tattoo column), or histology.csv (the final
// results with their report dates). Patient references are written as their
// pseudonyms, never as hospital numbers. Cells a spreadsheet would run as a
// formula are neutralised (see SafeCell). It returns how many records
// (rows after the header) it wrote.
func (s *Store) Export(ctx context.Context, kind Kind, w io.Writer) (int, error) {
	cw := csv.NewWriter(w)
	if _, err := ParseKind(string(kind)); err != nil {
		return 0, err
	}
	if err := cw.Write(Columns(kind)); err != nil {
		return 0, err
	}
	n, err := s.exportRows(ctx, kind, func(row []string) error {
		for i := range row {
			row[i] = SafeCell(row[i])
		}
		return cw.Write(row)
	})
	if err != nil {
		return n, err
	}
	cw.Flush()
	return n, cw.Error()
}

// ExportWorkbook writes the records of each kind in kinds as one sheet of
// an .xlsx workbook, the sheet named after the kind ("procedures"), with
// the same columns and rows as Export: dates stored as dates, counts,
// doses and seconds as numbers, the rest as text, under a bold frozen
// header. A text cell that a spreadsheet would take for a formula is stored
// as quoted text (sheet.Writer), which no spreadsheet runs, without the
// apostrophe the CSV export adds; only a value that begins with apostrophes
// before a formula-like rest gets one more, as in CSV, because a workbook of
// ours is read as a CSV file of ours is (PlainCell, so that a CSV export
// saved as a workbook imports too). It returns how many records it wrote of
// each kind.
func (s *Store) ExportWorkbook(ctx context.Context, kinds []Kind, w io.Writer) (map[Kind]int, error) {
	for _, k := range kinds {
		if _, err := ParseKind(string(k)); err != nil {
			return nil, err
		}
	}
	book, err := sheet.NewWriter(w)
	if err != nil {
		return nil, err
	}
	counts := map[Kind]int{}
	for _, k := range kinds {
		if err := book.AddSheet(string(k), Columns(k), sheetTypes(k)); err != nil {
			book.Close()
			return counts, err
		}
		n, err := s.exportRows(ctx, k, func(row []string) error {
			for i, v := range row {
				if strings.HasPrefix(v, "'") {
					row[i] = SafeCell(v)
				}
			}
			return book.WriteRow(row)
		})
		counts[k] = n
		if err != nil {
			book.Close()
			return counts, err
		}
	}
	return counts, book.Close()
}

// sheetTypes returns how a workbook stores each column of a kind: dates as
// dates, counts, amounts and seconds as numbers, the rest as text.
func sheetTypes(k Kind) []sheet.ColumnType {
	cs := logbook.Columns(k)
	out := make([]sheet.ColumnType, len(cs))
	for i, c := range cs {
		switch c.Type {
		case logbook.DateColumn:
			out[i] = sheet.Date
		case logbook.CountColumn, logbook.AmountColumn, logbook.SecondsColumn:
			out[i] = sheet.Number
		default:
			out[i] = sheet.Text
		}
	}
	return out
}

// exportRows hands write the cells of every record of a kind, in export
// order, and returns how many it handed over. The cells are the values as
// stored, not yet made safe for a spreadsheet.
func (s *Store) exportRows(ctx context.Context, kind Kind, write func(row []string) error) (int, error) {
	switch kind {
	case Procedures:
		return rowsOf(procedureColumns, write, func(emit func(*logbook.Procedure) error) error {
			return s.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error { return emit(&c.Procedure) })
		})
	case Lesions:
		return rowsOf(lesionColumns, write, func(emit func(*logbook.Lesion) error) error {
			return s.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error {
				for i := range c.Lesions {
					if err := emit(&c.Lesions[i]); err != nil {
						return err
					}
				}
				return nil
			})
		})
	case Histology:
		return rowsOf(histologyColumns, write, func(emit func(*logbook.HistologyResult) error) error {
			return s.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error {
				for _, l := range c.Lesions {
					if !l.Histology.IsFinal() {
						continue
					}
					h := logbook.HistologyResult{ProcedureID: l.ProcedureID, LesionNo: l.LesionNo, Histology: l.Histology, Dysplasia: l.Dysplasia, ReportedOn: l.ReportedOn}
					if err := emit(&h); err != nil {
						return err
					}
				}
				return nil
			})
		})
	}
	return 0, fmt.Errorf("kind %q is not procedures, lesions or histology", kind)
}

func rowsOf[T any](cols []column[T], write func(row []string) error, each func(emit func(*T) error) error) (int, error) {
	n := 0
	err := each(func(r *T) error {
		n++
		return write(csvRow(cols, r))
	})
	return n, err
}

// SafeCell neutralises a cell that a spreadsheet would run as a formula:
// one beginning with "=", "+", "-" (unless the whole cell is a decimal
// number), "@", a tab or a carriage return, or their full-width forms
// "＝", "＋", "－" and "＠" (which some spreadsheets read as the plain
// ones), gets a leading apostrophe, which spreadsheets show as text. So that
// PlainCell can undo it exactly, a cell that already begins with
// apostrophes before such a character gets one more. Every other cell is
// returned unchanged.
func SafeCell(v string) string {
	if needsApostrophe(v) {
		return "'" + v
	}
	return v
}

// PlainCell undoes SafeCell: import reads a cell through it, so that an
// exported file imports back to the same records. It removes one leading
// apostrophe exactly where SafeCell adds one — before a formula-like value
// — and leaves every other cell, including one that merely begins with an
// apostrophe, as it is.
func PlainCell(v string) string {
	if rest, ok := strings.CutPrefix(v, "'"); ok && needsApostrophe(rest) {
		return rest
	}
	return v
}

// needsApostrophe reports whether SafeCell puts an apostrophe before v:
// when v, after any apostrophes it begins with, is formula-like
// (sheet.FormulaLike, the rule the workbook export shares).
func needsApostrophe(v string) bool {
	return sheet.FormulaLike(strings.TrimLeft(v, "'"))
}
