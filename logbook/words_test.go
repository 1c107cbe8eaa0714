package logbook

import "testing"

// distinctWords checks that every code of a set has plain words of its own,
// not shared with another code of the set.
func distinctWords[T interface {
	~string
	Words() string
}](t *testing.T, set []T) {
	t.Helper()
	seen := map[string]T{}
	for _, c := range set {
		w := c.Words()
		if w == "" {
			t.Errorf("%q has no words", c)
		}
		if other, dup := seen[w]; dup {
			t.Errorf("%q and %q share the words %q", c, other, w)
		}
		seen[w] = c
	}
}

func TestEveryCodeHasWords(t *testing.T) {
	distinctWords(t, Histologies)
	distinctWords(t, Supervisions)
	distinctWords(t, Intervals)
	for _, c := range []struct{ got, want string }{
		{HistHyperplastic.Words(), "hyperplastic polyp"},
		{HistSSLDysplasia.Words(), "sessile serrated lesion with dysplasia"},
		{Histology("made_up").Words(), "made_up"},
		{SupervisedHandsOn.Words(), "Trainer helped"},
		{Supervision("").Words(), "Not recorded"},
		{Interval3to5y.Words(), "3 to 5 years"},
		{IntervalScreening.Words(), "back to screening"},
	} {
		if c.got != c.want {
			t.Errorf("words %q, want %q", c.got, c.want)
		}
	}
}
