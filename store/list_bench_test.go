package store

import (
	"context"
	"os"
	"testing"
)

// BenchmarkListPage times a page of the case list in the middle of a large
// logbook — the page furthest from both ends — in each sort order:
// "counted" is the first such page after a change once the list has been
// counted and the sample of its order read in the background, as the app
// counts a list when it shows it (the reading is not timed); "unsampled"
// the same page asked before the sample is there, which reads it (a page
// asked within that time of a change); "scroll" each following page while
// scrolling on from there. It runs on the database named by POLYPLEDGER_BENCH_DB (a
// file, or a server URL; for example a unit made with "polypledger demo
// --db URL --procedures 1000000", as scripts/bench-metrics does) and is
// skipped without it.
func BenchmarkListPage(b *testing.B) {
	loc := os.Getenv("POLYPLEDGER_BENCH_DB")
	if loc == "" {
		b.Skip("set POLYPLEDGER_BENCH_DB to a large database (a file or a postgres:// URL)")
	}
	ctx := context.Background()
	s, err := Open(ctx, loc, Options{ReadOnly: true})
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	total, err := s.CountProcedures(ctx, ListQuery{})
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("%d procedures", total)
	const page = 100
	for _, sort := range []string{"performed_on", "id", "operator_id", "age"} {
		q := ListQuery{SortBy: sort, Descending: true, Limit: page, Offset: total / 2}
		forget := func() {
			s.samples.mu.Lock()
			s.samples.samples = nil
			s.samples.mu.Unlock()
		}
		b.Run(sort+"/counted", func(b *testing.B) {
			for b.Loop() {
				b.StopTimer()
				forget()
				if _, err := s.CountProcedures(ctx, q); err != nil {
					b.Fatal(err)
				}
				mark, err := s.ChangeMark(ctx)
				if err != nil {
					b.Fatal(err)
				}
				where, args := q.where()
				<-s.sampleFor(mark, q.order(), where, args).done
				b.StartTimer()
				if rows, err := s.ListProcedures(ctx, q); err != nil || len(rows) != page {
					b.Fatalf("%d rows, %v", len(rows), err)
				}
			}
		})
		b.Run(sort+"/unsampled", func(b *testing.B) {
			for b.Loop() {
				forget()
				if rows, err := s.ListProcedures(ctx, q); err != nil || len(rows) != page {
					b.Fatalf("%d rows, %v", len(rows), err)
				}
			}
		})
		b.Run(sort+"/scroll", func(b *testing.B) {
			q := q
			for b.Loop() {
				if rows, err := s.ListProcedures(ctx, q); err != nil || len(rows) != page {
					b.Fatalf("%d rows, %v", len(rows), err)
				}
				q.Offset = (q.Offset + page) % (total - page)
			}
		})
	}
}
