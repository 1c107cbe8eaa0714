package app

import (
	"testing"

	"fyne.io/fyne/v2/widget"

	"polypledger/report"
	"polypledger/workspace"
)

// TestScorecardMatchesMetrics checks that every tile shows the figure the
// metrics command computes for the same data, period and standard.
func TestScorecardMatchesMetrics(t *testing.T) {
	u := newTestUI(t, 1500)
	s := u.cards
	from, to, err := s.period.read()
	if err != nil {
		t.Fatal(err)
	}
	audit, err := workspace.NewAudit(u.ctx, u.st, "", u.profiles)
	if err != nil {
		t.Fatal(err)
	}
	g, _ := audit.Guideline("")
	want, err := audit.ComputeMetrics(u.ctx, from, to, g)
	if err != nil {
		t.Fatal(err)
	}
	for i, label := range s.whose.Options {
		if i > 2 {
			break // the unit and the first two endoscopists
		}
		s.whose.SetSelected(label)
		s.compute()
		u.jobs.wait()
		inds := want.Unit.Indicators
		if pop := s.population(); pop.OperatorID != "" {
			inds = nil
			for _, o := range want.Operators {
				if o.OperatorID == pop.OperatorID {
					inds = o.Indicators
				}
			}
		}
		if len(inds) == 0 || len(s.tiles) != len(inds) {
			t.Fatalf("%s: %d tiles for %d indicators", label, len(s.tiles), len(inds))
		}
		for _, ind := range inds {
			tl := s.tiles[ind.ID]
			if tl == nil {
				t.Errorf("%s: no tile for %s", label, ind.ID)
				continue
			}
			if got := tl.value.Text; got != report.FormatValue(ind) {
				t.Errorf("%s %s: tile shows %q, metrics gives %q", label, ind.ID, got, report.FormatValue(ind))
			}
			if got := tl.cases.Text; got != "cases "+report.FormatCases(ind) {
				t.Errorf("%s %s: tile cases %q, metrics %q", label, ind.ID, got, report.FormatCases(ind))
			}
			if tl.ind.Status != ind.Status {
				t.Errorf("%s %s: verdict %s, metrics %s", label, ind.ID, tl.ind.Status, ind.Status)
			}
			if ind.Status == report.TooFew && tl.value.Importance != widget.LowImportance {
				t.Errorf("%s %s: too few cases but not greyed", label, ind.ID)
			}
		}
	}
}

func TestScorecardTrainee(t *testing.T) {
	u := newTestUI(t, 1500)
	s := u.cards
	for i, p := range s.whoIDs {
		if p.TraineeID != "" {
			s.whose.SetSelectedIndex(i)
			break
		}
	}
	s.compute()
	u.jobs.wait()
	if s.tiles["unassisted_caecal_intubation"] == nil {
		t.Fatalf("trainee scorecard has no unassisted caecal intubation tile: %s", s.message.Text)
	}
}
