package store

import (
	"database/sql"
	"strconv"

	"polypledger/logbook"
)

// An import checks its rows against the logbook in batches. Each row is
// read and checked on its own as it comes (its values, its rules, repeats
// within the import); it then waits in the batch until importBatch rows
// have gathered, or the import's rows end. The batch is checked against the
// logbook with one query for the procedures it names and one for their
// lesions, its rows are then handled in their order (refused, or stored
// with their change-log entries), and what they store goes through bulk
// writers — COPY on a server, one prepared INSERT on SQLite — flushed at
// the end of the batch. A lesion whose procedure comes earlier in the same
// import, in the same batch or an earlier one, is checked against the set
// of procedures this import has written.
//
// A histology result is judged as if it were recorded on its own, after
// the rows before it (judgeHistology, the rules of a result entered in the
// app): against its lesion as the batch's check read it, or as a result
// earlier in the batch left it; a lesion that a row earlier in the batch
// stored is read from the logbook once the batch's writes so far are
// flushed. The results that change their lesion are written in bulk too
// (one UPDATE for the batch on a server), after the lesions and before the
// change log.

// importBatch is how many rows are checked against the logbook, and
// written, at once.
const importBatch = 500

// queued is a row read and checked on its own, waiting for its batch: one
// of p, l and h is set.
type queued struct {
	line   int
	clean  bool
	kind   Kind
	origin *Origin
	p      *logbook.Procedure
	l      *logbook.Lesion
	h      *logbook.HistologyResult
}

// batchState is what an importer keeps for its batches.
type batchState struct {
	batch []queued
	// stored holds, of the procedure ids the batch names, those in the
	// logbook when it was checked; storedLesions its lesions stored then
	// ("P1#2").
	stored, storedLesions map[string]bool
	// wrote holds the procedures this import added as new (with Check:
	// would add), so that their lesions later in the import find them
	// before they are flushed, and are known to have no lesion stored.
	wrote map[string]bool
	// lesions holds, by lesionKey, the lesions the batch's results are
	// for, as the logbook held them when the batch was checked and as
	// results earlier in the batch left them. wroteLesions holds the
	// lesions that lesion rows of the batch stored (a result for one reads
	// it from the logbook), and resulted those that its results changed
	// since the last flush (a lesion row replacing one flushes first).
	lesions                map[string]logbook.Lesion
	wroteLesions, resulted map[string]bool
	// The bulk writers, and whether any holds rows not yet flushed.
	procW, lesionW, resultW, logW bulkWriter
	unflushed                     bool
}

// enqueue adds a row that was read to the batch, and checks the batch once
// it is full.
func enqueue[T any](im *importer, line int, r *T, clean bool) error {
	q := queued{line: line, clean: clean, kind: im.kind, origin: im.origin}
	switch r := any(r).(type) {
	case *logbook.Procedure:
		p := *r
		q.p, q.kind = &p, Procedures
	case *logbook.Lesion:
		l := *r
		q.l, q.kind = &l, Lesions
	case *logbook.HistologyResult:
		h := *r
		q.h, q.kind = &h, Histology
	}
	im.batch = append(im.batch, q)
	if len(im.batch) < importBatch {
		return nil
	}
	return im.checkBatch()
}

// queue is the row sink that adds each row to the import's batch.
func queue[T any](im *importer) rowSink[T] {
	return func(line int, r *T, clean bool) error { return enqueue(im, line, r, clean) }
}

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
	}
	var err error
	im.resultW, err = im.s.be.bulkUpdate(im.ctx, im.tx, "lesions", resultColumns, lesionKeyColumns)
	return err
}

// writers are the bulk writers in the order they are flushed: procedures
// before the lesions that refer to them, results after the lesions they
// change, and the change log last.
func (im *importer) writers() []bulkWriter {
	return []bulkWriter{im.procW, im.lesionW, im.resultW, im.logW}
}

// closeWriters closes the bulk writers that were opened.
func (im *importer) closeWriters() {
	for _, w := range im.writers() {
		if w != nil {
			w.close()
		}
	}
}

// write hands one row to a bulk writer.
func (im *importer) write(w bulkWriter, values []any) error {
	im.unflushed = true
	return w.write(im.ctx, values)
}

// logChange adds a change-log entry through the bulk writer, so that the
// log keeps the order of the import's rows.
func (im *importer) logChange(action, record string, old, new any) error {
	return im.write(im.logW, im.s.changeValues(action, record, old, new))
}

// flush writes what the bulk writers hold, in the order of writers.
func (im *importer) flush() error {
	if !im.unflushed {
		return nil
	}
	for _, w := range im.writers() {
		if err := w.flush(im.ctx); err != nil {
			return err
		}
	}
	im.unflushed = false
	clear(im.resulted)
	return nil
}

// checkBatch checks the rows waiting in the batch against the logbook,
// handles each in turn, and flushes what they stored.
func (im *importer) checkBatch() error {
	if len(im.batch) == 0 {
		return nil
	}
	if err := im.prefetch(); err != nil {
		return err
	}
	origin, kind := im.origin, im.kind
	defer func() { im.origin, im.kind = origin, kind }()
	for i := range im.batch {
		q := &im.batch[i]
		im.origin, im.kind = q.origin, q.kind
		var err error
		switch {
		case q.p != nil:
			err = im.procedure(q.line, q.p, q.clean)
		case q.l != nil:
			err = im.lesion(q.line, q.l, q.clean)
		default:
			err = im.histology(q.line, q.h, q.clean)
		}
		if err != nil {
			return err
		}
	}
	clear(im.batch)
	im.batch = im.batch[:0]
	return im.flush()
}

// prefetch reads which of the procedures the batch names are in the
// logbook, which lesions of those named by its lesions are, leaving out
// the procedures this import added (their lesions are all in the batch or
// refused as repeats), and the lesions of the procedures its results are
// for (those this import added included: their lesions were flushed with
// an earlier batch, or are read when a result comes for them).
func (im *importer) prefetch() error {
	var procs, ofLesions, ofResults []string
	seen := make(map[string]bool, len(im.batch))
	for _, q := range im.batch {
		var id string
		switch {
		case q.p != nil:
			id = q.p.ID
		case q.l != nil:
			id = q.l.ProcedureID
		default:
			id = q.h.ProcedureID
			if !seen["\x01"+id] {
				seen["\x01"+id] = true
				ofResults = append(ofResults, id)
			}
		}
		if im.wrote[id] {
			continue
		}
		if !seen[id] {
			seen[id] = true
			procs = append(procs, id)
		}
		if q.l != nil && !seen["\x00"+id] {
			seen["\x00"+id] = true
			ofLesions = append(ofLesions, id)
		}
	}
	im.stored = make(map[string]bool, len(procs))
	im.storedLesions = map[string]bool{}
	im.lesions = make(map[string]logbook.Lesion, len(ofResults))
	im.wroteLesions, im.resulted = map[string]bool{}, map[string]bool{}
	read := lesionReader()
	if err := im.inBatches(lesionSelectSQL+" WHERE procedure_id IN", ofResults, func(scan func(...any) error) error {
		l, err := read(scan)
		if err != nil {
			return err
		}
		im.lesions[lesionKey(l.ProcedureID, l.LesionNo)] = l
		return nil
	}); err != nil {
		return err
	}
	if err := im.inBatches("SELECT id FROM procedures WHERE id IN", procs, func(scan func(...any) error) error {
		var id string
		if err := scan(&id); err != nil {
			return err
		}
		im.stored[id] = true
		return nil
	}); err != nil {
		return err
	}
	return im.inBatches("SELECT procedure_id, lesion_no FROM lesions WHERE procedure_id IN", ofLesions, func(scan func(...any) error) error {
		var id string
		var no int
		if err := scan(&id, &no); err != nil {
			return err
		}
		im.storedLesions[lesionKey(id, no)] = true
		return nil
	})
}

// inBatches runs query, which ends in "IN", for ids, up to importBatch at
// a time, and calls each for every row. The IN list has a power of two of
// places (at most importBatch), the last id repeated to fill them, so that
// SQLite prepares a handful of statements once (preparedStmts) and a file
// of a few rows does not bind and look up hundreds of values; a server
// plans the statement for its values each time (planEach).
func (im *importer) inBatches(query string, ids []string, each func(scan func(...any) error) error) error {
	lead := im.s.be.planEach()
	for len(ids) > 0 {
		n := min(len(ids), importBatch)
		width := inListWidth(n)
		q := query + " (" + placeholders(width) + ")"
		args := make([]any, len(lead)+width)
		copy(args, lead)
		for i := range width {
			args[len(lead)+i] = ids[min(i, n-1)]
		}
		ids = ids[n:]
		var rows *sql.Rows
		var err error
		if lead == nil {
			var st *sql.Stmt
			if st, err = im.stmt(q); err != nil {
				return err
			}
			rows, err = st.QueryContext(im.ctx, args...)
		} else {
			rows, err = im.tx.QueryContext(im.ctx, q, args...)
		}
		if err != nil {
			return err
		}
		for rows.Next() {
			if err := each(rows.Scan); err != nil {
				rows.Close()
				return err
			}
		}
		rows.Close()
		if err := rows.Err(); err != nil {
			return err
		}
	}
	return nil
}

// inListWidth is the number of places inBatches gives n ids: the smallest
// power of two that holds them, at most importBatch.
func inListWidth(n int) int {
	w := 1
	for w < n {
		w *= 2
	}
	return min(w, importBatch)
}

// lesionKey identifies a lesion within an import ("P1#2").
func lesionKey(procedureID string, no int) string { return procedureID + "#" + strconv.Itoa(no) }
