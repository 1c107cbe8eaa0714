package audit

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
)

// WriteTable writes a metrics result for a terminal: a header with the
// period and standard, then one aligned block per population (the unit, then
// each operator) with the indicator, its count, value, 95% interval, target
// and verdict in words, and closes with AuditCaution. Rates are percentages to
// one decimal; per-1000 and per-100 figures are scaled; means are minutes.
func WriteTable(w io.Writer, r MetricsResult) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Quality indicators %s to %s, standard %s\n", r.From, r.To, r.Standard)
	block := func(title string, inds []Indicator) {
		fmt.Fprintf(tw, "\n%s\n", title)
		fmt.Fprintln(tw, "indicator\tcases\tvalue\t95% interval\ttarget\tverdict")
		for _, ind := range inds {
			verdict := FormatVerdict(ind)
			if ind.Note != "" {
				verdict += " (" + ind.Note + ")"
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\n", ind.ID, FormatCases(ind), FormatValue(ind),
				FormatInterval(ind), FormatTarget(ind), verdict)
		}
	}
	block("Unit", r.Unit.Indicators)
	for _, o := range r.Operators {
		block("Operator "+o.OperatorID, o.Indicators)
	}
	fmt.Fprintf(tw, "\n%s\n", AuditCaution())
	if err := tw.Flush(); err != nil {
		return fmt.Errorf("write indicator table: %w", err)
	}
	return nil
}

// casesText is the count behind a figure: k/n for proportions, n
// otherwise, with thousands separated ("1,083/1,145").
func casesText(ind Indicator) string {
	k := GroupThousands(int64(math.Round(ind.Numerator)))
	n := GroupThousands(int64(ind.Denominator))
	switch ind.Kind {
	case "", "proportion":
		return k + "/" + n
	case KindPerYear:
		return k + " in " + n + " days"
	case KindRatio:
		return k + " in " + n
	}
	return n
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

// ValueText prints v as the indicator's kind reads, at the kind's usual
// precision: "–" when undefined.
func ValueText(ind Indicator, v *float64) string { return numberText(ind, v, 0) }

// numberText prints v as the indicator's kind reads with extra decimals
// beyond the kind's usual precision.
func numberText(ind Indicator, v *float64, extra int) string {
	if v == nil {
		return "–"
	}
	x := *v
	fixed := func(scaled float64, decimals int) string {
		return strconv.FormatFloat(scaled, 'f', decimals+extra, 64)
	}
	switch ind.Kind {
	case KindMean:
		return fixed(x, 1) + " min"
	case KindRatio, "kappa":
		return fixed(x, 2)
	case KindMedian:
		if extra == 0 {
			return strconv.FormatFloat(x, 'f', -1, 64)
		}
		return fixed(x, 1)
	case KindPerYear:
		return GroupThousands(int64(math.Round(x))) + " per year"
	case "count":
		return GroupThousands(int64(math.Round(x)))
	case KindDifference:
		return fmt.Sprintf("%+.*f points", 1+extra, 100*x)
	}
	if ind.Scale > 0 {
		return fixed(x*float64(ind.Scale), 1) + " per " + strconv.Itoa(ind.Scale)
	}
	return fixed(100*x, 1) + "%"
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
	target := ValueText(ind, ind.Target)
	for extra := 0; extra < 4; extra++ {
		v := numberText(ind, ind.Value, extra)
		if v != target && v != numberText(ind, ind.Target, extra) {
			return extra
		}
	}
	return 4
}

// intervalText prints the interval in brackets; percentages keep their
// sign, other kinds print bare numbers in the value's unit.
func intervalText(ind Indicator) string {
	if ind.CILow == nil || ind.CIHigh == nil {
		return ""
	}
	lo, hi := *ind.CILow, *ind.CIHigh
	switch {
	case ind.Kind == KindMean:
		return fmt.Sprintf("[%.1f to %.1f]", lo, hi)
	case ind.Kind == KindDifference:
		return fmt.Sprintf("[%+.1f to %+.1f]", 100*lo, 100*hi)
	case ind.Kind == KindRatio || ind.Kind == "kappa":
		return fmt.Sprintf("[%.2f to %.2f]", lo, hi)
	case ind.Kind != "" && ind.Kind != "proportion":
		return fmt.Sprintf("[%g to %g]", lo, hi)
	case ind.Scale > 0:
		return fmt.Sprintf("[%.1f to %.1f]", lo*float64(ind.Scale), hi*float64(ind.Scale))
	}
	return fmt.Sprintf("[%.1f%% to %.1f%%]", 100*lo, 100*hi)
}

func targetText(ind Indicator) string {
	if ind.Target == nil {
		return ""
	}
	s := TargetSign(ind.Maximum, ind.Strict) + " " + ValueText(ind, ind.Target)
	if ind.Aspirational != nil {
		s += " (aim " + ValueText(ind, ind.Aspirational) + ")"
	}
	return s
}
