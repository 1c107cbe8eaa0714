package store

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"strings"
	"sync"

	"polypledger/logbook"
)

// The full pass over the logbook (metrics, export, check) reads procedures
// and lesions as two ordered streams (the backend's streamCases: two read
// connections that see one snapshot), parsed on their own goroutines and
// merged by procedure, so that reading, parsing and the caller's arithmetic
// use both cores.

// batchSize is how many records travel between goroutines at once.
const batchSize = 512

func columnNames[T any](cols []column[T]) []string {
	out := make([]string, len(cols))
	for i, c := range cols {
		out[i] = c.sqlColumn()
	}
	return out
}

// unpack fills r from one row of src's format. A value that cannot be read
// is passed to bad, when it is set, and the rest of the row is read;
// otherwise it stops the row with an error naming the column. scratch holds
// a value whose escapes had to be undone.
func unpack[T any](cols []column[T], src *rowSource, row []byte, scratch *[]byte, r *T, rc *rawCache, bad func(column string, err error)) error {
	sep := src.sep
	for i := range cols {
		field := row
		if j := bytes.IndexByte(row, sep); j >= 0 {
			field, row = row[:j], row[j+1:]
		} else {
			row = nil
		}
		if src.copyText && bytes.IndexByte(field, '\\') >= 0 {
			if len(field) == 2 && field[1] == 'N' {
				continue // NULL
			}
			*scratch = unescapeCopy((*scratch)[:0], field)
			field = *scratch
		}
		if len(field) == 0 {
			continue
		}
		c := &cols[i]
		if c.fromRaw != nil && c.fromRaw(r, field, rc) {
			continue
		}
		if err := c.loadStored(r, string(field)); err != nil {
			if bad == nil {
				return fmt.Errorf("stored %s: %w", c.name, err)
			}
			bad(c.name, err)
		}
	}
	return nil
}

// unreadable receives, when set, each stored value a stream cannot read —
// the record it belongs to ("procedure P1", "lesion P1#2"), its column and
// why — and the stream goes on; otherwise such a value ends the stream with
// an error naming all three. It may be called from several goroutines, and
// always before the record reaches the caller.
type unreadable func(record, column string, err error)

// procedureName and lesionName name stored records in messages.
func procedureName(p *logbook.Procedure) string { return "procedure " + p.ID }

func lesionName(l *logbook.Lesion) string {
	return fmt.Sprintf("lesion %s#%d", l.ProcedureID, l.LesionNo)
}

// produce reads the rows of src and sends parsed batches on out until
// done; name names a record in messages.
func produce[T any](ctx context.Context, src rowSource, cols []column[T], fresh func() T, name func(*T) string,
	onBad unreadable, free chan []T, out chan<- []T) error {
	defer close(out)
	var rc rawCache
	var scratch []byte
	batch := <-free
	batch = batch[:0]
	// The values of the row being read that cannot be read; the record is
	// named once the whole row is read.
	type badValue struct {
		column string
		err    error
	}
	var problems []badValue
	var bad func(column string, err error)
	if onBad != nil {
		bad = func(column string, err error) { problems = append(problems, badValue{column, err}) }
	}
	err := src.each(func(row []byte) error {
		// Each record is read in place, in the batch.
		batch = append(batch, fresh())
		r := &batch[len(batch)-1]
		if err := unpack(cols, &src, row, &scratch, r, &rc, bad); err != nil {
			return fmt.Errorf("%s: %w", name(r), err)
		}
		for _, p := range problems {
			onBad(name(r), p.column, p.err)
		}
		problems = problems[:0]
		if len(batch) == batchSize {
			select {
			case out <- batch:
			case <-ctx.Done():
				return ctx.Err()
			}
			select {
			case batch = <-free:
				batch = batch[:0]
			case <-ctx.Done():
				return ctx.Err()
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	if len(batch) > 0 {
		select {
		case out <- batch:
		case <-ctx.Done():
			return ctx.Err()
		}
	}
	return nil
}

// stream reads batches of T from a channel one record at a time, handing
// used batches back for reuse.
type stream[T any] struct {
	in    <-chan []T
	free  chan []T
	batch []T
	i     int
}

func newStream[T any](in <-chan []T, free chan []T) *stream[T] {
	return &stream[T]{in: in, free: free}
}

// peek returns the next record without consuming it, or nil at the end.
func (s *stream[T]) peek() *T {
	for s.i >= len(s.batch) {
		if s.batch != nil {
			s.free <- s.batch
			s.batch = nil
		}
		b, ok := <-s.in
		if !ok {
			return nil
		}
		s.batch, s.i = b, 0
	}
	return &s.batch[s.i]
}

func (s *stream[T]) next() { s.i++ }

// ForEachCase streams the selected cases to fn in the order they were
// stored (an import's rows in file order), one at a time, from one
// consistent snapshot of the database; the case passed
// to fn is reused for the next one, so fn must not keep it. Returning an
// error from fn stops the stream with that error. A stored value that
// cannot be read stops it with an error naming the record and column.
func (s *Store) ForEachCase(parent context.Context, f CaseFilter, fn func(*logbook.Case) error) error {
	return s.forEachCase(parent, f, fn, nil)
}

// forEachCase is ForEachCase; with onBad set, unreadable stored values are
// handed to it and the stream goes on (Check lists them all).
func (s *Store) forEachCase(parent context.Context, f CaseFilter, fn func(*logbook.Case) error, onBad unreadable) error {
	ctx, cancel := context.WithCancel(parent)
	defer cancel()
	procs, lesions, done, err := s.be.streamCases(ctx, s, f)
	if err != nil {
		return s.explain(err)
	}
	defer done()
	pOut, lOut := make(chan []logbook.Procedure, 2), make(chan []logbook.Lesion, 2)
	pFree, lFree := make(chan []logbook.Procedure, 4), make(chan []logbook.Lesion, 4)
	for i := 0; i < 4; i++ {
		pFree <- make([]logbook.Procedure, 0, batchSize)
		lFree <- make([]logbook.Lesion, 0, batchSize)
	}
	var wg sync.WaitGroup
	var pErr, lErr error
	wg.Add(2)
	go func() {
		defer wg.Done()
		pErr = produce(ctx, procs, procedureColumns, logbook.NewProcedure, procedureName, onBad, pFree, pOut)
	}()
	go func() {
		defer wg.Done()
		lErr = produce(ctx, lesions, lesionStoredColumns, logbook.NewLesion, lesionName, onBad, lFree, lOut)
	}()
	fnErr := mergeCases(newStream(pOut, pFree), newStream(lOut, lFree), fn)
	cancel()
	// Drain so the producers can finish.
	go func() {
		for range pOut {
		}
	}()
	go func() {
		for range lOut {
		}
	}()
	wg.Wait()
	if err := parent.Err(); err != nil {
		return err
	}
	// A reader's own error comes first: a stream cut short by it would
	// otherwise surface as lesions without their procedure.
	for _, e := range []error{pErr, lErr} {
		if e != nil && !errors.Is(e, context.Canceled) {
			return s.explain(e)
		}
	}
	return fnErr
}

// mergeCases pairs each procedure with its lesions (both streams are in the
// same order) and calls fn for each case.
func mergeCases(ps *stream[logbook.Procedure], ls *stream[logbook.Lesion], fn func(*logbook.Case) error) error {
	var c logbook.Case
	for p := ps.peek(); p != nil; p = ps.peek() {
		c.Procedure = *p
		ps.next()
		c.Lesions = c.Lesions[:0]
		for l := ls.peek(); l != nil && l.ProcedureID == c.ID; l = ls.peek() {
			c.Lesions = append(c.Lesions, *l)
			ls.next()
		}
		if err := fn(&c); err != nil {
			return err
		}
	}
	if l := ls.peek(); l != nil {
		return fmt.Errorf("lesion %d of procedure %s arrived out of order", l.LesionNo, strings.TrimSpace(l.ProcedureID))
	}
	return nil
}

// copyEscapes are the one-letter escapes of COPY's text format.
var copyEscapes = map[byte]byte{'b': '\b', 'f': '\f', 'n': '\n', 'r': '\r', 't': '\t', 'v': '\v'}

// unescapeCopy appends a field of COPY's text format with its backslash
// escapes undone.
func unescapeCopy(b, f []byte) []byte {
	for i := 0; i < len(f); i++ {
		c := f[i]
		if c != '\\' || i+1 == len(f) {
			b = append(b, c)
			continue
		}
		i++
		e := f[i]
		if v, ok := copyEscapes[e]; ok {
			b = append(b, v)
			continue
		}
		switch {
		case e == 'x':
			v, k := 0, 0
			for ; k < 2 && i+1 < len(f) && isHex(f[i+1]); k++ {
				i++
				v = v*16 + hexVal(f[i])
			}
			b = append(b, byte(v))
		case e >= '0' && e <= '7':
			v := int(e - '0')
			for k := 0; k < 2 && i+1 < len(f) && f[i+1] >= '0' && f[i+1] <= '7'; k++ {
				i++
				v = v*8 + int(f[i]-'0')
			}
			b = append(b, byte(v))
		default:
			b = append(b, e)
		}
	}
	return b
}

func isHex(c byte) bool {
	return c >= '0' && c <= '9' || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F'
}

func hexVal(c byte) int {
	switch {
	case c >= 'a':
		return int(c-'a') + 10
	case c >= 'A':
		return int(c-'A') + 10
	}
	return int(c - '0')
}
