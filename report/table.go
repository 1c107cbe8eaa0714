package report

import (
	"fmt"
	"io"
	"polypledger/audit"
	"text/tabwriter"
)

// WriteTable writes a metrics result for a terminal: a header with the
// period and standard, then one aligned block per population (the unit, then
// each operator) with the indicator, its count, value, 95% interval, target
// and verdict in words, and closes with audit.AuditCaution. Rates are percentages to
// one decimal; per-1000 and per-100 figures are scaled; means are minutes.
func WriteTable(w io.Writer, r audit.MetricsResult) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Quality indicators %s to %s, standard %s\n", r.From, r.To, r.Standard)
	block := func(title string, inds []audit.Indicator) {
		fmt.Fprintf(tw, "\n%s\n", title)
		fmt.Fprintln(tw, "indicator\tcases\tvalue\t95% interval\ttarget\tverdict")
		for _, ind := range inds {
			verdict := audit.FormatVerdict(ind)
			if ind.Note != "" {
				verdict += " (" + ind.Note + ")"
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\n", ind.ID, audit.FormatCases(ind), audit.FormatValue(ind),
				audit.FormatInterval(ind), audit.FormatTarget(ind), verdict)
		}
	}
	block("Unit", r.Unit.Indicators)
	for _, o := range r.Operators {
		block("Operator "+o.OperatorID, o.Indicators)
	}
	fmt.Fprintf(tw, "\n%s\n", audit.AuditCaution())
	if err := tw.Flush(); err != nil {
		return fmt.Errorf("write indicator table: %w", err)
	}
	return nil
}
