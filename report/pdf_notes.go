package report

import (
	"polypledger/audit"
	"strings"
)

// noteMark follows a figure in a PDF table when the figure carries a Note
// (Indicator.Note); the table's notes, printed under it, explain the mark.
// Table cells are trimmed to their column, so the sentence itself goes
// under the table rather than beside the figure.
const noteMark = "†"

// notedValue is FormatValue followed by noteMark when the figure has a Note.
func notedValue(ind audit.Indicator) string {
	if ind.Note == "" {
		return audit.FormatValue(ind)
	}
	return noteMark + " " + audit.FormatValue(ind)
}

// indicatorNotes prints under a table of one population's figures the Note
// of every figure that has one, after the figure's printed name.
func (d *doc) indicatorNotes(inds []audit.Indicator) {
	labels := make([]string, len(inds))
	for i, ind := range inds {
		labels[i] = audit.IndicatorTitle(ind.ID)
	}
	d.labelledNotes(labels, inds)
}

// populationNotes prints under a table of one figure across populations
// (pairs of operator id, "" for the unit, and Indicator) the Note of every
// row that has one, after the population's label.
func (d *doc) populationNotes(pops [][2]any) {
	labels := make([]string, 0, len(pops))
	inds := make([]audit.Indicator, 0, len(pops))
	for _, p := range pops {
		id, _ := p[0].(string)
		ind, _ := p[1].(audit.Indicator)
		labels = append(labels, d.populationLabel(id))
		inds = append(inds, ind)
	}
	d.labelledNotes(labels, inds)
}

// labelledNotes prints "† label: note" for every figure with a Note, in one
// paragraph of small text; figures with the same note share one entry
// ("† label; label: note"). Nothing is printed when no figure has a note.
func (d *doc) labelledNotes(labels []string, inds []audit.Indicator) {
	var notes []string
	who := map[string][]string{}
	for i, ind := range inds {
		if ind.Note == "" {
			continue
		}
		if _, seen := who[ind.Note]; !seen {
			notes = append(notes, ind.Note)
		}
		who[ind.Note] = append(who[ind.Note], labels[i])
	}
	lines := make([]string, len(notes))
	for i, n := range notes {
		lines[i] = strings.Join(who[n], "; ") + ": " + n
	}
	if len(lines) == 0 {
		return
	}
	text := noteMark + " " + strings.Join(lines, ". "+noteMark+" ") + "."
	if !d.compact {
		d.note(text)
		return
	}
	// Under a compact table (the one-page summaries) the notes are tighter
	// than its rows and close up to it, so that the page still holds them.
	d.pdf.SetY(d.pdf.GetY() - 1)
	d.noteSized(text, 6, 2.5)
}

// pick returns the figures of inds with the ids, in the order of ids.
func pick(inds []audit.Indicator, ids []string) []audit.Indicator {
	var out []audit.Indicator
	for _, id := range ids {
		if ind, ok := audit.Find(inds, id); ok {
			out = append(out, ind)
		}
	}
	return out
}

// overviewNotes prints under the endoscopists-at-a-glance table the notes
// of its figures (ids, for the unit and each operator): one entry per
// figure and note, naming the populations it applies to unless it applies
// to every row.
func (d *doc) overviewNotes(ids []string) {
	m := d.in.Data.Metrics
	pops := []audit.OperatorResult{{OperatorID: "", Indicators: m.Unit.Indicators}}
	pops = append(pops, m.Operators...)
	var labels []string
	var inds []audit.Indicator
	for _, id := range ids {
		var notes []string
		who := map[string][]string{}
		for _, p := range pops {
			ind, ok := audit.Find(p.Indicators, id)
			if !ok || ind.Note == "" {
				continue
			}
			if _, seen := who[ind.Note]; !seen {
				notes = append(notes, ind.Note)
			}
			name := p.OperatorID
			if name == "" {
				name = "whole unit"
			}
			who[ind.Note] = append(who[ind.Note], name)
		}
		for _, n := range notes {
			label := audit.IndicatorTitle(id)
			if len(who[n]) < len(pops) {
				label += " (" + strings.Join(who[n], ", ") + ")"
			}
			labels = append(labels, label)
			inds = append(inds, audit.Indicator{Note: n})
		}
	}
	d.labelledNotes(labels, inds)
}
