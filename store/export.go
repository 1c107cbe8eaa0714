package store

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"

	"polypledger/logbook"
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
	var n int
	var err error
	switch kind {
	case Procedures:
		n, err = writeAll(cw, procedureColumns, func(emit func(*logbook.Procedure) error) error {
			return s.ForEachCase(ctx, CaseFilter{}, func(c *logbook.Case) error { return emit(&c.Procedure) })
		})
	case Lesions:
		n, err = writeAll(cw, lesionColumns, func(emit func(*logbook.Lesion) error) error {
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
		n, err = writeAll(cw, histologyColumns, func(emit func(*logbook.HistologyResult) error) error {
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
	default:
		return 0, fmt.Errorf("kind %q is not procedures, lesions or histology", kind)
	}
	if err != nil {
		return n, err
	}
	cw.Flush()
	return n, cw.Error()
}

func writeAll[T any](cw *csv.Writer, cols []column[T], each func(emit func(*T) error) error) (int, error) {
	if err := cw.Write(names(cols)); err != nil {
		return 0, err
	}
	n := 0
	err := each(func(r *T) error {
		row := csvRow(cols, r)
		for i := range row {
			row[i] = SafeCell(row[i])
		}
		n++
		return cw.Write(row)
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
// when v, after any apostrophes it begins with, starts like a formula.
func needsApostrophe(v string) bool {
	rest := strings.TrimLeft(v, "'")
	r, _ := utf8.DecodeRuneInString(rest)
	switch r {
	case '=', '+', '@', '\t', '\r', '＝', '＋', '－', '＠':
		return true
	case '-':
		return !plainNumber(rest)
	}
	return false
}

// plainNumber reports whether v is a decimal number as a spreadsheet reads
// one ("-12", "-2.5", "-1e5"); strconv also accepts "-inf", "-nan" and hex
// floats, which a spreadsheet would take as a formula.
func plainNumber(v string) bool {
	if _, err := strconv.ParseFloat(v, 64); err != nil {
		return false
	}
	for i := 0; i < len(v); i++ {
		switch c := v[i]; {
		case c >= '0' && c <= '9', c == '.', c == 'e', c == 'E', c == '+', c == '-':
		default:
			return false
		}
	}
	return true
}
