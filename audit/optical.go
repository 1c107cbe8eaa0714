package audit

import (
	"polypledger/logbook"
	"polypledger/stats"
)

// Optical diagnosis against pathology (clinical-reference §3). Lesions count
// when they have an optical class other than uncertain and a final
// histology. Positive means histology adenoma, cancer included
// (Histology.IsAdenoma); a call of adenoma or deep_invasive predicts
// positive, hyperplastic or ssl negative.

// BinaryTable is the 2×2 table of an optical call (rows: predicts adenoma or
// not) against histology (columns: adenoma or not).
type BinaryTable struct {
	TruePositive  int `json:"true_positive"`  // called adenoma, histology adenoma
	FalsePositive int `json:"false_positive"` // called adenoma, histology not adenoma
	FalseNegative int `json:"false_negative"` // called not adenoma, histology adenoma
	TrueNegative  int `json:"true_negative"`  // called not adenoma, histology not adenoma
}

// N returns the number of lesions in the table.
func (t BinaryTable) N() int {
	return t.TruePositive + t.FalsePositive + t.FalseNegative + t.TrueNegative
}

// Add counts one lesion.
func (t *BinaryTable) Add(calledPositive, histologyPositive bool) {
	switch {
	case calledPositive && histologyPositive:
		t.TruePositive++
	case calledPositive:
		t.FalsePositive++
	case histologyPositive:
		t.FalseNegative++
	default:
		t.TrueNegative++
	}
}

// Matrix returns the table as rows of calls (positive first) by columns of
// histology (positive first), the form stats.CohenKappa reads.
func (t BinaryTable) Matrix() [][]int {
	return [][]int{{t.TruePositive, t.FalsePositive}, {t.FalseNegative, t.TrueNegative}}
}

// kappaIndicator returns the kappa k as an indicator of kind "kappa":
// numerator the agreements, denominator the items, value κ and interval
// κ ± 1.96·SE clamped to [−1, 1].
func kappaIndicator(id string, k stats.Kappa) Indicator {
	ind := newIndicator(id, float64(k.Agreements), k.N)
	ind.Value, ind.CILow, ind.CIHigh = ptr(k.Kappa), ptr(k.CI.Low), ptr(k.CI.High)
	return ind
}

// Classes of the three-class table (clinical-reference §3).
const (
	classAdenoma = iota
	classSerrated
	classHyperplastic
	classOther // histology only: normal, inflammatory, other
)

// ClassTable is the three-class table of calls (rows: adenoma — including
// deep_invasive calls —, serrated, hyperplastic) against histology (columns:
// adenoma including cancer; serrated = SSL with or without dysplasia and
// TSA; hyperplastic; and a fourth column for normal, inflammatory and other
// histology so that every lesion of the 2×2 table appears).
type ClassTable struct {
	Calls     []string  `json:"calls"`
	Histology []string  `json:"histology"`
	Counts    [3][4]int `json:"counts"`
}

func newClassTable(counts [3][4]int) ClassTable {
	return ClassTable{
		Calls:     []string{"adenoma", "serrated", "hyperplastic"},
		Histology: []string{"adenoma", "serrated", "hyperplastic", "other"},
		Counts:    counts,
	}
}

// Kappa returns Cohen's kappa over the lesions whose histology falls in one
// of the three classes (the fourth column left out).
func (t ClassTable) Kappa() stats.Kappa {
	m := make([][]int, 3)
	for i := range m {
		m[i] = t.Counts[i][:3]
	}
	return stats.CohenKappa(m)
}

// callClass returns the row of an optical call, or −1 when the call does not
// count (empty or uncertain).
func callClass(c logbook.OpticalClass) int {
	switch c {
	case logbook.OpticalAdenoma, logbook.OpticalDeepInvasive:
		return classAdenoma
	case logbook.OpticalSSL:
		return classSerrated
	case logbook.OpticalHyperplastic:
		return classHyperplastic
	}
	return -1
}

// histClass returns the column of a final histology.
func histClass(h logbook.Histology) int {
	switch {
	case h.IsAdenoma():
		return classAdenoma
	case h.IsSSLOrTSA():
		return classSerrated
	case h == logbook.HistHyperplastic:
		return classHyperplastic
	}
	return classOther
}

// OpticalFigures are the figures of one rater (endoscopist or aid) over one
// set of lesions.
type OpticalFigures struct {
	Table        BinaryTable `json:"table"`
	Classes      ClassTable  `json:"classes"`
	ClassesKappa stats.Kappa `json:"classes_kappa"`
	Sensitivity  Indicator   `json:"sensitivity"`
	Specificity  Indicator   `json:"specificity"`
	PPV          Indicator   `json:"ppv"`
	NPV          Indicator   `json:"npv"`
	Accuracy     Indicator   `json:"accuracy"`
	Kappa        Indicator   `json:"kappa"`
}

// newOpticalFigures computes the figures of a table; ids are prefix +
// "_sensitivity" and so on.
func newOpticalFigures(prefix string, t BinaryTable, classes [3][4]int, minCases int) OpticalFigures {
	f := OpticalFigures{Table: t, Classes: newClassTable(classes)}
	f.ClassesKappa = f.Classes.Kappa()
	f.Sensitivity = Proportion(prefix+"_sensitivity", t.TruePositive, t.TruePositive+t.FalseNegative)
	f.Specificity = Proportion(prefix+"_specificity", t.TrueNegative, t.TrueNegative+t.FalsePositive)
	f.PPV = Proportion(prefix+"_ppv", t.TruePositive, t.TruePositive+t.FalsePositive)
	f.NPV = Proportion(prefix+"_npv", t.TrueNegative, t.TrueNegative+t.FalseNegative)
	f.Accuracy = Proportion(prefix+"_accuracy", t.TruePositive+t.TrueNegative, t.N())
	f.Kappa = kappaIndicator(prefix+"_kappa", stats.CohenKappa(t.Matrix()))
	for _, ind := range f.indicators() {
		ind.Judge(nil, minCases)
	}
	return f
}

// indicators returns pointers to the figures' indicators in output order.
func (f *OpticalFigures) indicators() []*Indicator {
	return []*Indicator{&f.Sensitivity, &f.Specificity, &f.PPV, &f.NPV, &f.Accuracy, &f.Kappa}
}

// raterCounts is the running state behind OpticalFigures.
type raterCounts struct {
	table   BinaryTable
	classes [3][4]int
}

// add counts a lesion's call when it counts (not empty, not uncertain, with
// final histology).
func (r *raterCounts) add(call logbook.OpticalClass, h logbook.Histology) {
	row := callClass(call)
	if row < 0 || !h.IsFinal() {
		return
	}
	r.table.Add(row == classAdenoma, h.IsAdenoma())
	r.classes[row][histClass(h)]++
}

// opticalCounts is the running state of one set of lesions (all, or one
// imaging mode).
type opticalCounts struct {
	endo, aid raterCounts
	// pair is endoscopist call (rows) against aid call (columns), each as
	// predicts adenoma (0) or not (1), over lesions with both calls.
	pair         [2][2]int
	hcNum, hcDen int
}

// add counts one lesion. The high-confidence rate's denominator is every
// diminutive lesion given an optical class, uncertain included (an uncertain
// call is a low-confidence call); its numerator those called with high
// confidence; histology is not needed for it.
func (o *opticalCounts) add(l *logbook.Lesion) {
	o.endo.add(l.OpticalClass, l.Histology)
	o.aid.add(l.AidClass, l.Histology)
	e, a := callClass(l.OpticalClass), callClass(l.AidClass)
	if e >= 0 && a >= 0 {
		o.pair[b2i(e != classAdenoma)][b2i(a != classAdenoma)]++
	}
	if l.IsDiminutive() && l.OpticalClass != "" {
		o.hcDen++
		if l.Confidence == logbook.HighConfidence {
			o.hcNum++
		}
	}
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// AgreementFigures is the agreement between the endoscopist's and the
// computer-aided call (each read as predicts adenoma or not) over lesions
// given both calls, histology or not.
type AgreementFigures struct {
	// Table rows are the endoscopist's call, columns the aid's; adenoma
	// first.
	Table [2][2]int `json:"table"`
	Kappa Indicator `json:"kappa"`
}

// ImagingFigures are the optical figures of the lesions seen in one imaging
// mode ("not_recorded" when the mode was left empty).
type ImagingFigures struct {
	Imaging          string           `json:"imaging"`
	Endoscopist      OpticalFigures   `json:"endoscopist"`
	Aid              OpticalFigures   `json:"aid"`
	EndoscopistVsAid AgreementFigures `json:"endoscopist_vs_aid"`
	HighConfidence   Indicator        `json:"high_confidence_rate"`
}

// imagingSlot returns the index of a lesion's imaging mode in
// logbook.ImagingModes, or len(ImagingModes) when not recorded.
func imagingSlot(i logbook.Imaging) int {
	for k, m := range logbook.ImagingModes {
		if m == i {
			return k
		}
	}
	return len(logbook.ImagingModes)
}

// imagingName is the inverse of imagingSlot.
func imagingName(slot int) string {
	if slot < len(logbook.ImagingModes) {
		return string(logbook.ImagingModes[slot])
	}
	return "not_recorded"
}

// figures turns running counts into the figures shown.
func (o *opticalCounts) figures(imaging string, minCases int) ImagingFigures {
	f := ImagingFigures{
		Imaging:        imaging,
		Endoscopist:    newOpticalFigures("optical", o.endo.table, o.endo.classes, minCases),
		Aid:            newOpticalFigures("aid", o.aid.table, o.aid.classes, minCases),
		HighConfidence: Proportion("high_confidence_rate", o.hcNum, o.hcDen),
	}
	f.HighConfidence.Judge(nil, minCases)
	f.EndoscopistVsAid.Table = o.pair
	f.EndoscopistVsAid.Kappa = kappaIndicator("optical_aid_kappa", stats.CohenKappa([][]int{o.pair[0][:], o.pair[1][:]}))
	f.EndoscopistVsAid.Kappa.Judge(nil, minCases)
	return f
}

// empty reports whether no lesion was counted.
func (o *opticalCounts) empty() bool {
	return o.endo.table.N() == 0 && o.aid.table.N() == 0 && o.hcDen == 0 &&
		o.pair[0][0]+o.pair[0][1]+o.pair[1][0]+o.pair[1][1] == 0
}
