package store

import (
	"context"
	"errors"
	"strings"
	"testing"
)

// A database shared by several users must get one pseudonym per patient: a
// hospital number offered under a different unit key is refused, and
// nothing is stored.
func TestOtherUnitKeyIsRefused(t *testing.T) {
	EachBackend(t, testOtherUnitKeyIsRefused)
}

func testOtherUnitKeyIsRefused(t *testing.T, be TestBackend) {
	ctx := context.Background()
	path := be.NewDB(t)
	header := "procedure_id,performed_on,operator_id,trainee_id,supervision,trainee_reached_caecum,patient_ref,age,sex,indication,setting,exclusion,extent,incomplete_reason,caecal_photo,withdrawal_seconds,bbps_right,bbps_transverse,bbps_left,retroversion,midazolam_mg,fentanyl_ug,pethidine_mg,propofol,comfort,detection_aid,adverse_event,recommended_interval\n"
	row := func(id, ref string) string {
		return id + ",2025-03-04,E01,,,," + ref + ",60,F,screening,outpatient,none,caecum,,yes,480,2,2,2,yes,2,50,,no,2,no,none,\n"
	}
	keyA := []byte("unit key A for the sharing test..")
	keyB := []byte("unit key B for the sharing test..")

	a := utOpen(t, path, Options{Key: keyA})
	if _, err := a.Import(ctx, Procedures, "a.csv", strings.NewReader(header+row("P1", "HN100")), ImportOptions{}); err != nil {
		t.Fatalf("first import under key A: %v", err)
	}
	if _, err := a.Pseudonymise("HN200"); err != nil {
		t.Fatalf("key A again: %v", err)
	}
	exported := a.mustPatientKey(t, ctx, "P1")
	a.Close()

	b := utOpen(t, path, Options{Key: keyB})
	defer b.Close()
	_, err := b.Import(ctx, Procedures, "b.csv", strings.NewReader(header+row("P2", "HN100")), ImportOptions{})
	if !errors.Is(err, ErrOtherKey) || !strings.Contains(err.Error(), "nothing was") {
		t.Fatalf("import under key B = %v, want ErrOtherKey saying nothing was stored", err)
	}
	if n, _ := b.CountProcedures(ctx, ListQuery{}); n != 1 {
		t.Errorf("%d procedures after the refused import, want 1", n)
	}
	if _, err := b.Pseudonymise("HN100"); !errors.Is(err, ErrOtherKey) {
		t.Errorf("Pseudonymise under key B = %v, want ErrOtherKey", err)
	}
	// Rows that already carry pseudonyms need no key and are accepted.
	if _, err := b.Import(ctx, Procedures, "c.csv", strings.NewReader(header+row("P3", "psn:"+exported)), ImportOptions{}); err != nil {
		t.Errorf("import of pseudonymised rows under key B: %v", err)
	}
}

func (s *Store) mustPatientKey(t *testing.T, ctx context.Context, id string) string {
	t.Helper()
	c, err := s.Case(ctx, id)
	if err != nil || c.PatientKey == "" {
		t.Fatalf("case %s: %v (patient key %q)", id, err, c.PatientKey)
	}
	return c.PatientKey
}
