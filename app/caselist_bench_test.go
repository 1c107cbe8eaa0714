package app

import (
	"context"
	"os"
	"testing"

	"polypledger/store"
)

// BenchmarkCaseListPage times the queries the case list runs while
// scrolling: one page at the top, the middle and the end of the list in
// each sort order, and the count behind the filters. It runs on the
// database named by POLYPLEDGER_BENCH_DB (for example one made with
// "polypledger demo --db big.db --procedures 1000000") and is skipped
// without it.
func BenchmarkCaseListPage(b *testing.B) {
	path := os.Getenv("POLYPLEDGER_BENCH_DB")
	if path == "" {
		b.Skip("set POLYPLEDGER_BENCH_DB to a large database")
	}
	ctx := context.Background()
	st, err := store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		b.Fatal(err)
	}
	defer st.Close()
	total, err := st.CountProcedures(ctx, store.ListQuery{})
	if err != nil {
		b.Fatal(err)
	}
	for _, sort := range []string{"performed_on", "id", "operator_id", "age"} {
		for _, at := range []struct {
			name   string
			offset int
		}{{"top", 0}, {"middle", total / 2}, {"end", max(0, total-listPageSize)}} {
			b.Run(sort+"/"+at.name, func(b *testing.B) {
				q := store.ListQuery{SortBy: sort, Descending: true, Limit: listPageSize, Offset: at.offset}
				for b.Loop() {
					if _, err := st.ListProcedures(ctx, q); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
	for _, f := range []struct {
		name string
		q    store.ListQuery
	}{
		{"count/all", store.ListQuery{}},
		{"count/operator", store.ListQuery{CaseFilter: store.CaseFilter{OperatorID: "E03"}}},
		{"count/pending", store.ListQuery{HistologyPending: true}},
		{"page/pending", store.ListQuery{HistologyPending: true, Limit: listPageSize}},
	} {
		b.Run(f.name, func(b *testing.B) {
			for b.Loop() {
				var err error
				if f.q.Limit > 0 {
					_, err = st.ListProcedures(ctx, f.q)
				} else {
					_, err = st.CountProcedures(ctx, f.q)
				}
				if err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
