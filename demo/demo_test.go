package demo_test

import (
	"bytes"
	"context"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/store"
)

// collect runs Generate and returns deep copies of every case (Generate
// reuses its case between calls).
func collect(t *testing.T, opt demo.Options) []logbook.Case {
	t.Helper()
	var out []logbook.Case
	err := demo.Generate(opt, func(c *logbook.Case) error {
		cp := *c
		cp.Lesions = slices.Clone(c.Lesions)
		out = append(out, cp)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func roster() []logbook.RosterEntry {
	var r []logbook.RosterEntry
	for _, s := range demo.StaffList() {
		r = append(r, s.Entry)
	}
	return r
}

// load stores an invented unit in a new database, the way the demo command
// does (without recorded intervals, which need the report package).
func load(t testing.TB, dir string, opt demo.Options) *store.Store {
	t.Helper()
	now := func() time.Time { return demo.DefaultEnd.AddDate(0, 0, 14) }
	s, err := store.Open(context.Background(), filepath.Join(dir, "demo.db"), store.Options{Key: []byte("demo test key"), Now: now})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	settings := store.DefaultSettings
	settings.UnitName = demo.UnitName
	n, err := s.InsertCases(context.Background(), settings, roster(), "demo test", func(emit func(*logbook.Case) error) error {
		return demo.Generate(opt, emit)
	}, nil)
	if err != nil || n != opt.Procedures {
		t.Fatalf("InsertCases: %d, %v; want %d", n, err, opt.Procedures)
	}
	return s
}

func exports(t *testing.T, s *store.Store) map[store.Kind]string {
	t.Helper()
	out := map[store.Kind]string{}
	for _, k := range []store.Kind{store.Procedures, store.Lesions, store.Histology} {
		var b bytes.Buffer
		if _, err := s.Export(context.Background(), k, &b); err != nil {
			t.Fatal(err)
		}
		out[k] = b.String()
	}
	return out
}

func TestDeterministicForASeed(t *testing.T) {
	opt := demo.Options{Procedures: 800, Seed: 42, Key: []byte("k")}
	a := exports(t, load(t, t.TempDir(), opt))
	b := exports(t, load(t, t.TempDir(), opt))
	for k := range a {
		if a[k] != b[k] {
			t.Errorf("%s: two runs with seed 42 exported different files", k)
		}
		if strings.Count(a[k], "\n") < 100 {
			t.Errorf("%s export has only %d lines", k, strings.Count(a[k], "\n"))
		}
	}
	opt.Seed = 43
	if c := collect(t, opt); reflect.DeepEqual(c, collect(t, demo.Options{Procedures: 800, Seed: 42, Key: []byte("k")})) {
		t.Error("seeds 42 and 43 gave the same unit")
	}
}

// TestEveryCaseIsValid: the generator only invents records the program
// would accept — each passes validation on its last day, dates run in order
// over two years, ids are unique and lesions belong to their procedure.
func TestEveryCaseIsValid(t *testing.T) {
	end := demo.DefaultEnd
	cases := collect(t, demo.Options{Procedures: 3000, Seed: 5, Key: []byte("k")})
	if len(cases) != 3000 {
		t.Fatalf("%d cases, want 3000", len(cases))
	}
	ids := map[string]bool{}
	first, last := cases[0].PerformedOn, cases[len(cases)-1].PerformedOn
	if want := end.AddDate(-2, 0, 1); !first.Equal(want) || last.After(end) || last.Before(end.AddDate(0, 0, -2)) {
		t.Errorf("dates run from %s to %s; want %s to about %s", logbook.FormatDate(first), logbook.FormatDate(last), logbook.FormatDate(want), logbook.FormatDate(end))
	}
	for i, c := range cases {
		if ids[c.ID] {
			t.Fatalf("procedure id %s used twice", c.ID)
		}
		ids[c.ID] = true
		if i > 0 && c.PerformedOn.Before(cases[i-1].PerformedOn) {
			t.Fatalf("%s is dated before the case generated ahead of it", c.ID)
		}
		if ps := logbook.ValidateProcedure(c.Procedure, end); len(ps) > 0 {
			t.Errorf("%s: %v", c.ID, ps)
		}
		if !logbook.IsPatientKey(c.PatientKey) {
			t.Errorf("%s: patient key %q is not a pseudonym", c.ID, c.PatientKey)
		}
		if ps := logbook.ValidateLesionNumbers(c.Lesions); len(ps) > 0 {
			t.Errorf("%s: %v", c.ID, ps)
		}
		for _, l := range c.Lesions {
			if l.ProcedureID != c.ID {
				t.Errorf("%s: lesion %d names procedure %s", c.ID, l.LesionNo, l.ProcedureID)
			}
			if ps := logbook.ValidateLesion(l, end); len(ps) > 0 {
				t.Errorf("%s lesion %d: %v", c.ID, l.LesionNo, ps)
			}
			if !l.ReportedOn.IsZero() && l.ReportedOn.Before(c.PerformedOn) {
				t.Errorf("%s lesion %d reported before the procedure", c.ID, l.LesionNo)
			}
		}
	}
}

// eligibleASGE is the detection-eligible population of the asge-acg-2024
// profile (clinical-reference §2): age ≥45, screening, surveillance or
// diagnostic, exclusion none.
func eligibleASGE(p logbook.Procedure) bool {
	return p.Age >= 45 && p.Exclusion == logbook.ExclusionNone &&
		(p.Indication == logbook.Screening || p.Indication == logbook.Surveillance || p.Indication == logbook.Diagnostic)
}

// TestOperatorADRsSpread counts, per credited operator, eligible procedures
// with at least one adenoma (histology as recorded; pending counts as not an
// adenoma). The invented unit is meant to spread from about 15% to 45%; the
// bounds are loose because the recorded rate also reflects retrieval,
// pending results, trainee cases and age mix.
func TestOperatorADRsSpread(t *testing.T) {
	cases := collect(t, demo.Options{Procedures: 12000, Seed: 1, Key: []byte("k")})
	type tally struct{ n, k int }
	by := map[string]*tally{}
	for _, c := range cases {
		if !eligibleASGE(c.Procedure) {
			continue
		}
		tl := by[c.OperatorID]
		if tl == nil {
			tl = &tally{}
			by[c.OperatorID] = tl
		}
		tl.n++
		for _, l := range c.Lesions {
			if l.Histology.IsAdenoma() {
				tl.k++
				break
			}
		}
	}
	if len(by) != 8 {
		t.Fatalf("%d operators credited, want the 8 endoscopists", len(by))
	}
	adr := map[string]float64{}
	lo, hi := 1.0, 0.0
	for id, tl := range by {
		if strings.HasPrefix(id, "T") {
			t.Errorf("trainee %s credited as operator", id)
		}
		if tl.n < 400 {
			t.Errorf("%s has only %d eligible procedures", id, tl.n)
		}
		adr[id] = float64(tl.k) / float64(tl.n)
		lo, hi = min(lo, adr[id]), max(hi, adr[id])
	}
	t.Logf("ADR by operator: %v", adr)
	if lo < 0.08 || lo > 0.25 || hi < 0.33 || hi > 0.60 || hi-lo < 0.15 {
		t.Errorf("ADRs spread from %.3f to %.3f; want roughly 15%% to 45%% (lowest 8–25%%, highest 33–60%%, gap ≥15 points)", lo, hi)
	}
	if adr["E01"] <= adr["E08"] {
		t.Errorf("E01 (the strongest detector) %.3f is not above E08 %.3f", adr["E01"], adr["E08"])
	}
}

func TestTraineesAndPendingHistology(t *testing.T) {
	var trainees []string
	for _, s := range demo.StaffList() {
		if s.Entry.Role == logbook.RoleTrainee {
			trainees = append(trainees, s.Entry.ID)
		}
		if ps := logbook.ValidateRosterEntry(s.Entry); len(ps) > 0 {
			t.Errorf("roster entry %s: %v", s.Entry.ID, ps)
		}
	}
	if len(trainees) != 2 {
		t.Fatalf("roster has trainees %v, want two", trainees)
	}
	cases := collect(t, demo.Options{Procedures: 4000, Seed: 3, Key: []byte("k")})
	byTrainee := map[string]int{}
	levels := map[logbook.Supervision]bool{}
	pending, final := 0, 0
	for _, c := range cases {
		if c.TraineeID != "" {
			byTrainee[c.TraineeID]++
			levels[c.Supervision] = true
		}
		for _, l := range c.Lesions {
			switch {
			case l.Histology == logbook.HistPending:
				pending++
			case l.Histology.IsFinal():
				final++
			}
		}
	}
	for _, id := range trainees {
		if byTrainee[id] < 100 {
			t.Errorf("trainee %s held the scope in %d of 4000 cases", id, byTrainee[id])
		}
	}
	if len(levels) != len(logbook.Supervisions) {
		t.Errorf("supervision levels used: %v, want all three", levels)
	}
	if pending == 0 || pending > final/5 {
		t.Errorf("%d lesions pending and %d reported; want some pending, most reported", pending, final)
	}
	if !strings.Contains(demo.UnitName, "invented") {
		t.Errorf("unit name %q does not say it is invented", demo.UnitName)
	}
}

// TestDemoPassesCheck: a stored demo unit passes the integrity check and
// shows lesions awaiting histology in the pathology inbox.
func TestDemoPassesCheck(t *testing.T) {
	ctx := context.Background()
	s := load(t, t.TempDir(), demo.Options{Procedures: 1500, Seed: 9, Key: []byte("k")})
	findings, err := s.Check(ctx)
	if err != nil || len(findings) != 0 {
		t.Errorf("Check of the demo unit: %q, %v", findings, err)
	}
	if n, _ := s.CountAwaitingHistology(ctx); n == 0 {
		t.Error("the demo unit has no lesions awaiting histology")
	}
	if st, _ := s.Settings(ctx); st.UnitName != demo.UnitName {
		t.Errorf("unit name %q", st.UnitName)
	}
}
