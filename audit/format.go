package audit

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// How a figure prints is decided here, once, from its catalogue entry: the
// metrics table, the desktop app, the charts and the PDF all print through
// these functions, so that "31.3%", "0.5 per 1000", "7.5 min" and "2.5 mg"
// read the same everywhere.

// Scaler prints the values of one indicator, as x/perf's benchunit.Scaler
// does for benchmark values: the stored value times Factor, with Prec
// decimals, then Suffix. Definition.Scaler gives each indicator's.
type Scaler struct {
	// Factor takes the stored value to the printed number: 100 for a
	// percentage, 1000 for a figure per 1000, 1 otherwise.
	Factor float64
	// Prec is the number of decimals at the usual precision; -1 prints as
	// few as show the value exactly (a median dose: "2.5", "50").
	Prec int
	// Signed prints a "+" before a positive number (a difference).
	Signed bool
	// Whole prints a whole number with thousands separated (a yearly count).
	Whole bool
	// Suffix follows a value: "%", " per 1000", " min", " mg", " points".
	Suffix string
	// Axis names the unit on a chart axis: "%", "per 1000", "minutes",
	// "µg", "percentage points", "per year"; "" for a plain number.
	Axis string
}

// Scaler returns how the indicator's values print, from its kind, scale and
// unit.
func (d Definition) Scaler() Scaler {
	switch d.Kind {
	case KindMean:
		axis := d.Unit
		if axis == "min" {
			axis = "minutes"
		}
		return Scaler{Factor: 1, Prec: 1, Suffix: " " + d.Unit, Axis: axis}
	case KindRatio, KindKappa:
		return Scaler{Factor: 1, Prec: 2}
	case KindMedian:
		return Scaler{Factor: 1, Prec: -1, Suffix: " " + d.Unit, Axis: d.Unit}
	case KindPerYear:
		return Scaler{Factor: 1, Whole: true, Suffix: " per year", Axis: "per year"}
	case KindDifference:
		return Scaler{Factor: 100, Prec: 1, Signed: true, Suffix: " points", Axis: "percentage points"}
	}
	if d.Scale > 0 {
		per := "per " + strconv.Itoa(d.Scale)
		return Scaler{Factor: float64(d.Scale), Prec: 1, Suffix: " " + per, Axis: per}
	}
	return Scaler{Factor: 100, Prec: 1, Suffix: "%", Axis: "%"}
}

// Format prints v at the usual precision with its suffix ("31.3%").
func (s Scaler) Format(v float64) string { return s.format(v, 0) }

// format prints v with extra decimals beyond the usual precision.
func (s Scaler) format(v float64, extra int) string { return s.number(v, extra) + s.Suffix }

// number prints v scaled, without its suffix.
func (s Scaler) number(v float64, extra int) string {
	x := v * s.Factor
	switch {
	case s.Whole:
		return GroupThousands(int64(math.Round(x)))
	case s.Prec < 0 && extra == 0:
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	prec := s.Prec
	if prec < 0 {
		prec = 1
	}
	n := strconv.FormatFloat(x, 'f', prec+extra, 64)
	if s.Signed && !math.Signbit(x) {
		n = "+" + n
	}
	return n
}

// FormatInterval prints lo and hi in brackets in the value's unit ("[25.5%
// to 36.6%]", "[6.9 to 8.1]"): a percentage keeps its sign on both ends,
// other units are named once, by the value.
func (s Scaler) FormatInterval(lo, hi float64) string {
	end := func(v float64) string {
		n := s.number(v, 0)
		if s.Suffix == "%" {
			n += "%"
		}
		return n
	}
	return "[" + end(lo) + " to " + end(hi) + "]"
}

// IndicatorTitle returns the printed name of an indicator id, for tables,
// chart axes and the desktop app; an id the catalogue does not know is
// returned with its underscores turned to spaces.
func IndicatorTitle(id string) string { return define(id).Title }

// CountNoun names what an indicator counts in its denominator:
// "procedures" for most, "lesions" for the optical-diagnosis figures,
// "polypectomies" for retrieval.
func CountNoun(id string) string { return define(id).Counts }

// FormatValue prints an indicator's value as every output does: rates as
// percentages to one decimal, per-1000 and per-100 figures as such, means in
// minutes, sedation medians with their unit, yearly counts with thousands
// separated, and "–" when there are no cases. A value so close to its
// target that one decimal would hide which side it lies on gets the
// decimals that show it ("94.97%" against "≥ 95.0%").
func FormatValue(ind Indicator) string {
	if ind.Value == nil {
		return "–"
	}
	return define(ind.ID).Scaler().format(*ind.Value, verdictDigits(ind))
}

// verdictDigits is how many decimals beyond the usual an indicator's value
// needs so that its verdict can be read from the printed numbers: a value
// of 94.97% against a target of 95% prints as "94.97%", not as "95.0%"
// beside "below target". It is 0 when the usual precision already tells
// value and target apart (or they are equal), and at most 4.
func verdictDigits(ind Indicator) int {
	if ind.Value == nil || ind.Target == nil || *ind.Value == *ind.Target {
		return 0
	}
	s := define(ind.ID).Scaler()
	target := s.Format(*ind.Target)
	for extra := 0; extra < 4; extra++ {
		v := s.format(*ind.Value, extra)
		if v != target && v != s.format(*ind.Target, extra) {
			return extra
		}
	}
	return 4
}

// FormatInterval prints the 95% interval in brackets in the value's unit,
// or "" when there is none.
func FormatInterval(ind Indicator) string {
	if ind.CILow == nil || ind.CIHigh == nil {
		return ""
	}
	return define(ind.ID).Scaler().FormatInterval(*ind.CILow, *ind.CIHigh)
}

// FormatTarget prints the target ("≥ 35.0%", "< 10.0%" for a strict
// maximum, "≤ 5 mg", with any aspirational aim), or "" when the profile
// sets none.
func FormatTarget(ind Indicator) string {
	if ind.Target == nil {
		return ""
	}
	s := define(ind.ID).Scaler()
	t := TargetSign(ind.Maximum, ind.Strict) + " " + s.Format(*ind.Target)
	if ind.Aspirational != nil {
		t += " (aim " + s.Format(*ind.Aspirational) + ")"
	}
	return t
}

// FormatCases prints the count behind a figure: "k/n" for proportions,
// "k in n" for a mean count, "k in n days" for a yearly count and n
// otherwise, thousands separated ("1,083/1,145").
func FormatCases(ind Indicator) string {
	k := GroupThousands(int64(math.Round(ind.Numerator)))
	n := GroupThousands(int64(ind.Denominator))
	switch define(ind.ID).Kind {
	case KindProportion:
		return k + "/" + n
	case KindPerYear:
		return k + " in " + n + " days"
	case KindRatio:
		return k + " in " + n
	}
	return n
}

// FormatCount prints the count behind a figure in words, naming what is
// counted: "208 of 668 procedures", "332 adenomas in 668 procedures",
// "245 procedures", "1,000 procedures in 365 days".
func FormatCount(ind Indicator) string {
	k := GroupThousands(int64(math.Round(ind.Numerator)))
	n := GroupThousands(int64(ind.Denominator))
	d := define(ind.ID)
	switch d.Kind {
	case KindProportion:
		return k + " of " + n + " " + d.Counts
	case KindPerYear:
		return k + " procedures in " + n + " days"
	case KindRatio:
		return k + " adenomas in " + n + " " + d.Counts
	case KindDifference:
		return "over " + n + " " + d.Counts
	}
	return n + " " + d.Counts
}

// FormatVerdict prints the verdict in words; a figure whose histology is
// still awaited says how many cases wait.
func FormatVerdict(ind Indicator) string {
	w := ind.Status.Words()
	if ind.AwaitingHistology > 0 {
		w += fmt.Sprintf("; %s awaiting histology", GroupThousands(int64(ind.AwaitingHistology)))
	}
	return w
}

// VerdictShape is the shape printed before a verdict so that it reads
// without colour: ● meets, ▼ below, ○ too few cases to judge, ■ reported
// without a target.
func VerdictShape(s Status) string {
	switch s {
	case Meets:
		return "●"
	case Below:
		return "▼"
	case TooFew:
		return "○"
	}
	return "■"
}

// GroupThousands prints n with a comma between groups of three digits.
func GroupThousands(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// GroupedIndicators are the figures listed under one heading.
type GroupedIndicators struct {
	Title      string
	Indicators []Indicator
}

// Grouped sorts figures under their catalogue group's heading, groups and
// figures in catalogue order, leaving out empty groups; a figure the
// catalogue does not know goes under "Other figures", last. The reports'
// tables and the figures screen list figures this way.
func Grouped(inds []Indicator) []GroupedIndicators {
	byGroup := make([][]Indicator, nGroups+1)
	known := make(map[string]bool, len(inds))
	for _, d := range catalogue {
		if ind, ok := Find(inds, d.ID); ok {
			byGroup[d.Group] = append(byGroup[d.Group], ind)
			known[d.ID] = true
		}
	}
	for _, ind := range inds {
		if !known[ind.ID] {
			byGroup[nGroups] = append(byGroup[nGroups], ind)
		}
	}
	var out []GroupedIndicators
	for g, list := range byGroup {
		if len(list) > 0 {
			out = append(out, GroupedIndicators{Title: Group(g).Title(), Indicators: list})
		}
	}
	return out
}
