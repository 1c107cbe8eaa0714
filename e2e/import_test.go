package e2e

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// sources holds the shipped shapes of other systems' files.
const sources = "../testdata/sources"

// copyInto copies a shipped file into the unit's folder, where a person
// would have saved it.
func (u *unit) copyInto(rel string) string {
	u.t.Helper()
	b, err := os.ReadFile(filepath.Join(sources, rel))
	if err != nil {
		u.t.Fatal(err)
	}
	p := filepath.Join(u.dir, filepath.Base(rel))
	if err := os.WriteFile(p, b, 0o600); err != nil {
		u.t.Fatal(err)
	}
	return p
}

// importThroughAssistant opens the import assistant from the File menu's
// key, reads a file, lets adjust change the proposed mapping, previews it
// (the whole file checked, no problem; a screenshot named shot) and imports
// it under a recipe name.
func (s *session) importThroughAssistant(path, name, shot string, adjust func()) {
	s.t.Helper()
	s.key("ctrl+i")
	s.fillEntry("File", path)
	s.click("button", "Read the file")
	s.waitFor("the proposed mapping", func(sc screen) bool {
		_, ok := sc.find("select", "Dates in the file")
		return ok && sc.has("Our field ← the file's column")
	})
	if adjust != nil {
		adjust()
	}
	s.click("button", "Preview…")
	s.waitFor("the preview with no problem", func(sc screen) bool {
		return sc.has("The whole file, ") && hasText(sc, "No problem: it is ready to import.")
	})
	time.Sleep(time.Second) // the window is drawn a moment after it is laid out
	s.screenshot(shot)
	s.fillEntry("Recipe name", name)
	s.click("button", "Save the recipe and import")
	s.waitFor("the import's result", func(sc screen) bool { return hasText(sc, " were read and stored: ") })
	s.click("button", "OK")
}

// hasText reports whether a label on screen holds text.
func hasText(sc screen, text string) bool {
	for _, it := range sc.Items {
		if it.Kind == "label" && strings.Contains(it.Name, text) {
			return true
		}
	}
	return false
}

// TestImportAssistant imports the procedure-room system's file and then
// the laboratory's results through the import assistant of the real
// program, choosing the laboratory's date form with its picker, and checks
// with the command line's export that the unit holds exactly the records
// of the same data written in our own CSV files; the recipes are saved in
// the configuration folder.
func TestImportAssistant(t *testing.T) {
	need(t)
	u := newUnit(t, 100)
	room, lab := u.copyInto("room/room.csv"), u.copyInto("lab/lab.csv")
	d := newDisplay(t, 1024, 700)
	s := d.start(u)
	s.waitFor("the case list", func(sc screen) bool { return sc.has("100 cases.") })

	s.importThroughAssistant(room, "Room system", "import-assistant-preview-1024x700", func() {
		time.Sleep(time.Second) // the window is drawn a moment after it is laid out
		s.screenshot("import-assistant-mapping-1024x700")
	})
	s.importThroughAssistant(lab, "Dunmore laboratory", "import-assistant-preview-lab-1024x700", func() {
		s.choose("Dates in the file", "DD/MM/YYYY")
	})
	s.stop()

	// The same records written in our own dialect, imported by the command
	// line into another database under the same unit key.
	ours := filepath.Join(u.dir, "ours.db")
	for _, f := range [][2]string{{"procedures", "room/procedures.csv"}, {"lesions", "room/lesions.csv"}, {"histology", "lab/histology.csv"}} {
		u.cli("import", "--db", ours, "--kind", f[0], filepath.Join(sources, f[1]))
	}
	other := &unit{t: t, dir: u.dir, home: u.home, db: ours}
	for _, kind := range []string{"procedures", "lesions", "histology"} {
		var got []map[string]string
		for _, r := range u.export(kind) {
			if strings.HasPrefix(r["procedure_id"], "X-2026-") {
				got = append(got, r)
			}
		}
		want := other.export(kind)
		if len(want) == 0 || !reflect.DeepEqual(got, want) {
			t.Errorf("%s imported through the assistant:\n%v\nour CSV:\n%v", kind, got, want)
		}
	}
	for _, f := range []string{"room-system.toml", "dunmore-laboratory.toml"} {
		if _, err := os.Stat(filepath.Join(u.home, "recipes", f)); err != nil {
			t.Errorf("the recipe was not saved: %v", err)
		}
	}
}
