package app

import (
	"database/sql"
	"strings"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"

	"polypledger/logbook"
	"polypledger/store"
)

// fillValidCase types a complete, valid case into the form.
func fillValidCase(f *caseForm, id string) {
	test.Type(f.form.entry("procedure_id"), id)
	f.form.entry("performed_on").SetText("2026-11-02")
	codeChoice[string](f.form, "operator_id").Set("E01")
	test.Type(f.form.entry("patient_ref"), "rx 4471")
	f.form.entry("age").SetText("58")
	codeChoice[logbook.Sex](f.form, "sex").Set(logbook.SexFemale)
	codeChoice[logbook.Indication](f.form, "indication").Set(logbook.Screening)
	codeChoice[logbook.Extent](f.form, "extent").Set(logbook.ExtentCaecum)
	f.form.entry("withdrawal_seconds").SetText("8:15")
	for i, v := range []int{3, 2, 2} {
		f.form.scores([]string{"bbps_right", "bbps_transverse", "bbps_left"}[i]).SetSelectedIndex(v + 1)
	}
}

func TestEntryValidationAndSave(t *testing.T) {
	u := newTestUI(t, 50)
	u.tabs.SelectIndex(1)
	u.win.Resize(fyne.NewSize(1200, 900))
	f := u.form

	// An empty form says nothing before anything is typed.
	required := []string{"procedure_id", "operator_id", "age", "sex", "indication", "extent"}
	for _, field := range required {
		if got := f.fields.message(field); got != "" {
			t.Errorf("before anything is typed, %s already says %q", field, got)
		}
	}
	// Trying to save it says what is missing beside each field, stores
	// nothing and gives the keyboard to the first field missing.
	test.Tap(f.save)
	u.jobs.wait()
	for _, field := range required {
		if got := f.fields.message(field); got != "is required" {
			t.Errorf("message beside %s = %q, want %q", field, got, "is required")
		}
	}
	if u.win.Canvas().Focused() != f.id.focus() {
		t.Errorf("after a refused save the keyboard is on %T, not the procedure number", u.win.Canvas().Focused())
	}
	if n, _ := u.st.CountProcedures(u.ctx, store.ListQuery{}); n != 50 {
		t.Fatalf("a refused save stored something: %d procedures", n)
	}

	f.startNew(false)
	fillValidCase(f, "NEW-1")
	if len(f.problems) > 0 {
		t.Fatalf("a valid case has problems: %v", f.problems)
	}
	if got, want := f.bbpsTotal.Text, "Total 7 of 9 – adequate (every segment 2 or more)"; got != want {
		t.Errorf("Boston total = %q, want %q", got, want)
	}

	// Values the import would refuse are refused here with the same words.
	tests := []struct {
		name, field string
		set, undo   func()
	}{
		{"age not a number", "age", func() { f.form.entry("age").SetText("fifty") }, func() { f.form.entry("age").SetText("58") }},
		{"age out of range", "age", func() { f.form.entry("age").SetText("12") }, func() { f.form.entry("age").SetText("58") }},
		{"withdrawal not m:ss", "withdrawal_seconds", func() { f.form.entry("withdrawal_seconds").SetText("7:75") }, func() { f.form.entry("withdrawal_seconds").SetText("8:15") }},
		{"date in the future", "performed_on", func() { f.form.entry("performed_on").SetText("2027-01-01") }, func() { f.form.entry("performed_on").SetText("2026-11-02") }},
		{"photo with incomplete extent", "caecal_photo", func() {
			codeChoice[logbook.Extent](f.form, "extent").Set(logbook.ExtentIncomplete)
			codeChoice[logbook.YesNo](f.form, "caecal_photo").Set(logbook.Yes)
		}, func() {
			codeChoice[logbook.Extent](f.form, "extent").Set(logbook.ExtentCaecum)
			codeChoice[logbook.YesNo](f.form, "caecal_photo").Set(logbook.Unrecorded)
		}},
	}
	for _, tc := range tests {
		tc.set()
		if f.fields.message(tc.field) == "" {
			t.Errorf("%s: no message beside %s", tc.name, tc.field)
		}
		if len(f.problems) == 0 {
			t.Errorf("%s: the case has no problem", tc.name)
		}
		tc.undo()
		if len(f.problems) > 0 {
			t.Errorf("%s: problems remain after the fix: %v", tc.name, f.problems)
		}
	}

	// A lesion added through the list is saved with the case.
	f.lesions = append(f.lesions, logbook.Lesion{LesionNo: 1, Segment: logbook.Sigmoid, SizeMM: 4,
		Resection: logbook.ColdSnare, Retrieved: logbook.Yes, SentToPathology: logbook.Yes, Histology: logbook.HistPending})
	f.showLesions()
	f.changed()

	// Enter in a field saves (off the UI thread).
	f.form.entry("age").TypedKey(&fyne.KeyEvent{Name: fyne.KeyReturn})
	u.jobs.wait()
	c, err := u.st.Case(u.ctx, "NEW-1")
	if err != nil {
		t.Fatalf("the case was not saved: %v", err)
	}
	want, _ := u.st.Pseudonymise("RX 4471")
	if c.PatientKey != want {
		t.Errorf("stored patient key = %q, want the pseudonym of the hospital number", c.PatientKey)
	}
	if c.Age != 58 || c.WithdrawalSeconds != 495 || c.BBPSTotal() != 7 || len(c.Lesions) != 1 {
		t.Errorf("stored case = age %d, withdrawal %d s, BBPS %d, %d lesions", c.Age, c.WithdrawalSeconds, c.BBPSTotal(), len(c.Lesions))
	}
	if f.form.entry("procedure_id").Text != "" || codeChoice[string](f.form, "operator_id").Value() != "E01" || f.form.entry("performed_on").Text != "2026-11-02" {
		t.Errorf("after saving, the form should be ready for the next case of the same list")
	}

	// Editing shows the short code only, never the hospital number.
	f.edit(c)
	if f.form.entry("patient_ref").Text != "" || !strings.HasPrefix(f.patientCode.Text, "Kept as "+logbook.ShortCode(c.PatientKey)+".") {
		t.Errorf("edit shows patient %q / %q", f.form.entry("patient_ref").Text, f.patientCode.Text)
	}
	f.form.entry("age").SetText("59")
	test.Tap(f.save)
	u.jobs.wait()
	if c, _ = u.st.Case(u.ctx, "NEW-1"); c.Age != 59 || c.PatientKey != want {
		t.Errorf("edited case: age %d, key kept %v", c.Age, c.PatientKey == want)
	}

	// A duplicate id is refused by the store and shown beside the id.
	fillValidCase(f, "NEW-1")
	f.submit()
	u.jobs.wait()
	if got := f.fields.message("procedure_id"); got == "" {
		t.Error("a duplicate procedure id gave no message beside the field")
	}

	// Deleting is recorded in the change log.
	f.edit(c)
	f.deleteNow("NEW-1")
	u.jobs.wait()
	if _, err := u.st.Case(u.ctx, "NEW-1"); err == nil {
		t.Error("the case is still there after delete")
	}
	log, err := u.st.ChangeLog(u.ctx, 1)
	if err != nil || len(log) != 1 || log[0].Action != "delete" || log[0].Record != "procedure NEW-1" {
		t.Errorf("change log after delete = %+v, %v", log, err)
	}
	if n, _ := u.st.CountProcedures(u.ctx, store.ListQuery{}); n != 50 {
		t.Errorf("procedures after delete = %d, want 50", n)
	}
}

func TestLesionEditorValidates(t *testing.T) {
	u := newTestUI(t, 0)
	l := logbook.NewLesion()
	l.LesionNo = 1
	e := newLesionEditor(u, l)
	kept := false
	e.onDone = func(keep bool) { kept = keep }
	test.Tap(e.keep)
	if kept || e.fields.message("segment") != "is required" {
		t.Fatalf("an empty lesion was kept (%v) or says %q beside its segment", kept, e.fields.message("segment"))
	}
	codeChoice[logbook.Segment](e.form, "segment").Set(logbook.Rectum)
	e.form.entry("size_mm").SetText("3")
	codeChoice[logbook.OpticalClass](e.form, "optical_class").Set(logbook.OpticalUncertain)
	codeChoice[logbook.Confidence](e.form, "confidence").Set(logbook.HighConfidence)
	if e.fields.message("confidence") == "" || len(e.problems) == 0 {
		t.Error("an uncertain call with high confidence is accepted")
	}
	codeChoice[logbook.Confidence](e.form, "confidence").Set(logbook.LowConfidence)
	codeChoice[logbook.YesNo](e.form, "retrieved").Set(logbook.Yes)
	codeChoice[logbook.YesNo](e.form, "sent_to_pathology").Set(logbook.Yes)
	if codeChoice[logbook.Histology](e.form, "histology").Value() != logbook.HistPending {
		t.Errorf("a specimen sent starts as %q, want pending", codeChoice[logbook.Histology](e.form, "histology").Value())
	}
	test.Tap(e.keep)
	if !kept {
		t.Errorf("a valid lesion cannot be kept: %v", e.problems)
	}
}

// holdWriteLock takes the database's write lock from another connection,
// as another program writing would, until release is called.
func holdWriteLock(t *testing.T, u *ui) (release func()) {
	t.Helper()
	db, err := sql.Open("sqlite", u.st.Path())
	if err != nil {
		t.Fatal(err)
	}
	other, err := db.Conn(u.ctx)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := other.ExecContext(u.ctx, "BEGIN IMMEDIATE"); err != nil {
		t.Fatal(err)
	}
	done := false
	release = func() {
		if done {
			return
		}
		done = true
		if _, err := other.ExecContext(u.ctx, "ROLLBACK"); err != nil {
			t.Error(err)
		}
		other.Close()
		db.Close()
	}
	t.Cleanup(release)
	return release
}

// returnsAtOnce runs action as the UI thread would and fails the test when
// it waits for the database (a write waits the whole 60 s busy timeout).
func returnsAtOnce(t *testing.T, what string, action func()) {
	t.Helper()
	done := make(chan struct{})
	go func() {
		fyne.DoAndWait(action)
		close(done)
	}()
	select {
	case <-done:
	case <-time.After(20 * time.Second):
		t.Fatalf("%s waited for the database on the UI thread", what)
	}
}

// TestTypingNeverWaitsForTheDatabase holds the database's write lock from
// another connection, as another program writing would, while a hospital
// number is typed: no keystroke may wait for it, because nothing is
// written while typing. Saving then waits off the UI thread, says so, and
// stores the case with the pseudonym once the other writer is done.
func TestTypingNeverWaitsForTheDatabase(t *testing.T) {
	t.Setenv("POLYPLEDGER_BUSY_TIMEOUT", "60s")
	u := newTestUI(t, 20)
	u.tabs.SelectIndex(1)
	f := u.form
	fillValidCase(f, "BUSY-1") // types the hospital number "rx 4471"

	release := holdWriteLock(t, u)
	returnsAtOnce(t, "a keystroke in the hospital number", func() { test.Type(f.form.entry("patient_ref"), "2") })
	returnsAtOnce(t, "saving the case", f.submit)
	if !f.saving || !strings.HasPrefix(f.notice.Text, "Saving case BUSY-1") || !f.progress.Visible() {
		t.Errorf("while the save waits the screen says %q (saving %v)", f.notice.Text, f.saving)
	}
	if _, err := u.st.Case(u.ctx, "BUSY-1"); err == nil {
		t.Fatal("the case was stored while another program held the write lock")
	}
	release()
	u.jobs.wait()
	c, err := u.st.Case(u.ctx, "BUSY-1")
	if err != nil {
		t.Fatalf("the case was not stored once the other writer finished: %v (screen says %q)", err, f.notice.Text)
	}
	want, _ := u.st.Pseudonymise("RX 44712")
	if c.PatientKey != want || strings.Contains(f.notice.Text, "4471") {
		t.Errorf("stored key %q, want the pseudonym of the number typed; the screen says %q", c.PatientKey, f.notice.Text)
	}
}

// TestOtherWritesWaitOffTheScreen holds another program's write lock while
// a pathology result, a roster entry, the settings and a deletion are
// saved: each returns to the screen at once and is stored once the lock is
// free.
func TestOtherWritesWaitOffTheScreen(t *testing.T) {
	t.Setenv("POLYPLEDGER_BUSY_TIMEOUT", "60s")
	u := newTestUI(t, 300)
	u.inbox.reload()
	row := u.inbox.rows[0]
	row.histology.Set(logbook.TubularAdenoma)
	row.dysplasia.Set(logbook.DysplasiaLow)
	u.unit.load()
	u.unit.newID.SetText("E42")
	u.unit.newName.SetText("Dr New Person")
	u.unit.name.SetText("Renamed Unit")
	var caseID string // any stored case but the one given a result
	if err := u.st.ForEachCase(u.ctx, store.CaseFilter{}, func(c *logbook.Case) error {
		if caseID == "" && c.ID != row.item.Lesion.ProcedureID {
			caseID = c.ID
		}
		return nil
	}); err != nil || caseID == "" {
		t.Fatalf("no case to delete: %v", err)
	}

	release := holdWriteLock(t, u)
	returnsAtOnce(t, "saving a pathology result", func() { u.inbox.record(row) })
	returnsAtOnce(t, "adding to the roster", u.unit.addPerson)
	returnsAtOnce(t, "saving the settings", u.unit.save)
	returnsAtOnce(t, "deleting a case", func() { u.form.deleteNow(caseID) })
	release()
	u.jobs.wait()

	c, err := u.st.Case(u.ctx, row.item.Lesion.ProcedureID)
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range c.Lesions {
		if l.LesionNo == row.item.Lesion.LesionNo && l.Histology != logbook.TubularAdenoma {
			t.Errorf("the pathology result was not stored: %s", l.Histology)
		}
	}
	if s, _ := u.st.Settings(u.ctx); s.UnitName != "Renamed Unit" {
		t.Errorf("the settings were not stored: unit name %q", s.UnitName)
	}
	found := false
	for _, r := range u.roster {
		found = found || r.ID == "E42"
	}
	if !found {
		t.Error("the roster entry was not stored")
	}
	if _, err := u.st.Case(u.ctx, caseID); err == nil {
		t.Errorf("case %s was not deleted", caseID)
	}
}
