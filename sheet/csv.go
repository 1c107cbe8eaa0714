package sheet

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"unicode/utf8"
)

// errRowTooLong is returned by the record-length guard; it ends the reading,
// since the reader cannot find the next record's start.
var errRowTooLong = errors.New("record too long")

// recordGuard stops a CSV reader from reading one record of unbounded
// length: it fails once more than limit bytes have been read since the last
// record was returned. Reads ahead by the buffer make the count an
// over-estimate by at most the buffer's size, which the limit allows for.
type recordGuard struct {
	r       io.Reader
	since   int
	limit   int
	tripped bool
}

func (g *recordGuard) Read(p []byte) (int, error) {
	if g.tripped || g.since > g.limit {
		// encoding/csv drops a read error met in an unquoted field and
		// returns the partial record: the reader checks tripped itself.
		g.tripped = true
		return 0, errRowTooLong
	}
	n, err := g.r.Read(p)
	g.since += n
	return n, err
}

// csvBuffer is the read-ahead of the CSV reader's buffer.
const csvBuffer = 64 << 10

func openCSV(name string, r io.Reader, opt Options) (*Table, error) {
	lim := opt.Limits.withDefaults()
	g := &recordGuard{r: r, limit: lim.RowBytes + csvBuffer}
	br := bufio.NewReaderSize(g, csvBuffer)
	cr := csv.NewReader(br)
	cr.FieldsPerRecord = -1
	t := &Table{name: name, limits: lim}
	lastLine := 0
	t.next = func() (int, []string, error) {
		rec, err := cr.Read()
		if g.tripped || errors.Is(err, errRowTooLong) {
			return 0, nil, &Error{File: name, Line: lastLine + 1, Reason: fmt.Sprintf("a record longer than %s (is this a CSV file?)", byteSize(lim.RowBytes))}
		}
		if err == io.EOF {
			return 0, nil, io.EOF
		}
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			lastLine = pe.Line
			g.since = 0
			return pe.StartLine, nil, &Error{File: name, Line: pe.StartLine, Reason: "not valid CSV: " + pe.Err.Error(), RowOnly: true}
		}
		if err != nil {
			return 0, nil, fmt.Errorf("read %s: %w", name, err)
		}
		g.since = 0
		line, _ := cr.FieldPos(0)
		lastLine = line
		for i, c := range rec {
			if !utf8.ValidString(c) {
				return line, nil, &Error{File: name, Line: line, Column: t.columnName(i), Reason: "not UTF-8 text (save the file as CSV UTF-8)", RowOnly: true}
			}
		}
		return line, rec, nil
	}
	if err := t.readHeader(opt); err != nil {
		var e *Error
		if errors.As(err, &e) {
			e.RowOnly = false // a bad header ends the reading
		}
		return nil, err
	}
	return t, nil
}
