package store

// Unit tests of the store, on both backends (EachBackend) unless a test
// says it is about SQLite files: opening and creating, pragmas, migration
// from an earlier schema, refusal of files and databases it must not touch,
// the change log, hand-entered cases, pathology results, the integrity
// check and the backup. Helpers here carry a "ut" prefix so they cannot
// clash with the reliability suite's helpers in the same package.

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"polypledger/internal/safefile"
	"polypledger/logbook"
)

// utNow is the fixed clock of these tests.
var utNow = time.Date(2026, 11, 15, 10, 30, 0, 0, time.UTC)

func utOpen(t *testing.T, path string, opt Options) *Store {
	t.Helper()
	if opt.Now == nil {
		opt.Now = func() time.Time { return utNow }
	}
	if opt.User == "" {
		opt.User = "tester"
	}
	s, err := Open(context.Background(), path, opt)
	if err != nil {
		t.Fatalf("Open(%s): %v", path, err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

// utRaw opens the file with the bare driver: no foreign keys, no guards, for
// planting what the program itself would refuse.
func utRaw(t *testing.T, path string) *sql.DB {
	t.Helper()
	db, err := sql.Open(driverName, "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

func utHash(t *testing.T, path string) [32]byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		return sha256.Sum256([]byte("unreadable: " + err.Error())) // a folder, or no file
	}
	return sha256.Sum256(b)
}

func utDate(s string) time.Time {
	d, err := logbook.ParseDate(s)
	if err != nil {
		panic(err)
	}
	return d
}

var utRoster = []logbook.RosterEntry{
	{ID: "E01", Name: "Dr Invented One", Role: logbook.RoleEndoscopist},
	{ID: "E02", Name: "Dr Invented Two", Role: logbook.RoleEndoscopist},
	{ID: "T01", Name: "Dr Invented Trainee", Role: logbook.RoleTrainee},
}

func utAddRoster(t *testing.T, s *Store) {
	t.Helper()
	for _, r := range utRoster {
		if err := s.SaveRosterEntry(context.Background(), r); err != nil {
			t.Fatal(err)
		}
	}
}

// utCase is a valid case with one reported adenoma and one lesion awaiting
// histology.
func utCase(id string) logbook.Case {
	p := logbook.NewProcedure()
	p.ID, p.PerformedOn, p.OperatorID = id, utDate("2026-10-01"), "E01"
	p.Age, p.Sex, p.Indication, p.Setting, p.Exclusion = 61, logbook.SexMale, logbook.Screening, logbook.Outpatient, logbook.ExclusionNone
	p.Extent, p.CaecalPhoto, p.WithdrawalSeconds = logbook.ExtentCaecum, logbook.Yes, 540
	p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = 2, 3, 3
	l1 := logbook.NewLesion()
	l1.ProcedureID, l1.LesionNo, l1.Segment, l1.SizeMM = id, 1, logbook.Ascending, 6
	l1.OpticalClass, l1.Confidence, l1.Resection = logbook.OpticalAdenoma, logbook.HighConfidence, logbook.ColdSnare
	l1.Retrieved, l1.SentToPathology = logbook.Yes, logbook.Yes
	l1.Histology, l1.Dysplasia, l1.ReportedOn = logbook.TubularAdenoma, logbook.DysplasiaLow, utDate("2026-10-09")
	l2 := logbook.NewLesion()
	l2.ProcedureID, l2.LesionNo, l2.Segment, l2.SizeMM = id, 2, logbook.Rectum, 3
	l2.OpticalClass, l2.Confidence, l2.Resection = logbook.OpticalHyperplastic, logbook.LowConfidence, logbook.ColdForceps
	l2.Retrieved, l2.SentToPathology, l2.Histology = logbook.Yes, logbook.Yes, logbook.HistPending
	return logbook.Case{Procedure: p, Lesions: []logbook.Lesion{l1, l2}}
}

func utPragma(t *testing.T, q querier, pragma string) string {
	t.Helper()
	var v string
	if err := q.QueryRowContext(context.Background(), "PRAGMA "+pragma).Scan(&v); err != nil {
		t.Fatalf("PRAGMA %s: %v", pragma, err)
	}
	return v
}

// utNames lists the database's indexes ("index") or triggers ("trigger")
// by name, as the backend keeps them; a server's primary-key indexes and
// its indexes of the stored order (SQLite's rowid) are left out.
func utNames(t *testing.T, s *Store, kind string) []string {
	t.Helper()
	query := "SELECT name FROM sqlite_master WHERE type = ? AND name NOT LIKE 'sqlite_%' ORDER BY name"
	if s.OnServer() {
		query = map[string]string{
			"index":   "SELECT indexname FROM pg_indexes WHERE schemaname = current_schema() AND indexname NOT LIKE '%_pkey' AND indexname NOT IN ('procedures_by_rowid', 'lesions_by_procedure_rowid') AND ? <> '' ORDER BY 1",
			"trigger": "SELECT tgname FROM pg_trigger WHERE tgrelid = 'change_log'::regclass AND NOT tgisinternal AND ? <> '' ORDER BY 1",
		}[kind]
	}
	rows, err := s.db.QueryContext(context.Background(), query, kind)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var n string
		if err := rows.Scan(&n); err != nil {
			t.Fatal(err)
		}
		out = append(out, n)
	}
	return out
}

func TestOpenCreatesDatabase(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		loc := b.NewDB(t)
		s := utOpen(t, loc, Options{})
		if v, err := s.Version(ctx); err != nil || v != SchemaVersion || SchemaVersion != 4 {
			t.Errorf("Version() = %d, %v; want %d (and SchemaVersion 4, the number of migrations)", v, err, SchemaVersion)
		}
		if got := utNames(t, s, "trigger"); len(got) < 2 {
			t.Errorf("triggers of a new database: %v", got)
		}
		if s.OnServer() != b.Server() {
			t.Errorf("OnServer() = %v", s.OnServer())
		}
		if strings.Contains(s.Location(), "@") || strings.Contains(s.Location(), "://") {
			t.Errorf("Location() = %q shows the URL", s.Location())
		}
		if findings, err := s.Check(ctx); err != nil || len(findings) > 0 {
			t.Errorf("Check of a new database: %q, %v", findings, err)
		}
	})
}

// TestOpenCreatesFile is about SQLite files: the folders made, the file's
// mode and its pragmas.
func TestOpenCreatesFile(t *testing.T) {
	sqliteOnly("file mode and pragmas")
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "new", "folder", "unit.db")
	s := utOpen(t, path, Options{})

	st, err := os.Stat(path)
	if err != nil {
		t.Fatalf("database file not created: %v", err)
	}
	if m := st.Mode().Perm(); m != 0o600 {
		t.Errorf("database file mode %o, want 600 (owner only)", m)
	}
	if s.Path() != path {
		t.Errorf("Path() = %q, want %q", s.Path(), path)
	}
	if v, err := s.Version(ctx); err != nil || v != SchemaVersion {
		t.Errorf("Version() = %d, %v; want %d", v, err, SchemaVersion)
	}
	if got := utPragma(t, s.db, "journal_mode"); got != "wal" {
		t.Errorf("journal_mode = %q, want wal", got)
	}
	if got := utPragma(t, s.db, "foreign_keys"); got != "1" {
		t.Errorf("foreign_keys = %q, want 1", got)
	}
	if got := utPragma(t, s.db, "application_id"); got != "1349275751" { // 0x506c5067, "PlPg"
		t.Errorf("application_id = %s, want 1349275751", got)
	}
	// Foreign keys are enforced on every pooled connection, not just one.
	for i := 0; i < 3; i++ {
		_, err := s.db.ExecContext(ctx, "INSERT INTO lesions (procedure_id, lesion_no) VALUES ('NOPE', ?)", i+1)
		if err == nil || !strings.Contains(err.Error(), "FOREIGN KEY") {
			t.Errorf("lesion for a missing procedure: error %v, want a foreign key failure", err)
		}
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	// Reopening an existing, current database changes nothing about it.
	s2 := utOpen(t, path, Options{})
	if v, _ := s2.Version(ctx); v != SchemaVersion {
		t.Errorf("reopened version %d", v)
	}
	if _, err := Open(ctx, "", Options{}); err == nil {
		t.Error("Open with no path succeeded")
	}
}

// TestOpenReadOnlyNeedsExistingFile: reading a file that does not exist,
// or a server database holding no unit yet, is refused, and creates
// nothing.
func TestOpenReadOnlyNeedsExistingFile(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		loc := b.NewDB(t)
		_, err := Open(context.Background(), loc, Options{ReadOnly: true})
		want := map[bool]string{false: "does not exist", true: "holds no polypledger data yet"}[b.Server()]
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Fatalf("read-only open of a missing database: %v, want %q", err, want)
		}
		if n := b.Tables(t, loc); n != 0 {
			t.Errorf("read-only open created %d tables", n)
		}
		if _, err := os.Stat(loc); !b.Server() && !errors.Is(err, os.ErrNotExist) {
			t.Error("read-only open created the file")
		}
	})
}

// TestMigrateFromSchema1 makes a database with the first schema only, fills
// it, and opens it with this program: it must reach the current schema with
// every row intact and the indexes and guards of the current schema in place.
func TestMigrateFromSchema1(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) { testMigrateFromSchema1(t, b) })
}

func testMigrateFromSchema1(t *testing.T, b TestBackend) {
	ctx := context.Background()
	path := b.NewDB(t)
	old := utOpen(t, path, Options{migrateTo: 1})
	if v, _ := old.Version(ctx); v != 1 {
		t.Fatalf("migrateTo 1 gave schema %d", v)
	}
	if idx := utNames(t, old, "index"); len(idx) != 0 {
		t.Fatalf("schema 1 already has indexes %v", idx)
	}
	utAddRoster(t, old)
	want := []logbook.Case{utCase("P1"), utCase("P2")}
	for _, c := range want {
		if err := old.SaveCase(ctx, c, true); err != nil {
			t.Fatal(err)
		}
	}
	oldLog, err := old.ChangeLog(ctx, 100)
	if err != nil {
		t.Fatal(err)
	}
	if err := old.Close(); err != nil {
		t.Fatal(err)
	}

	// A read-only open refuses an old schema rather than reading it half-way.
	before := b.Fingerprint(t, path)
	if _, err := Open(ctx, path, Options{ReadOnly: true}); err == nil || !strings.Contains(err.Error(), "must be upgraded") {
		t.Errorf("read-only open of schema 1: %v", err)
	}
	if b.Fingerprint(t, path) != before {
		t.Error("read-only open changed the schema-1 database")
	}

	s := utOpen(t, path, Options{})
	if v, _ := s.Version(ctx); v != SchemaVersion {
		t.Fatalf("after migration: schema %d, want %d", v, SchemaVersion)
	}
	for _, w := range want {
		got, err := s.Case(ctx, w.ID)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, w) {
			t.Errorf("case %s after migration:\n got %+v\nwant %+v", w.ID, got, w)
		}
	}
	roster, err := s.Roster(ctx)
	if err != nil || !reflect.DeepEqual(roster, utRoster) {
		t.Errorf("roster after migration = %+v, %v", roster, err)
	}
	newLog, err := s.ChangeLog(ctx, 100)
	if err != nil || !reflect.DeepEqual(newLog, oldLog) {
		t.Errorf("change log changed by the migration: %d entries before, %d after (%v)", len(oldLog), len(newLog), err)
	}
	wantIdx := []string{"lesions_awaiting", "procedures_by_age", "procedures_by_date", "procedures_by_extent",
		"procedures_by_indication", "procedures_by_operator", "procedures_by_operator_id", "procedures_by_trainee"}
	if got := utNames(t, s, "index"); !reflect.DeepEqual(got, wantIdx) {
		t.Errorf("indexes after migration = %v, want %v", got, wantIdx)
	}
	wantTriggers := []string{"change_log_no_delete", "change_log_no_update"}
	if b.Server() {
		wantTriggers = []string{"change_log_no_delete", "change_log_no_truncate", "change_log_no_update"}
	}
	if got := utNames(t, s, "trigger"); !reflect.DeepEqual(got, wantTriggers) {
		t.Errorf("triggers after migration = %v, want %v", got, wantTriggers)
	}
	if findings, err := s.Check(ctx); err != nil || len(findings) != 0 {
		t.Errorf("Check after migration: %v, %v", findings, err)
	}
}

// TestRefuseNewerSchema: a database written by a newer program is refused
// for reading and writing, and left as it was.
func TestRefuseNewerSchema(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		path := b.NewDB(t)
		s := utOpen(t, path, Options{})
		utAddRoster(t, s)
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		newer := SchemaVersion + 1
		if b.Server() {
			b.Exec(t, path, fmt.Sprintf("UPDATE polypledger SET schema_version = %d", newer))
		} else {
			b.Exec(t, path, fmt.Sprintf("PRAGMA user_version = %d", newer))
		}
		before := b.Fingerprint(t, path)
		want := fmt.Sprintf("newer version of polypledger (schema %d; this program knows up to %d)", newer, SchemaVersion)
		for _, ro := range []bool{false, true} {
			_, err := Open(ctx, path, Options{ReadOnly: ro})
			if err == nil || !strings.Contains(err.Error(), want) {
				t.Errorf("Open (read-only %v) of a newer database: %v", ro, err)
			}
		}
		if b.Fingerprint(t, path) != before {
			t.Error("the newer database was modified")
		}
	})
}

// TestRefuseAnotherProgramsServerDatabase: a server database holding
// another program's tables is refused, for reading and writing, and left
// as it was.
func TestRefuseAnotherProgramsServerDatabase(t *testing.T) {
	b := Backends[1]
	testCluster(t)
	loc := b.NewDB(t)
	b.Exec(t, loc, "CREATE TABLE invoices (id int PRIMARY KEY, total numeric)", "INSERT INTO invoices VALUES (1, 9.5)")
	before := b.Fingerprint(t, loc)
	for _, ro := range []bool{false, true} {
		_, err := Open(context.Background(), loc, Options{ReadOnly: ro})
		if err == nil || !strings.Contains(err.Error(), "holds 1 table of another program, not a polypledger unit; it was left untouched") {
			t.Errorf("Open (read-only %v) of another program's database: %v", ro, err)
		}
	}
	if err := Create(context.Background(), loc, Options{}, nil); err == nil || !strings.Contains(err.Error(), "another program") {
		t.Errorf("Create in another program's database: %v", err)
	}
	if b.Fingerprint(t, loc) != before {
		t.Error("another program's database was changed")
	}
}

func TestRefuseNonDatabase(t *testing.T) {
	sqliteOnly("a text file offered as a database")
	path := filepath.Join(t.TempDir(), "notes.db")
	text := strings.Repeat("These are somebody's notes, not a database.\n", 50)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Open(context.Background(), path, Options{})
	if err == nil || !strings.Contains(err.Error(), "is not a polypledger database") || !strings.Contains(err.Error(), "left untouched") {
		t.Errorf("Open of a text file: %v", err)
	}
	b, _ := os.ReadFile(path)
	if string(b) != text {
		t.Error("the text file was modified")
	}
	for _, suffix := range []string{"-wal", "-shm"} {
		if _, err := os.Stat(path + suffix); err == nil {
			t.Errorf("a %s file was left beside the text file", suffix)
		}
	}
}

// utLastChange returns the newest change-log entry with its JSON decoded.
func utLastChange(t *testing.T, s *Store) (ChangeLogEntry, map[string]any, map[string]any) {
	t.Helper()
	es, err := s.ChangeLog(context.Background(), 1)
	if err != nil || len(es) != 1 {
		t.Fatalf("ChangeLog: %v, %v", es, err)
	}
	e := es[0]
	decode := func(s string) map[string]any {
		if s == "" {
			return nil
		}
		var m map[string]any
		if err := json.Unmarshal([]byte(s), &m); err != nil {
			t.Fatalf("change log JSON %q: %v", s, err)
		}
		return m
	}
	return e, decode(e.Old), decode(e.New)
}

// lookup follows a path of keys and indexes through decoded JSON.
func lookup(v any, path ...any) any {
	for _, p := range path {
		switch k := p.(type) {
		case string:
			m, _ := v.(map[string]any)
			v = m[k]
		case int:
			a, _ := v.([]any)
			if k >= len(a) {
				return nil
			}
			v = a[k]
		}
	}
	return v
}

// TestChangeLogRecordsEveryChange makes one change of each kind and checks
// the row each one adds: when, who, what, and the record before and after.
func TestChangeLogRecordsEveryChange(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		s := utOpen(t, b.NewDB(t), Options{User: "dr.lead", Host: "room-3"})
		count := func() int {
			es, err := s.ChangeLog(ctx, 1000)
			if err != nil {
				t.Fatal(err)
			}
			return len(es)
		}
		type step struct {
			name           string
			do             func() error
			action, record string
			old, new       [][]any // (path..., want) pairs checked in the decoded JSON
		}
		steps := []step{
			{"roster insert", func() error { return s.SaveRosterEntry(ctx, utRoster[0]) }, "insert", "roster E01",
				nil, [][]any{{"id", "E01"}, {"role", "endoscopist"}}},
			{"roster update", func() error {
				r := utRoster[0]
				r.Retired = true
				return s.SaveRosterEntry(ctx, r)
			}, "update", "roster E01", [][]any{{"retired", false}}, [][]any{{"retired", true}}},
			{"settings", func() error {
				st := DefaultSettings
				st.UnitName = "Invented Unit"
				return s.SaveSettings(ctx, st)
			}, "update", "settings", [][]any{{"unit_name", DefaultSettings.UnitName}}, [][]any{{"unit_name", "Invented Unit"}}},
			{"case insert", func() error { return s.SaveCase(ctx, utCase("P1"), true) }, "insert", "procedure P1",
				nil, [][]any{{"procedure", "age", "61"}, {"lesions", 1, "histology", "pending"}}},
			{"case update", func() error {
				c := utCase("P1")
				c.Age = 62
				return s.SaveCase(ctx, c, false)
			}, "update", "procedure P1", [][]any{{"procedure", "age", "61"}}, [][]any{{"procedure", "age", "62"}}},
			{"histology result", func() error {
				return s.RecordHistology(ctx, logbook.HistologyResult{ProcedureID: "P1", LesionNo: 2, Histology: logbook.HistHyperplastic, Dysplasia: logbook.DysplasiaNone, ReportedOn: utDate("2026-10-20")}, false)
			}, "update", "lesion P1#2", [][]any{{"histology", "pending"}}, [][]any{{"histology", "hyperplastic"}, {"reported_on", "2026-10-20"}}},
			{"case delete", func() error { return s.DeleteCase(ctx, "P1") }, "delete", "procedure P1",
				[][]any{{"procedure", "age", "62"}, {"lesions", 1, "histology", "hyperplastic"}}, nil},
		}
		for _, st := range steps {
			n := count()
			if err := st.do(); err != nil {
				t.Fatalf("%s: %v", st.name, err)
			}
			if got := count(); got != n+1 {
				t.Errorf("%s: change log grew by %d rows, want 1", st.name, got-n)
			}
			e, old, nw := utLastChange(t, s)
			if e.Action != st.action || e.Record != st.record || e.User != "dr.lead" || e.Host != "room-3" || !e.At.Equal(utNow) {
				t.Errorf("%s: entry %q %q by %q on %q at %v; want %q %q by dr.lead on room-3 at %v", st.name, e.Action, e.Record, e.User, e.Host, e.At, st.action, st.record, utNow)
			}
			for _, side := range []struct {
				label string
				doc   map[string]any
				want  [][]any
			}{{"old", old, st.old}, {"new", nw, st.new}} {
				if side.want == nil && side.doc != nil {
					t.Errorf("%s: %s = %v, want none", st.name, side.label, side.doc)
				}
				if side.want != nil && side.doc == nil {
					t.Errorf("%s: %s is empty", st.name, side.label)
				}
				for _, pw := range side.want {
					path, want := pw[:len(pw)-1], pw[len(pw)-1]
					if got := lookup(side.doc, path...); got != want {
						t.Errorf("%s: %s%v = %v, want %v", st.name, side.label, path, got, want)
					}
				}
			}
		}
		// A save that changes nothing writes nothing.
		n := count()
		if err := s.SaveRosterEntry(ctx, logbook.RosterEntry{ID: "E01", Name: utRoster[0].Name, Role: logbook.RoleEndoscopist, Retired: true}); err != nil {
			t.Fatal(err)
		}
		if count() != n {
			t.Error("an unchanged roster entry was logged")
		}
	})
}

func TestChangeLogIsAppendOnly(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		s := utOpen(t, b.NewDB(t), Options{})
		utAddRoster(t, s)
		before, err := s.ChangeLog(ctx, 100)
		if err != nil || len(before) != len(utRoster) {
			t.Fatalf("change log %v, %v", before, err)
		}
		guarded := []string{
			"UPDATE change_log SET os_user = 'someone else'",
			"UPDATE change_log SET new = NULL WHERE id = 1",
			"DELETE FROM change_log",
			"DELETE FROM change_log WHERE id = 1",
		}
		if b.Server() {
			guarded = append(guarded, "TRUNCATE change_log")
		}
		for _, q := range guarded {
			_, err := s.db.ExecContext(ctx, q)
			if err == nil || !strings.Contains(err.Error(), "the change log is append-only") {
				t.Errorf("%s: error %v, want the append-only guard", q, err)
			}
		}
		after, _ := s.ChangeLog(ctx, 100)
		if !reflect.DeepEqual(before, after) {
			t.Error("the change log changed")
		}
	})
}

func TestSaveCaseRefusals(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		s := utOpen(t, b.NewDB(t), Options{})
		utAddRoster(t, s)
		if err := s.SaveCase(ctx, utCase("P1"), true); err != nil {
			t.Fatal(err)
		}
		tests := []struct {
			name       string
			c          func() logbook.Case
			isNew      bool
			field, why string
		}{
			{"id already used", func() logbook.Case { return utCase("P1") }, true, "procedure_id", "P1 is already in the logbook"},
			{"lesion of another procedure", func() logbook.Case {
				c := utCase("P2")
				c.Lesions[1].ProcedureID = "P9"
				return c
			}, true, "procedure_id", "lesion 2 belongs to P9, not P2"},
			{"lesion number used twice", func() logbook.Case {
				c := utCase("P2")
				c.Lesions[1].LesionNo = 1
				return c
			}, true, "lesion_no", "1 is used twice in procedure P2"},
			{"operator not on the roster", func() logbook.Case {
				c := utCase("P2")
				c.OperatorID = "E99"
				return c
			}, true, "operator_id", "E99 is not on the unit roster"},
			{"trainee not on the roster", func() logbook.Case {
				c := utCase("P2")
				c.TraineeID = "T99"
				return c
			}, true, "trainee_id", "T99 is not on the unit roster"},
			{"lesion rule", func() logbook.Case {
				c := utCase("P2")
				c.Lesions[0].Dysplasia = ""
				return c
			}, true, "dysplasia", "lesion 1: must be low or high for tubular_adenoma"},
			{"procedure in the future", func() logbook.Case {
				c := utCase("P2")
				c.PerformedOn = utDate("2026-11-16")
				return c
			}, true, "performed_on", "2026-11-16 is in the future"},
		}
		for _, tt := range tests {
			t.Run(tt.name, func(t *testing.T) {
				before, _ := s.ChangeLog(ctx, 1000)
				err := s.SaveCase(ctx, tt.c(), tt.isNew)
				var ve *ValidationError
				if !errors.As(err, &ve) {
					t.Fatalf("SaveCase: %v, want a ValidationError", err)
				}
				if !slices.Contains(ve.Problems, logbook.FieldError{Field: tt.field, Reason: tt.why}) {
					t.Errorf("problems %q do not include %s: %s", ve.Problems, tt.field, tt.why)
				}
				after, _ := s.ChangeLog(ctx, 1000)
				if len(after) != len(before) {
					t.Error("a refused case was logged")
				}
				if _, err := s.Case(ctx, "P2"); !errors.Is(err, ErrNotFound) {
					t.Errorf("a refused case was stored: %v", err)
				}
			})
		}
		if err := s.SaveCase(ctx, utCase("P7"), false); !errors.Is(err, ErrNotFound) {
			t.Errorf("update of a missing case: %v, want ErrNotFound", err)
		}
		if err := s.DeleteCase(ctx, "P7"); !errors.Is(err, ErrNotFound) {
			t.Errorf("delete of a missing case: %v, want ErrNotFound", err)
		}
		// Deleting a case removes its lesions too.
		if err := s.DeleteCase(ctx, "P1"); err != nil {
			t.Fatal(err)
		}
		var lesions int
		s.db.QueryRowContext(ctx, "SELECT count(*) FROM lesions").Scan(&lesions)
		if lesions != 0 {
			t.Errorf("%d lesions left after deleting their procedure", lesions)
		}
	})
}

func TestRecordHistology(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		s := utOpen(t, b.NewDB(t), Options{})
		utAddRoster(t, s)
		if err := s.SaveCase(ctx, utCase("P1"), true); err != nil {
			t.Fatal(err)
		}
		if n, _ := s.CountAwaitingHistology(ctx); n != 1 {
			t.Fatalf("awaiting histology = %d, want 1", n)
		}
		res := func(no int, h logbook.Histology, d logbook.Dysplasia) logbook.HistologyResult {
			return logbook.HistologyResult{ProcedureID: "P1", LesionNo: no, Histology: h, Dysplasia: d, ReportedOn: utDate("2026-10-15")}
		}
		refused := func(err error, field, why string) {
			t.Helper()
			var ve *ValidationError
			if !errors.As(err, &ve) || !slices.Contains(ve.Problems, logbook.FieldError{Field: field, Reason: why}) {
				t.Errorf("error %v, want %s: %s", err, field, why)
			}
		}
		refused(s.RecordHistology(ctx, res(9, logbook.HistSSL, logbook.DysplasiaNone), false), "lesion_no", "procedure P1 has no lesion 9")
		r := res(1, logbook.HistSSL, logbook.DysplasiaNone)
		r.ProcedureID = "P404"
		refused(s.RecordHistology(ctx, r, false), "procedure_id", "P404 is not in the logbook")
		refused(s.RecordHistology(ctx, res(1, logbook.VillousAdenoma, logbook.DysplasiaHigh), false),
			"histology", "lesion already has histology tubular_adenoma (reported 2026-10-09); use --update to correct it")
		refused(s.RecordHistology(ctx, res(2, logbook.TubularAdenoma, ""), false), "dysplasia", "must be low or high for tubular_adenoma")

		if err := s.RecordHistology(ctx, res(2, logbook.HistSSL, logbook.DysplasiaNone), false); err != nil {
			t.Fatal(err)
		}
		if err := s.RecordHistology(ctx, res(1, logbook.VillousAdenoma, logbook.DysplasiaHigh), true); err != nil {
			t.Fatalf("correction: %v", err)
		}
		c, err := s.Case(ctx, "P1")
		if err != nil {
			t.Fatal(err)
		}
		got := [][3]string{}
		for _, l := range c.Lesions {
			got = append(got, [3]string{string(l.Histology), string(l.Dysplasia), logbook.FormatDate(l.ReportedOn)})
		}
		want := [][3]string{{"villous_adenoma", "high", "2026-10-15"}, {"ssl", "none", "2026-10-15"}}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("lesions after results = %v, want %v", got, want)
		}
		if n, _ := s.CountAwaitingHistology(ctx); n != 0 {
			t.Errorf("awaiting histology = %d, want 0", n)
		}
	})
}

func TestCheckFindsPlantedProblems(t *testing.T) {
	EachBackend(t, testCheckFindsPlantedProblems)
}

func testCheckFindsPlantedProblems(t *testing.T, b TestBackend) {
	ctx := context.Background()
	path := b.NewDB(t)
	s := utOpen(t, path, Options{})
	utAddRoster(t, s)
	if err := s.SaveCase(ctx, utCase("P1"), true); err != nil {
		t.Fatal(err)
	}
	if findings, err := s.Check(ctx); err != nil || len(findings) != 0 {
		t.Fatalf("Check of a sound database: %q, %v", findings, err)
	}

	// Plant, with a bare connection that has no foreign keys: a procedure
	// with an impossible age and an operator missing from the roster, an
	// adenoma without a grade, a lesion whose procedure does not exist, and
	// a missing change-log guard.
	dropGuard := "DROP TRIGGER change_log_no_delete"
	if b.Server() {
		dropGuard += " ON change_log"
	}
	b.Exec(t, path,
		"INSERT INTO procedures (id, performed_on, operator_id, age, sex, indication, extent) VALUES ('BAD1', '2026-09-01', 'ZZ', 200, 'F', 'screening', 'caecum')",
		"UPDATE lesions SET dysplasia = NULL WHERE procedure_id = 'P1' AND lesion_no = 1",
		"INSERT INTO lesions (procedure_id, lesion_no, segment, size_mm) VALUES ('GHOST', 1, 'rectum', 3)",
		dropGuard)
	findings, err := s.Check(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"change log: the append-only guards are missing",
		"procedure BAD1: age: 200 is outside 18–110",
		"procedure BAD1: ZZ is not on the roster",
		"lesion P1#1: dysplasia: must be low or high for tubular_adenoma",
	} {
		if !slices.Contains(findings, want) {
			t.Errorf("Check did not report %q; findings:\n%s", want, strings.Join(findings, "\n"))
		}
	}
	var fk int
	for _, f := range findings {
		switch {
		case strings.HasPrefix(f, "foreign key: a row of lesions") && strings.HasSuffix(f, "points to a missing procedures"),
			f == "foreign key: lesion GHOST#1 points to a missing procedure":
			fk++
		case strings.HasPrefix(f, "foreign key: a row of procedures") && strings.HasSuffix(f, "points to a missing roster"),
			f == "foreign key: procedure BAD1 points to a missing roster entry":
			fk++
		}
	}
	if fk != 2 {
		t.Errorf("Check found %d of the 2 broken references; findings:\n%s", fk, strings.Join(findings, "\n"))
	}
}

// TestCheckNamesUnreadableValuesAndGoesOn plants stored values the program
// cannot read in many procedures and lesions (more than one read batch):
// Check names each one's record and column and goes on to the records
// after it, and the ordinary stream stops with an error naming the first
// record, not some other one.
func TestCheckNamesUnreadableValuesAndGoesOn(t *testing.T) {
	EachBackend(t, testCheckNamesUnreadableValuesAndGoesOn)
}

func testCheckNamesUnreadableValuesAndGoesOn(t *testing.T, b TestBackend) {
	ctx := context.Background()
	path := b.NewDB(t)
	s := utOpen(t, path, Options{})
	utAddRoster(t, s)
	for i := range 1200 {
		if err := s.SaveCase(ctx, utCase(fmt.Sprintf("P%04d", i)), true); err != nil {
			t.Fatal(err)
		}
	}
	// SQLite keeps text in a number column; a server refuses it, so
	// there a text column holds the unreadable value of P0005 instead.
	p0005 := []string{"UPDATE procedures SET age = 'abc' WHERE id = 'P0005'", `procedure P0005: stored age: "abc" is not a whole number of zero or more`}
	if b.Server() {
		p0005 = []string{"UPDATE procedures SET sex = 'Q' WHERE id = 'P0005'", `procedure P0005: stored sex: "Q" is not one of F, M, X, U`}
	}
	b.Exec(t, path,
		p0005[0],
		"UPDATE procedures SET performed_on = '2026-13-45' WHERE id = 'P0700'",
		"UPDATE lesions SET segment = 'x' WHERE procedure_id = 'P0003' AND lesion_no = 2",
		"UPDATE lesions SET size_mm = 900 WHERE procedure_id = 'P1100' AND lesion_no = 1")
	findings, err := s.Check(ctx)
	if err != nil {
		t.Fatalf("Check stopped: %v", err)
	}
	want := []string{
		p0005[1],
		`procedure P0700: stored performed_on: "2026-13-45" is not a real calendar date (YYYY-MM-DD)`,
		`lesion P0003#2: stored segment: "x" is not one of caecum, ascending, hepatic_flexure, transverse, splenic_flexure, descending, sigmoid, rectum`,
		"lesion P1100#1: size_mm: 900 is outside 1–150",
	}
	slices.Sort(findings)
	slices.Sort(want)
	if !reflect.DeepEqual(findings, want) {
		t.Errorf("findings\n got %q\nwant %q", findings, want)
	}
	err = s.ForEachCase(ctx, CaseFilter{}, func(*logbook.Case) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "P0003#2: stored segment") && !strings.Contains(err.Error(), "procedure P0005: stored") {
		t.Errorf("the stream's error %v does not name the unreadable record", err)
	}
}

func TestBackup(t *testing.T) {
	sqliteOnly("the online copy of a file, and the files a backup may not replace")
	ctx := context.Background()
	dir := t.TempDir()
	s := utOpen(t, filepath.Join(dir, "unit.db"), Options{})
	utAddRoster(t, s)
	for _, id := range []string{"P1", "P2", "P3"} {
		if err := s.SaveCase(ctx, utCase(id), true); err != nil {
			t.Fatal(err)
		}
	}
	out := filepath.Join(dir, "copy.db")
	if err := s.Backup(ctx, out, false); err != nil {
		t.Fatal(err)
	}
	st, err := os.Stat(out)
	if err != nil {
		t.Fatal(err)
	}
	if m := st.Mode().Perm(); m != 0o600 {
		t.Errorf("backup mode %o, want 600", m)
	}
	if _, err := os.Stat(out + ".partial"); err == nil {
		t.Error("the temporary .partial file was left behind")
	}
	b := utOpen(t, out, Options{ReadOnly: true})
	if findings, err := b.Check(ctx); err != nil || len(findings) != 0 {
		t.Errorf("Check of the backup: %q, %v", findings, err)
	}
	for _, id := range []string{"P1", "P2", "P3"} {
		orig, _ := s.Case(ctx, id)
		copied, err := b.Case(ctx, id)
		if err != nil || !reflect.DeepEqual(orig, copied) {
			t.Errorf("case %s in the backup differs: %v", id, err)
		}
	}
	origLog, _ := s.ChangeLog(ctx, 1000)
	copyLog, _ := b.ChangeLog(ctx, 1000)
	if !reflect.DeepEqual(origLog, copyLog) {
		t.Error("the backup's change log differs")
	}
	// What a backup may not replace, even when told to replace files.
	notes := filepath.Join(dir, "notes.txt")
	os.WriteFile(notes, []byte("somebody's notes"), 0o600)
	for _, tc := range []struct {
		out     string
		replace bool
		want    string
	}{
		{out, false, "is a database; it is never replaced"},
		{out, true, "is a database; it is never replaced"},
		{s.Path(), true, "is the database itself"},
		{filepath.Join(dir, ".", "unit.db"), true, "is the database itself"},
		{s.Path() + "-wal", true, "belongs to the database"},
		{s.Path() + "-shm", true, "belongs to the database"},
		{notes, false, "already exists; choose another name"},
		{dir, true, "is a folder"},
	} {
		before := utHash(t, tc.out)
		err := s.Backup(ctx, tc.out, tc.replace)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("backup to %s (replace %v): %v, want it refused saying %q", tc.out, tc.replace, err, tc.want)
		}
		if utHash(t, tc.out) != before {
			t.Errorf("a refused backup changed %s", tc.out)
		}
	}
	// A file that is not a database may be replaced when asked.
	if err := s.Backup(ctx, notes, true); err != nil {
		t.Errorf("backup replacing a text file when asked: %v", err)
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if safefile.IsTemp(e.Name()) {
			t.Errorf("a temporary file %s was left behind", e.Name())
		}
	}
}

func TestSettingsRoundTrip(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		s := utOpen(t, b.NewDB(t), Options{})
		got, err := s.Settings(ctx)
		if err != nil || got != DefaultSettings {
			t.Fatalf("settings of a new database = %+v, %v; want the defaults", got, err)
		}
		want := Settings{UnitName: "Invented Unit", DefaultStandard: "bsg-jag-2016", DefaultGuideline: "bsg-2020", DiscardMinCases: 50, EligibilityRules: "esge-2022"}
		if err := s.SaveSettings(ctx, want); err != nil {
			t.Fatal(err)
		}
		if got, _ := s.Settings(ctx); got != want {
			t.Errorf("settings = %+v, want %+v", got, want)
		}
		for _, bad := range []Settings{{UnitName: " ", DiscardMinCases: 1}, {UnitName: "U", DiscardMinCases: 0}} {
			var ve *ValidationError
			if err := s.SaveSettings(ctx, bad); !errors.As(err, &ve) {
				t.Errorf("SaveSettings(%+v) = %v, want a ValidationError", bad, err)
			}
		}
	})
}

// TestOpenOursWithHeaderInLog: a polypledger database that an older
// program was killed while creating — the main file holds no more than
// SQLite's header, the schema and a procedure are still in the write-ahead
// log — is recognised as ours (from a private copy of the file and its
// log) and opened with its data.
func TestOpenOursWithHeaderInLog(t *testing.T) {
	sqliteOnly("a file whose header is still in its write-ahead log")
	ctx := context.Background()
	dir := t.TempDir()
	src := filepath.Join(dir, "src.db")
	raw := utRaw(t, src)
	raw.SetMaxOpenConns(1)
	ms, err := migrations()
	if err != nil {
		t.Fatal(err)
	}
	stmts := []string{"PRAGMA journal_mode=WAL", "PRAGMA wal_autocheckpoint=0"}
	own := (&sqliteBackend{}).steps()
	for _, m := range ms {
		stmts = append(stmts, m.sql)
		if own[m.version] != "" {
			stmts = append(stmts, own[m.version])
		}
	}
	stmts = append(stmts, fmt.Sprintf("PRAGMA user_version = %d", len(ms)), fmt.Sprintf("PRAGMA application_id = %d", applicationID),
		"INSERT INTO roster (id, name, role) VALUES ('E01', '', 'endoscopist')",
		"INSERT INTO procedures (id, performed_on, operator_id, age, sex, indication, extent) VALUES ('P1', '2026-01-05', 'E01', 60, 'F', 'screening', 'caecum')")
	for _, q := range stmts {
		if _, err := raw.ExecContext(ctx, q); err != nil {
			t.Fatalf("%.60s: %v", q, err)
		}
	}
	path := filepath.Join(dir, "unit.db")
	for _, suf := range []string{"", "-wal"} {
		b, err := os.ReadFile(src + suf)
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(path+suf, b, 0o600)
	}
	raw.Close()
	h, err := readHeader(path)
	if err != nil || h.applicationID == applicationID || !h.wal {
		t.Fatalf("the main file already says it is ours (%+v, %v): the test would prove nothing", h, err)
	}
	s := utOpen(t, path, Options{})
	if c, err := s.Case(ctx, "P1"); err != nil || c.OperatorID != "E01" {
		t.Errorf("the procedure in the log: %+v, %v", c.Procedure, err)
	}
}

// TestOpenersOfAnOldDatabaseMigrateOnce opens a schema-1 database from
// several connection pools at once, as several programs starting
// together would: each upgrade step is applied once, and every opener
// succeeds.
func TestOpenersOfAnOldDatabaseMigrateOnce(t *testing.T) {
	EachBackend(t, testOpenersOfAnOldDatabaseMigrateOnce)
}

func testOpenersOfAnOldDatabaseMigrateOnce(t *testing.T, b TestBackend) {
	ctx := context.Background()
	for round := range 5 {
		path := b.NewDB(t)
		old := utOpen(t, path, Options{migrateTo: 1})
		utAddRoster(t, old)
		if err := old.Close(); err != nil {
			t.Fatal(err)
		}
		errs := make(chan error, 4)
		for range 4 {
			go func() {
				s, err := Open(ctx, path, Options{BusyTimeout: time.Minute})
				if err == nil {
					err = s.Close()
				}
				errs <- err
			}()
		}
		for range 4 {
			if err := <-errs; err != nil {
				t.Errorf("round %d: an opener failed: %v", round, err)
			}
		}
		s := utOpen(t, path, Options{ReadOnly: true})
		if v, _ := s.Version(ctx); v != SchemaVersion {
			t.Errorf("round %d: schema %d after the openers, want %d", round, v, SchemaVersion)
		}
		if findings, err := s.Check(ctx); err != nil || len(findings) > 0 {
			t.Errorf("round %d: check: %q, %v", round, findings, err)
		}
	}
}

// TestChangeMarkSeesOtherWriters: the change mark a workstation watches
// grows with every change another program stores — a case, a result, an
// import — and stays put while others only read.
func TestChangeMarkSeesOtherWriters(t *testing.T) {
	EachBackend(t, func(t *testing.T, b TestBackend) {
		ctx := context.Background()
		loc := b.NewDB(t)
		mine := utOpen(t, loc, Options{})
		theirs := utOpen(t, loc, Options{User: "colleague", Host: "room-2"})
		utAddRoster(t, theirs)
		last, err := mine.ChangeMark(ctx)
		if err != nil {
			t.Fatal(err)
		}
		steps := []struct {
			name   string
			do     func() error
			change bool
		}{
			{"a case", func() error { return theirs.SaveCase(ctx, utCase("P1"), true) }, true},
			{"reads", func() error {
				_, err := theirs.ListProcedures(ctx, ListQuery{})
				if err == nil {
					_, err = theirs.Check(ctx)
				}
				return err
			}, false},
			{"a result", func() error {
				return theirs.RecordHistology(ctx, logbook.HistologyResult{ProcedureID: "P1", LesionNo: 2, Histology: logbook.HistSSL, Dysplasia: logbook.DysplasiaNone, ReportedOn: utDate("2026-10-20")}, false)
			}, true},
			{"a refused case", func() error {
				if theirs.SaveCase(ctx, utCase("P1"), true) == nil {
					return errors.New("a repeated case was stored")
				}
				return nil
			}, false},
		}
		for _, st := range steps {
			if err := st.do(); err != nil {
				t.Fatalf("%s: %v", st.name, err)
			}
			mark, err := mine.ChangeMark(ctx)
			if err != nil {
				t.Fatal(err)
			}
			if (mark != last) != st.change {
				t.Errorf("%s: mark %d after %d; want a change: %v", st.name, mark, last, st.change)
			}
			last = mark
		}
		if e, _, _ := utLastChange(t, mine); e.User != "colleague" || e.Host != "room-2" {
			t.Errorf("the change log names %s on %s, want colleague on room-2", e.User, e.Host)
		}
	})
}
