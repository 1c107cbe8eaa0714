package store

import (
	"context"
	"fmt"
	"slices"
	"strings"
	"testing"

	"polypledger/logbook"
)

// listReading is one way ListProcedures may find a page: the thresholds
// past which a page is read from the end of the list and from its sample,
// and the sample's spacing.
type listReading struct {
	name                     string
	reverse, fromSample, gap int
}

var listReadings = []listReading{
	{"by offset", 1 << 30, 1 << 30, 1000},
	// Every page past the fifth row may be read from the end.
	{"from the end", 5, 1 << 30, 1000},
	// On a server, every page past the fifth row not read from the end is
	// read from a sample of every third key (by offset where the key is
	// not recorded); SQLite keeps no sample and reads such a page by its
	// offset.
	{"from a sample", 5, 1, 3},
}

// use sets the thresholds until the test ends.
func (r listReading) use(t *testing.T) {
	old := listReading{reverse: reverseFrom, fromSample: sampleFrom, gap: sampleEvery}
	t.Cleanup(func() { reverseFrom, sampleFrom, sampleEvery = old.reverse, old.fromSample, old.gap })
	reverseFrom, sampleFrom, sampleEvery = r.reverse, r.fromSample, r.gap
}

// TestListProceduresOrder reads the case list page by page in every sort
// order, both directions, on both backends: the order is the same — ids
// compared byte by byte ("B2" before "a1"), a value not recorded before
// every value (as SQLite sorts NULL), ties broken by id in the same
// direction — and a page read from the end of the list, or from a sample
// of its order, is the same page as one read by its offset.
func TestListProceduresOrder(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		loc := b.NewDB(t)
		s := utOpen(t, loc, Options{})
		utAddRoster(t, s)
		type row struct {
			id, date, op string
			age          int // 0: not recorded
			ind, extent  string
		}
		var rows []row
		ids := []string{"a1", "B2", "b10", "P-3", "P3", "p3", "Z", "_x", "P100", "P9"}
		for i := range 34 {
			id := fmt.Sprintf("P%02d", i)
			if i < len(ids) {
				id = ids[i]
			}
			r := row{id: id, date: fmt.Sprintf("2026-0%d-%02d", 1+i%3, 1+i%5), op: []string{"E01", "E02"}[i%2], age: 40 + i%4,
				ind: []string{"screening", "surveillance", "diagnostic"}[i%3], extent: "caecum"}
			c := utCase(id)
			c.PerformedOn, c.OperatorID, c.Age = utDate(r.date), r.op, r.age
			c.Indication = []logbook.Indication{logbook.Screening, logbook.Surveillance, logbook.Diagnostic}[i%3]
			if err := s.SaveCase(ctx, c, true); err != nil {
				t.Fatal(err)
			}
			if i%5 == 0 {
				r.age, r.ind = 0, ""
			}
			rows = append(rows, r)
		}
		var blank []string
		for _, r := range rows {
			if r.age == 0 {
				blank = append(blank, "'"+r.id+"'")
			}
		}
		b.Exec(t, loc, "UPDATE procedures SET age = NULL, indication = NULL WHERE id IN ("+strings.Join(blank, ", ")+")")
		key := map[string]func(r row) string{
			"performed_on": func(r row) string { return r.date },
			"id":           func(r row) string { return "" },
			"operator_id":  func(r row) string { return r.op },
			"age": func(r row) string {
				if r.age == 0 {
					return ""
				}
				return fmt.Sprintf("\x01%03d", r.age)
			},
			"indication": func(r row) string {
				if r.ind == "" {
					return ""
				}
				return "\x01" + r.ind
			},
			"extent": func(r row) string { return r.extent },
		}
		for sort, k := range key {
			for _, desc := range []bool{false, true} {
				want := slices.Clone(rows)
				slices.SortFunc(want, func(a, b row) int {
					c := strings.Compare(k(a), k(b))
					if c == 0 {
						c = strings.Compare(a.id, b.id)
					}
					if desc {
						c = -c
					}
					return c
				})
				var wantIDs []string
				for _, r := range want {
					wantIDs = append(wantIDs, r.id)
				}
				for _, how := range listReadings {
					how.use(t)
					var got []string
					for off := 0; off < len(rows)+3; off += 7 {
						page, err := s.ListProcedures(ctx, ListQuery{SortBy: sort, Descending: desc, Limit: 7, Offset: off})
						if err != nil {
							t.Fatal(err)
						}
						for _, p := range page {
							got = append(got, p.Procedure.ID)
							if p.Lesions != 2 || p.AwaitingHist != 1 {
								t.Errorf("%s: %d lesions, %d awaiting; want 2 and 1", p.Procedure.ID, p.Lesions, p.AwaitingHist)
							}
						}
					}
					if !slices.Equal(got, wantIDs) {
						t.Errorf("sort %s (descending %v), read %s:\n got %v\nwant %v", sort, desc, how.name, got, wantIDs)
					}
				}
			}
		}
		// A filtered list read from a sample: E02's procedures by date.
		listReadings[2].use(t)
		var e02 []string
		for off := 0; off < 20; off += 4 {
			page, err := s.ListProcedures(ctx, ListQuery{CaseFilter: CaseFilter{OperatorID: "E02"}, Limit: 4, Offset: off})
			if err != nil {
				t.Fatal(err)
			}
			for _, p := range page {
				e02 = append(e02, p.Procedure.PerformedOn.Format("2006-01-02")+" "+p.Procedure.ID)
			}
		}
		var wantE02 []string
		for _, r := range rows {
			if r.op == "E02" {
				wantE02 = append(wantE02, r.date+" "+r.id)
			}
		}
		slices.Sort(wantE02)
		if !slices.Equal(e02, wantE02) {
			t.Errorf("E02's procedures by date, read from a sample:\n got %v\nwant %v", e02, wantE02)
		}
		if n, err := s.CountProcedures(ctx, ListQuery{CaseFilter: CaseFilter{OperatorID: "E02"}}); err != nil || n != 17 {
			t.Errorf("count of E02's procedures = %d, %v; want 17", n, err)
		}
		// A count is made again once anything changed.
		if err := s.SaveCase(ctx, utCase("NEW"), true); err != nil {
			t.Fatal(err)
		}
		if n, _ := s.CountProcedures(ctx, ListQuery{}); n != len(rows)+1 {
			t.Errorf("count after a new case = %d, want %d", n, len(rows)+1)
		}
		// So is a sample: the new case is found on its page.
		var byID []string
		for off := 0; off < len(rows)+3; off += 7 {
			page, err := s.ListProcedures(ctx, ListQuery{SortBy: "id", Limit: 7, Offset: off})
			if err != nil {
				t.Fatal(err)
			}
			for _, p := range page {
				byID = append(byID, p.Procedure.ID)
			}
		}
		wantByID := []string{"NEW"}
		for _, r := range rows {
			wantByID = append(wantByID, r.id)
		}
		slices.Sort(wantByID)
		if !slices.Equal(byID, wantByID) {
			t.Errorf("the list by id after a new case, read from a sample:\n got %v\nwant %v", byID, wantByID)
		}
	})
}

// TestListSampleRead shows how a server's sample of a list order is read:
// counting a list starts reading it, so a page far from both ends finds
// it read (not read again); pages asked at once while it is being read
// share one reading and are each right; and a store closed while a
// sample is being read stops the reading and closes without error. SQLite
// reads no sample: counting starts nothing.
func TestListSampleRead(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		loc := b.NewDB(t)
		s := utOpen(t, loc, Options{})
		utAddRoster(t, s)
		var want []string
		for i := range 30 {
			id := fmt.Sprintf("P%02d", i)
			if err := s.SaveCase(ctx, utCase(id), true); err != nil {
				t.Fatal(err)
			}
			want = append(want, id)
		}
		listReadings[2].use(t) // a sample of every third key, used past the first row
		q := ListQuery{SortBy: "id", Limit: 5, Offset: 10}
		sampling := func() *sampling {
			mark, err := s.ChangeMark(ctx)
			if err != nil {
				t.Fatal(err)
			}
			where, args := q.where()
			s.samples.mu.Lock()
			defer s.samples.mu.Unlock()
			if s.samples.mark != mark {
				return nil
			}
			return s.samples.samples[q.order()+selectionKey(where, args)]
		}
		page := func(q ListQuery) ([]string, error) {
			rows, err := s.ListProcedures(ctx, q)
			var ids []string
			for _, r := range rows {
				ids = append(ids, r.Procedure.ID)
			}
			return ids, err
		}
		if n, err := s.CountProcedures(ctx, q); err != nil || n != 30 {
			t.Fatalf("count = %d, %v; want 30", n, err)
		}
		started := sampling()
		if !s.OnServer() {
			if started != nil {
				t.Fatal("SQLite: counting the list started reading a sample")
			}
			return
		}
		if started == nil {
			t.Fatal("counting the list did not start reading its sample")
		}
		<-started.done
		if started.err != nil || len(started.keys) != 10 {
			t.Fatalf("sample: %d keys, %v; want 10 (every third of 30)", len(started.keys), started.err)
		}
		if ids, err := page(q); err != nil || !slices.Equal(ids, want[10:15]) {
			t.Fatalf("page at 10 = %v, %v; want %v", ids, err, want[10:15])
		}
		if sampling() != started {
			t.Error("the page read the sample again instead of using the one read when the list was counted")
		}

		// After a change, pages asked at once share one reading.
		if err := s.SaveCase(ctx, utCase("P00a"), true); err != nil {
			t.Fatal(err)
		}
		want = slices.Insert(want, 1, "P00a")
		errs := make(chan error, 8)
		for off := range 8 {
			go func() {
				q := q
				q.Offset = 2 + 3*off
				ids, err := page(q)
				if err == nil && !slices.Equal(ids, want[q.Offset:min(q.Offset+5, len(want))]) {
					err = fmt.Errorf("page at %d = %v, want %v", q.Offset, ids, want[q.Offset:min(q.Offset+5, len(want))])
				}
				errs <- err
			}()
		}
		for range 8 {
			if err := <-errs; err != nil {
				t.Error(err)
			}
		}
		if sp := sampling(); sp == nil || sp == started || len(sp.keys) != 11 {
			t.Errorf("after the change: sample %p (before %p), want a new one of 11 keys", sp, started)
		}

		// Closed while a sample is being read.
		if err := s.SaveCase(ctx, utCase("P00b"), true); err != nil {
			t.Fatal(err)
		}
		if _, err := s.CountProcedures(ctx, q); err != nil {
			t.Fatal(err)
		}
		if err := s.Close(); err != nil {
			t.Errorf("closing while a sample is read: %v", err)
		}
		s.samples.mu.Lock()
		for _, sp := range s.samples.samples {
			select {
			case <-sp.done:
			default:
				t.Error("a sample was still being read after Close returned")
			}
		}
		s.samples.mu.Unlock()
	})
}
