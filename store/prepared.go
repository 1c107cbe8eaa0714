package store

import (
	"context"
	"database/sql"
	"sync"
)

// preparedStmts keeps the statements a file store's write transactions
// prepare (an import's lookups and inserts), prepared once on the store's
// pool and reused from one transaction to the next. On SQLite, preparing a
// statement (parsing and planning it) costs more than running it for a
// small file, and a transaction reuses a statement already prepared on its
// own connection (database/sql's Tx.StmtContext), so an import of a few
// rows no longer spends most of its time preparing. A server plans some
// statements for their values each time; there a transaction prepares its
// own as before. The statements' texts are fixed (an IN list always has
// importBatch places), so the set stays small.
type preparedStmts struct {
	mu sync.Mutex
	m  map[string]*sql.Stmt
}

// get returns query prepared on pool, preparing it the first time.
func (p *preparedStmts) get(ctx context.Context, pool *sql.DB, query string) (*sql.Stmt, error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if st, ok := p.m[query]; ok {
		return st, nil
	}
	st, err := pool.PrepareContext(ctx, query)
	if err != nil {
		return nil, err
	}
	if p.m == nil {
		p.m = map[string]*sql.Stmt{}
	}
	p.m[query] = st
	return st, nil
}

// close closes every statement kept (before the pool is closed: SQLite
// keeps a database file open while a statement on it is not finalised).
func (p *preparedStmts) close() {
	p.mu.Lock()
	defer p.mu.Unlock()
	for _, st := range p.m {
		st.Close()
	}
	p.m = nil
}
