package audit

import (
	"encoding/json"
	"strings"
	"testing"

	"polypledger/logbook"
	"polypledger/surveillance"
)

// producedIndicators runs one pass with every figure the engine makes —
// the profile's indicators, trends, a trainee's figures, the optical audit
// with both resect-and-discard rule sets, and interval adherence — and
// returns every indicator that comes out of it.
func producedIndicators(t *testing.T) []Indicator {
	t.Helper()
	cases := []logbook.Case{
		mkCase(eID("C1"), withLesions(mkLesion())),
		mkCase(eID("C2"), eOp("E02"), func(c *logbook.Case) {
			c.TraineeID, c.Supervision, c.TraineeReachedCaecum = "T1", logbook.SupervisedHandsOn, logbook.Yes
		}),
	}
	var out []Indicator
	for _, rules := range RuleSets {
		prof := shipped(t, "bsg-jag-2016")
		pass, err := NewPass(prof, PassOptions{Guideline: surveillance.USMSTF2020, Discard: DiscardSettings{RuleSet: rules}})
		if err != nil {
			t.Fatal(err)
		}
		for i := range cases {
			pass.Add(&cases[i])
		}
		f := pass.Result()
		out = append(out, f.Metrics.Unit.Indicators...)
		for _, o := range f.Metrics.Operators {
			out = append(out, o.Indicators...)
		}
		for _, q := range f.Trends.Quarters {
			out = append(out, q.Metrics.Unit.Indicators...)
		}
		for _, s := range f.Trends.RollingADR {
			for _, p := range s.Points {
				out = append(out, p.Indicator)
			}
		}
		for _, tr := range f.Trainees {
			out = append(out, tr.Indicators...)
		}
		for _, d := range f.Details {
			o := d.Optical
			if o == nil {
				t.Fatal("no optical detail")
			}
			for _, fig := range []OpticalFigures{o.Endoscopist, o.Aid} {
				for _, ind := range fig.indicators() {
					out = append(out, *ind)
				}
			}
			out = append(out, o.HighConfidence, o.EndoscopistVsAid.Kappa, o.PIVI1.Agreement, o.PIVI2.NPV, o.PIVI2.NPVNeoplasia)
			for _, c := range o.Discard.Checks {
				out = append(out, c.Figure)
			}
		}
	}
	return out
}

// TestCatalogueCoversTheEngine checks that every indicator the engine
// produces has a catalogue entry whose kind and scale it carries, and that
// every catalogue entry is produced: the catalogue and the arithmetic
// describe the same figures.
func TestCatalogueCoversTheEngine(t *testing.T) {
	produced := map[string]bool{}
	for _, ind := range producedIndicators(t) {
		produced[ind.ID] = true
		d, ok := Lookup(ind.ID)
		if !ok {
			t.Errorf("the engine produces %q, which has no catalogue entry", ind.ID)
			continue
		}
		if ind.Kind != d.Kind || ind.Scale != d.Scale {
			t.Errorf("%s: produced as kind %v scale %d, catalogued as %v scale %d", ind.ID, ind.Kind, ind.Scale, d.Kind, d.Scale)
		}
	}
	for _, d := range Catalogue() {
		if !produced[d.ID] {
			t.Errorf("catalogue entry %q is produced by nothing", d.ID)
		}
	}
}

// TestCatalogueEntries checks what every entry must say: a title and a
// short label of its own, what it counts, where its definition comes from,
// a group, and a method for the first figure of each group.
func TestCatalogueEntries(t *testing.T) {
	titles, shorts := map[string]string{}, map[string]string{}
	methodIn := map[Group]bool{}
	for _, d := range Catalogue() {
		if d.Title == "" || d.Short == "" || d.Counts == "" || d.Source == "" {
			t.Errorf("%s: title %q, short %q, counts %q, source %q: none may be empty", d.ID, d.Title, d.Short, d.Counts, d.Source)
		}
		if other, dup := titles[d.Title]; dup {
			t.Errorf("%s and %s share the title %q", d.ID, other, d.Title)
		}
		if other, dup := shorts[d.Short]; dup {
			t.Errorf("%s and %s share the short label %q", d.ID, other, d.Short)
		}
		titles[d.Title], shorts[d.Short] = d.ID, d.ID
		if d.Group < 0 || d.Group >= nGroups {
			t.Errorf("%s: no group", d.ID)
		}
		if !methodIn[d.Group] && d.Method == "" {
			t.Errorf("%s: the first figure of %q has no method", d.ID, d.Group.Title())
		}
		methodIn[d.Group] = true
		if (d.Kind == KindMean || d.Kind == KindMedian) && d.Unit == "" {
			t.Errorf("%s: a mean or median needs its unit", d.ID)
		}
		if d.Kind == KindDifference && d.Judged != NotJudged {
			t.Errorf("%s: a comparison is never judged", d.ID)
		}
	}
	if d, ok := Lookup("no_such_figure"); ok || d.Title != "no such figure" || d.Group.Title() != "Other figures" {
		t.Errorf("an unknown id: %+v, %v", d, ok)
	}
}

// TestKindJSON checks that a kind is written by name and left out for a
// proportion, as the metrics JSON always wrote it, and read back.
func TestKindJSON(t *testing.T) {
	for _, c := range []struct {
		ind  Indicator
		want string
	}{
		{Proportion("adr", 1, 2), ""},
		{newIndicator("apc", 1, 2), `"kind":"ratio"`},
		{newIndicator("volume", 1, 2), `"kind":"per_year"`},
		{newIndicator("optical_kappa", 1, 2), `"kind":"kappa"`},
	} {
		b, err := json.Marshal(c.ind)
		if err != nil {
			t.Fatal(err)
		}
		if c.want == "" && strings.Contains(string(b), `"kind"`) || c.want != "" && !strings.Contains(string(b), c.want) {
			t.Errorf("%s: want %q", b, c.want)
		}
		var back Indicator
		if err := json.Unmarshal(b, &back); err != nil || back.Kind != c.ind.Kind {
			t.Errorf("%s: read back as %v (%v)", b, back.Kind, err)
		}
	}
}
