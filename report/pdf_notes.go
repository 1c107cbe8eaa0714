package report

import (
	"strings"
)

// noteMark follows a figure in a PDF table when the figure carries a Note
// (Indicator.Note); the table's notes, printed under it, explain the mark.
// Table cells are trimmed to their column, so the sentence itself goes
// under the table rather than beside the figure.
const noteMark = "†"

// notedValue is FormatValue followed by noteMark when the figure has a Note.
func notedValue(ind Indicator) string {
	if ind.Note == "" {
		return FormatValue(ind)
	}
	return noteMark + " " + FormatValue(ind)
}

// indicatorNotes prints under a table of one population's figures the Note
// of every figure that has one, after the figure's printed name.
func (d *doc) indicatorNotes(inds []Indicator) {
	labels := make([]string, len(inds))
	for i, ind := range inds {
		labels[i] = IndicatorTitle(ind.ID)
	}
	d.labelledNotes(labels, inds)
}

// populationNotes prints under a table of one figure across populations
// (pairs of operator id, "" for the unit, and Indicator) the Note of every
// row that has one, after the population's label.
func (d *doc) populationNotes(pops [][2]any) {
	labels := make([]string, 0, len(pops))
	inds := make([]Indicator, 0, len(pops))
	for _, p := range pops {
		id, _ := p[0].(string)
		ind, _ := p[1].(Indicator)
		labels = append(labels, d.populationLabel(id))
		inds = append(inds, ind)
	}
	d.labelledNotes(labels, inds)
}

// labelledNotes prints "† label: note" for every figure with a Note, in one
// paragraph of small text; nothing when no figure has one.
func (d *doc) labelledNotes(labels []string, inds []Indicator) {
	var lines []string
	for i, ind := range inds {
		if ind.Note != "" {
			lines = append(lines, labels[i]+": "+ind.Note)
		}
	}
	if len(lines) > 0 {
		d.note(noteMark + " " + strings.Join(lines, ". "+noteMark+" ") + ".")
	}
}

// pick returns the figures of inds with the ids, in the order of ids.
func pick(inds []Indicator, ids []string) []Indicator {
	var out []Indicator
	for _, id := range ids {
		if ind, ok := Find(inds, id); ok {
			out = append(out, ind)
		}
	}
	return out
}
