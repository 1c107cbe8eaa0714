package report

import (
	"fmt"
	"io"
	"strconv"
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
			verdict := ind.Status.Words()
			if ind.AwaitingHistology > 0 {
				verdict += fmt.Sprintf("; %d awaiting histology", ind.AwaitingHistology)
			}
			if ind.Note != "" {
				verdict += "; " + ind.Note
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\n", ind.ID, casesText(ind), FormatValue(ind),
				intervalText(ind), FormatTarget(ind), verdict)
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

// casesText is the count behind a figure: k/n for proportions, n otherwise.
func casesText(ind Indicator) string {
	switch ind.Kind {
	case "", "proportion":
		return fmt.Sprintf("%.0f/%d", ind.Numerator, ind.Denominator)
	case KindPerYear:
		return fmt.Sprintf("%.0f in %d days", ind.Numerator, ind.Denominator)
	case KindRatio:
		return fmt.Sprintf("%.0f in %d", ind.Numerator, ind.Denominator)
	}
	return strconv.Itoa(ind.Denominator)
}

// valueText prints v as the indicator's kind reads: "–" when undefined.
func valueText(ind Indicator, v *float64) string {
	if v == nil {
		return "–"
	}
	x := *v
	switch ind.Kind {
	case KindMean:
		return fmt.Sprintf("%.1f min", x)
	case KindRatio, "kappa":
		return fmt.Sprintf("%.2f", x)
	case KindMedian:
		return strconv.FormatFloat(x, 'f', -1, 64)
	case KindPerYear:
		return fmt.Sprintf("%.0f per year", x)
	case "count":
		return fmt.Sprintf("%.0f", x)
	case KindDifference:
		return fmt.Sprintf("%+.1f points", 100*x)
	}
	if ind.Scale > 0 {
		return fmt.Sprintf("%.1f per %d", x*float64(ind.Scale), ind.Scale)
	}
	return fmt.Sprintf("%.1f%%", 100*x)
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
	s := targetSign(ind.Maximum, ind.Strict) + " " + valueText(ind, ind.Target)
	if ind.Aspirational != nil {
		s += " (aim " + valueText(ind, ind.Aspirational) + ")"
	}
	return s
}
