package store

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"polypledger/logbook"
)

// moveFixture fills the database at loc with a unit: invented procedures
// and lesions imported, a case typed in, a histology result, a roster
// name and the settings changed — a change log of every kind of entry.
func moveFixture(t *testing.T, loc string) {
	t.Helper()
	ctx := context.Background()
	s := openTest(t, loc, Options{User: "dr.lead", Host: "office-1"})
	defer s.Close()
	cases := inventedCases(t, 700, "M", 31)
	for _, f := range []struct {
		kind Kind
		data []byte
	}{{Procedures, proceduresCSV(t, cases)}, {Lesions, lesionsCSV(t, cases)}} {
		if _, err := s.Import(ctx, f.kind, string(f.kind)+".csv", bytes.NewReader(f.data), ImportOptions{}); err != nil {
			t.Fatal(err)
		}
	}
	if err := s.SaveRosterEntry(ctx, logbook.RosterEntry{ID: "E01", Name: "Dr Invented One", Role: logbook.RoleEndoscopist}); err != nil {
		t.Fatal(err)
	}
	st := DefaultSettings
	st.UnitName = "Invented Moving Unit"
	if err := s.SaveSettings(ctx, st); err != nil {
		t.Fatal(err)
	}
	if err := s.SaveCase(ctx, utCase("TYPED"), true); err != nil {
		t.Fatal(err)
	}
	if err := s.RecordHistology(ctx, logbook.HistologyResult{ProcedureID: "TYPED", LesionNo: 2, Histology: logbook.HistHyperplastic, Dysplasia: logbook.DysplasiaNone, ReportedOn: utDate("2026-10-20")}, false); err != nil {
		t.Fatal(err)
	}
}

// unitContents is everything a unit holds, as the program reads it.
type unitContents struct {
	exports  map[Kind]string
	settings Settings
	roster   []logbook.RosterEntry
	log      []ChangeLogEntry
}

func contentsOf(t *testing.T, loc string) unitContents {
	t.Helper()
	ctx := context.Background()
	s := openTest(t, loc, Options{ReadOnly: true})
	defer s.Close()
	u := unitContents{exports: map[Kind]string{}}
	for _, k := range []Kind{Procedures, Lesions, Histology} {
		var b bytes.Buffer
		if _, err := s.Export(ctx, k, &b); err != nil {
			t.Fatal(err)
		}
		u.exports[k] = b.String()
	}
	var err error
	if u.settings, err = s.Settings(ctx); err != nil {
		t.Fatal(err)
	}
	if u.roster, err = s.Roster(ctx); err != nil {
		t.Fatal(err)
	}
	if u.log, err = s.ChangeLog(ctx, 1_000_000); err != nil {
		t.Fatal(err)
	}
	return u
}

// sameUnit compares a moved unit with its source: the same records,
// settings and roster, and the source's change log followed by one entry
// saying where the unit came from.
func sameUnit(t *testing.T, what string, src, dst unitContents, from string) {
	t.Helper()
	for k, want := range src.exports {
		if dst.exports[k] != want {
			t.Errorf("%s: the %s export differs from the source's", what, k)
		}
	}
	if dst.settings != src.settings || !reflect.DeepEqual(dst.roster, src.roster) {
		t.Errorf("%s: settings or roster differ:\n%+v %+v\n%+v %+v", what, dst.settings, dst.roster, src.settings, src.roster)
	}
	if len(dst.log) != len(src.log)+1 {
		t.Fatalf("%s: %d change-log entries, want the source's %d and one more", what, len(dst.log), len(src.log))
	}
	if !reflect.DeepEqual(dst.log[1:], src.log) {
		t.Errorf("%s: the change log differs from the source's", what)
	}
	if e := dst.log[0]; e.Record != "unit" || !strings.Contains(e.New, from) {
		t.Errorf("%s: the last entry %+v does not say the unit came from %s", what, e, from)
	}
}

// TestMoveBetweenFileAndServer moves a unit from a file onto a server and
// back into a new file: each copy holds the same records (export for
// export), settings, roster and change log, and passes check; a server
// database's backup (a file) holds the same. Moving into a database that
// holds a unit, another program's tables, or an existing file is refused
// and leaves it as it was; a source that fails check is not moved and
// nothing is created.
func TestMoveBetweenFileAndServer(t *testing.T) {
	ctx := context.Background()
	file, server := Backends[0], Backends[1]
	src := file.NewDB(t)
	moveFixture(t, src)
	want := contentsOf(t, src)
	s := openTest(t, src, Options{ReadOnly: true})
	defer s.Close()

	dst := server.NewDB(t)
	var said []string
	res, err := Move(ctx, s, dst, Options{}, func(m string) { said = append(said, m) })
	if err != nil {
		t.Fatal(err)
	}
	if res.Procedures != 701 || res.Changes != len(want.log)+1 {
		t.Errorf("Move copied %+v", res)
	}
	if len(said) == 0 {
		t.Error("Move reported no progress")
	}
	onServer := contentsOf(t, dst)
	sameUnit(t, "file to server", want, onServer, src)
	mustCheck(t, dst)

	back := filepath.Join(t.TempDir(), "offline.db")
	srv := openTest(t, dst, Options{ReadOnly: true})
	defer srv.Close()
	if _, err := Move(ctx, srv, back, Options{}, nil); err != nil {
		t.Fatal(err)
	}
	offline := contentsOf(t, back)
	sameUnit(t, "server to file", onServer, offline, srv.Location())
	mustCheck(t, back)
	if m, _ := os.Stat(back); m.Mode().Perm() != 0o600 {
		t.Errorf("the new file has mode %o, want 600", m.Mode().Perm())
	}

	// A backup of the server database is a file with the same unit.
	bk := filepath.Join(t.TempDir(), "server-backup.db")
	if err := srv.Backup(ctx, bk, false); err != nil {
		t.Fatal(err)
	}
	sameUnit(t, "server backup", onServer, contentsOf(t, bk), srv.Location())

	// Destinations that are refused, and left as they were.
	foreign := server.NewDB(t)
	server.Exec(t, foreign, "CREATE TABLE invoices (id int)")
	for _, tc := range []struct {
		name string
		b    TestBackend
		loc  string
		want string
	}{
		{"a server database holding a unit", server, dst, "already holds a polypledger unit"},
		{"another program's database", server, foreign, "of another program"},
		{"an existing file", file, back, "already exists"},
	} {
		before := tc.b.Fingerprint(t, tc.loc)
		_, err := Move(ctx, s, tc.loc, Options{}, nil)
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "nothing was copied") {
			t.Errorf("move into %s: %v, want it refused saying %q and that nothing was copied", tc.name, err, tc.want)
		}
		if tc.b.Fingerprint(t, tc.loc) != before {
			t.Errorf("a refused move changed %s", tc.name)
		}
	}

	// A source that fails check is not moved.
	bad := file.NewDB(t)
	moveFixture(t, bad)
	file.Exec(t, bad, "UPDATE procedures SET age = 300 WHERE id = 'TYPED'")
	b := openTest(t, bad, Options{ReadOnly: true})
	defer b.Close()
	empty := server.NewDB(t)
	if _, err := Move(ctx, b, empty, Options{}, nil); err == nil || !strings.Contains(err.Error(), "1 problem") {
		t.Errorf("move of a source failing check: %v", err)
	}
	if n := server.Tables(t, empty); n != 0 {
		t.Errorf("a refused move left %d tables", n)
	}
}

// TestMoveKilledLeavesNothing kills the move command half-way through the
// copy, onto a server and into a file: the server database holds no table
// and no file appears (only a temporary, which the next run removes); run
// again, the move completes.
func TestMoveKilledLeavesNothing(t *testing.T) {
	dir, home := processTest(t)
	file, server := Backends[0], Backends[1]
	testCluster(t)
	src := filepath.Join(dir, "big.db")
	populatedDB(t, src, 4*ProgressEvery)
	cliBinary(t)
	for _, dest := range []struct {
		name string
		b    TestBackend
		loc  string
	}{
		{"onto a server", server, server.NewDB(t)},
		{"into a file", file, filepath.Join(dir, "out", "moved.db")},
	} {
		t.Run(dest.name, func(t *testing.T) {
			lines, kill, wait := startCLI(t, home, nil, "move", "--from", src, "--to", dest.loc)
			waitForLine(t, lines, "copied 10000 of")
			kill()
			if r := wait(); r.code != -1 {
				t.Fatalf("the move ended (exit %d) before it could be killed", r.code)
			}
			if n := dest.b.Tables(t, dest.loc); n != 0 {
				t.Errorf("the killed move left %d tables", n)
			}
			if _, err := os.Stat(dest.loc); !dest.b.Server() && !errors.Is(err, os.ErrNotExist) {
				t.Errorf("the killed move left a file: %v", err)
			}
			r := runCLI(t, home, nil, "move", "--from", src, "--to", dest.loc)
			if r.code != 0 || !strings.Contains(r.stdout, "40000 procedures") {
				t.Fatalf("the move run again: exit %d, %s%s", r.code, r.stdout, r.stderr)
			}
			if !dest.b.Server() {
				noTemporaries(t, filepath.Dir(dest.loc))
			}
			mustCheck(t, dest.loc)
		})
	}
}
