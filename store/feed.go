package store

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"

	"polypledger/sheet"
)

// Record is one of our records handed to ImportRecords: the values of the
// columns of its kind, in the order of Columns(Kind), written in our CSV
// dialect ("" for not recorded) — as another system's file gives them once
// mapped by an import recipe, or as a workbook of ours holds them. Line is
// the line of the file it came from.
type Record struct {
	Kind   Kind
	Line   int
	Values []string
	// Origin names the file and its columns in messages; nil names them
	// as our own CSV files do.
	Origin *Origin
}

// Origin says where records come from, for the messages about them. The
// records of one kind from one file share one Origin.
type Origin struct {
	// File names the file ("audit.xlsx[2025]").
	File string
	// Columns names, for each of Columns(kind), the column as messages
	// call it ("Date of test (performed_on)"); nil or "" for our name.
	Columns []string
	// Absent marks the columns of ours that the file lacks (nil: none).
	// Their values are empty, and the rules of a record are not checked
	// against them row by row.
	Absent []bool
	// AbsentHint, when set, says what to do about a rule that a file
	// breaks on every row because it lacks a column (a required field): the
	// rule is then reported once, at its first row, followed by the hint.
	// Without it such a rule is passed over: the caller has refused the
	// file for lacking the column already (CheckHeader).
	AbsentHint func(column string) string
}

// label returns what messages call one of our columns in this file.
func (o *Origin) label(kind Kind, column string) string {
	if i := slices.Index(Columns(kind), column); i >= 0 && i < len(o.Columns) && o.Columns[i] != "" {
		return o.Columns[i]
	}
	return column
}

// Feed hands ImportRecords its records: it calls emit with each, in the
// order they are to be stored (a procedure before its lesions, a lesion
// before its histology result), returning at once any error emit returns,
// and calls refuse with each problem it finds itself (a value it could not
// read or map). Any problem, the feed's or the store's, refuses the whole
// import. The problems of one import are listed up to MaxReportedErrors and
// counted beyond.
type Feed func(emit func(Record) error, refuse func(RowError)) error

// ImportRecords stores the records a feed hands over — of any kinds, mixed —
// in one transaction, or none, checking each exactly as Import checks a row
// of our CSV files (the same column parsers and rules, repeats within the
// import, clashes with and references to what is stored) and naming each
// problem as the record's Origin names its file and columns. A lesion whose
// procedure comes earlier in the same import is checked against it; one
// whose procedure was refused there is not reported again. name names the
// import in the last line of a refusal, whose problems are listed in the
// order of their lines. With opt.Check nothing is stored in any case. Progress is the feed's to report (opt.Progress is not called).
func (s *Store) ImportRecords(ctx context.Context, name string, feed Feed, opt ImportOptions) (ImportResult, error) {
	if ok, why := s.Writable(); !ok {
		return ImportResult{}, fmt.Errorf("import %s: %s; nothing was imported", name, why)
	}
	im := s.newImporter(ctx, name, opt)
	im.seen = map[Kind]map[string]bool{}
	im.saidAbsent = map[absentRule]bool{}
	return im.run(func() error {
		return feed(im.record, func(e RowError) { im.ie.addError(e) })
	})
}

// record checks and stores one record of a feed.
func (im *importer) record(rec Record) error {
	if err := im.ctx.Err(); err != nil {
		return err
	}
	im.ie.Rows++
	im.origin, im.kind = rec.Origin, rec.Kind
	defer func() { im.origin = nil }()
	switch rec.Kind {
	case Procedures:
		return takeRecord(im, rec, procedureRules)
	case Lesions:
		return takeRecord(im, rec, lesionRules)
	case Histology:
		return takeRecord(im, rec, histologyRules)
	}
	return fmt.Errorf("a record of kind %q: not procedures, lesions or histology", rec.Kind)
}

// takeRecord reads a record with readRecord (no apostrophes to undo: a feed
// gives values as they are) and adds it to the import's batch unless it
// repeats an earlier record of the import.
func takeRecord[T any](im *importer, rec Record, ru rules[T]) error {
	n := len(ru.cols)
	if len(rec.Values) != n {
		return fmt.Errorf("a %s record of line %d has %d values for %d columns", rec.Kind, rec.Line, len(rec.Values), n)
	}
	if len(im.order) < n {
		im.order = make([]int, n)
		for i := range im.order {
			im.order[i] = i
		}
		im.absent, im.bad = make([]bool, n), make([]bool, n)
		im.vals = make([]string, n)
	}
	for i, v := range rec.Values {
		im.vals[i] = strings.TrimSpace(v)
	}
	absent := im.absent[:n]
	clear(absent)
	if o := rec.Origin; o != nil {
		copy(absent, o.Absent)
	}
	report := func(_ int, column, reason string) { im.add(rec.Line, column, reason) }
	onAbsent := func(j int, reason string) {
		o := rec.Origin
		if o == nil || o.AbsentHint == nil || im.saidAbsent[absentRule{o.File, rec.Kind, j}] {
			return
		}
		im.saidAbsent[absentRule{o.File, rec.Kind, j}] = true
		column := ru.cols[j].name
		im.add(rec.Line, column, fmt.Sprintf("%s, on this row and every other: %s has no column for it; %s", reason, o.File, o.AbsentHint(column)))
	}
	r, clean, usable := readRecord(ru, im.vals[:n], im.order[:n], absent, false, im.cd, im.today, im.bad[:n], report, onAbsent)
	if !usable {
		return nil
	}
	key, repeat := ru.key(&r)
	seen := im.seen[rec.Kind]
	if seen == nil {
		seen = map[string]bool{}
		im.seen[rec.Kind] = seen
	}
	if seen[key] {
		im.add(rec.Line, ru.keyFields[0], repeat)
		return nil
	}
	seen[key] = true
	return enqueue(im, rec.Line, &r, clean)
}

// SheetFeed returns a Feed that reads a workbook sheet of ours (an export,
// or a file laid out as ours) as records of kind: its header checked as
// Import checks a CSV file's (CheckHeader), each row one record, each cell
// read as a CSV cell of ours is (PlainCell), and every problem named by the
// sheet (t.Label) and its own row numbers.
func SheetFeed(kind Kind, t *sheet.Table) Feed {
	return func(emit func(Record) error, refuse func(RowError)) error {
		file := t.Label()
		idx, absent, problems, ok := CheckHeader(kind, file, t.HeaderLine(), t.Header())
		for _, p := range problems {
			refuse(p)
		}
		if !ok {
			return nil
		}
		origin := &Origin{File: file, Absent: absent}
		n := len(Columns(kind))
		for {
			row, err := t.Next()
			if errors.Is(err, io.EOF) {
				return nil
			}
			var se *sheet.Error
			if errors.As(err, &se) {
				refuse(RowError{File: se.File, Line: se.Line, Column: cmp.Or(se.Column, "row"), Reason: se.Reason})
				if se.RowOnly {
					continue
				}
				return nil
			}
			if err != nil {
				return err
			}
			vals := make([]string, n)
			for i, c := range row.Cells {
				if i < len(idx) && idx[i] >= 0 {
					vals[idx[i]] = PlainCell(strings.TrimSpace(c))
				}
			}
			if err := emit(Record{Kind: kind, Line: row.Line, Values: vals, Origin: origin}); err != nil {
				return err
			}
		}
	}
}
