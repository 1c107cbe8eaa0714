package logbook

import "strconv"

// Kind is a kind of record file, named as our CSV files are
// (architecture.md, "CSV interchange"): procedures, lesions or histology.
type Kind string

// Kinds of record files.
const (
	KindProcedures Kind = "procedures"
	KindLesions    Kind = "lesions"
	KindHistology  Kind = "histology"
)

// Kinds lists the kinds in the order they are stored: a lesion needs its
// procedure, a histology result its lesion.
var Kinds = []Kind{KindProcedures, KindLesions, KindHistology}

// ColumnType says what a column holds, and so how a value is read into it
// and how a workbook stores it.
type ColumnType int

// Column types.
const (
	TextColumn    ColumnType = iota // any text, kept as it is (trimmed)
	PatientColumn                   // the patient reference: never shown in a message
	DateColumn                      // a calendar date, written YYYY-MM-DD
	CodeColumn                      // one of the column's codes
	YesNoColumn                     // yes or no (and not_applicable where allowed)
	CountColumn                     // a whole number
	AmountColumn                    // a decimal amount, such as a dose
	SecondsColumn                   // the withdrawal time, written in whole seconds
)

// Column is one column of our CSV files: the one catalogue that the store's
// import and export, the workbook writer and the import recipes all read.
type Column struct {
	Name string
	Type ColumnType
	// Codes are the column's codes (CodeColumn).
	Codes []string
	// NA allows not_applicable (YesNoColumn: rectal retroversion).
	NA bool
	// Units are the units a number may carry in another system's file
	// ("6 mm"), in lower case; the first is ours.
	Units []string
	// Optional columns may be absent from a file of ours.
	Optional bool
}

func codeStrings[T ~string](set []T) []string {
	out := make([]string, len(set))
	for i, c := range set {
		out[i] = string(c)
	}
	return out
}

func textColumn(name string) Column  { return Column{Name: name, Type: TextColumn} }
func dateColumn(name string) Column  { return Column{Name: name, Type: DateColumn} }
func yesNoColumn(name string) Column { return Column{Name: name, Type: YesNoColumn} }
func countColumn(name string, units ...string) Column {
	return Column{Name: name, Type: CountColumn, Units: units}
}
func amountColumn(name string, units ...string) Column {
	return Column{Name: name, Type: AmountColumn, Units: units}
}
func codeColumn[T ~string](name string, set []T) Column {
	return Column{Name: name, Type: CodeColumn, Codes: codeStrings(set)}
}

// The columns of each kind, in the order of our CSV files.
var (
	procedureColumns = []Column{
		textColumn("procedure_id"),
		dateColumn("performed_on"),
		textColumn("operator_id"),
		textColumn("trainee_id"),
		codeColumn("supervision", Supervisions),
		yesNoColumn("trainee_reached_caecum"),
		{Name: "patient_ref", Type: PatientColumn},
		countColumn("age", "years", "y", "yr", "yrs"),
		codeColumn("sex", Sexes),
		codeColumn("indication", Indications),
		codeColumn("setting", Settings),
		codeColumn("exclusion", Exclusions),
		codeColumn("extent", Extents),
		codeColumn("incomplete_reason", IncompleteReasons),
		yesNoColumn("caecal_photo"),
		{Name: "withdrawal_seconds", Type: SecondsColumn},
		countColumn("bbps_right"),
		countColumn("bbps_transverse"),
		countColumn("bbps_left"),
		{Name: "retroversion", Type: YesNoColumn, NA: true},
		amountColumn("midazolam_mg", "mg"),
		amountColumn("fentanyl_ug", "ug", "µg", "μg", "mcg"),
		amountColumn("pethidine_mg", "mg"),
		yesNoColumn("propofol"),
		countColumn("comfort"),
		yesNoColumn("detection_aid"),
		codeColumn("adverse_event", AdverseEvents),
		codeColumn("recommended_interval", Intervals),
	}
	lesionColumns = []Column{
		textColumn("procedure_id"),
		countColumn("lesion_no"),
		codeColumn("segment", Segments),
		countColumn("size_mm", "mm"),
		codeColumn("paris", ParisClasses),
		codeColumn("optical_class", OpticalClasses),
		codeColumn("confidence", Confidences),
		codeColumn("imaging", ImagingModes),
		codeColumn("aid_class", OpticalClasses),
		codeColumn("resection", Resections),
		yesNoColumn("retrieved"),
		yesNoColumn("sent_to_pathology"),
		codeColumn("histology", Histologies),
		codeColumn("dysplasia", Dysplasias),
		{Name: "tattoo", Type: YesNoColumn, Optional: true},
	}
	histologyColumns = []Column{
		textColumn("procedure_id"),
		countColumn("lesion_no"),
		codeColumn("histology", Histologies),
		codeColumn("dysplasia", Dysplasias),
		dateColumn("reported_on"),
	}
)

// Columns returns the columns of a kind in the order of our CSV files (nil
// for an unknown kind). The slice is shared: do not change it.
func Columns(k Kind) []Column {
	switch k {
	case KindProcedures:
		return procedureColumns
	case KindLesions:
		return lesionColumns
	case KindHistology:
		return histologyColumns
	}
	return nil
}

// ColumnNames returns the header of a kind's CSV file.
func ColumnNames(k Kind) []string {
	cs := Columns(k)
	out := make([]string, len(cs))
	for i, c := range cs {
		out[i] = c.Name
	}
	return out
}

// kindWords name one record of each kind, and many.
var kindWords = map[Kind][2]string{
	KindProcedures: {"procedure", "procedures"},
	KindLesions:    {"lesion", "lesions"},
	KindHistology:  {"histology result", "histology results"},
}

// Count words a number of records of the kind: "1 procedure", "5 histology
// results".
func (k Kind) Count(n int) string {
	w, ok := kindWords[k]
	if !ok {
		w = [2]string{string(k), string(k)}
	}
	if n == 1 {
		return "1 " + w[0]
	}
	return strconv.Itoa(n) + " " + w[1]
}
