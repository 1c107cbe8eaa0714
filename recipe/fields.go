package recipe

import (
	"polypledger/logbook"
	"polypledger/sheet"
)

// Kind is a kind of our records, named as our CSV files are
// (architecture.md, "CSV interchange"); the same words as store.Kind.
type Kind string

// Kinds of records.
const (
	Procedures Kind = "procedures"
	Lesions    Kind = "lesions"
	Histology  Kind = "histology"
)

// Kinds lists the kinds in the order they are stored: a lesion needs its
// procedure, a histology result its lesion.
var Kinds = []Kind{Procedures, Lesions, Histology}

// FieldType says what a field holds, and so how a source value is read.
type FieldType int

// Field types.
const (
	Text    FieldType = iota // any text, kept as it is (trimmed)
	Patient                  // the patient reference: text never shown in a message
	Date                     // a calendar date, written YYYY-MM-DD
	Code                     // one of the field's codes
	YesNo                    // yes or no (and not_applicable where allowed)
	Count                    // a whole number
	Amount                   // a decimal amount, such as a dose
	Seconds                  // the withdrawal time, written in whole seconds
)

// Field is one column of our CSV files.
type Field struct {
	Name string
	Type FieldType
	// Codes are the field's codes (Code fields).
	Codes []string
	// NA allows not_applicable (YesNo fields: rectal retroversion).
	NA bool
	// Units are the units a number may carry in the source ("6 mm"), in
	// lower case; the first is ours.
	Units []string
	// Optional columns may be absent from a file of our own dialect.
	Optional bool
}

func codes[T ~string](set []T) []string {
	out := make([]string, len(set))
	for i, c := range set {
		out[i] = string(c)
	}
	return out
}

func text(name string) Field               { return Field{Name: name, Type: Text} }
func date(name string) Field               { return Field{Name: name, Type: Date} }
func yesNo(name string) Field              { return Field{Name: name, Type: YesNo} }
func count(name string, u ...string) Field { return Field{Name: name, Type: Count, Units: u} }
func amount(name string, u ...string) Field {
	return Field{Name: name, Type: Amount, Units: u}
}
func code[T ~string](name string, set []T) Field {
	return Field{Name: name, Type: Code, Codes: codes(set)}
}

// The fields of each kind, in the order of our CSV files (store.Columns);
// a test keeps the two the same.
var (
	procedureFields = []Field{
		text("procedure_id"),
		date("performed_on"),
		text("operator_id"),
		text("trainee_id"),
		code("supervision", logbook.Supervisions),
		yesNo("trainee_reached_caecum"),
		{Name: "patient_ref", Type: Patient},
		count("age", "years", "y", "yr", "yrs"),
		code("sex", logbook.Sexes),
		code("indication", logbook.Indications),
		code("setting", logbook.Settings),
		code("exclusion", logbook.Exclusions),
		code("extent", logbook.Extents),
		code("incomplete_reason", logbook.IncompleteReasons),
		yesNo("caecal_photo"),
		{Name: "withdrawal_seconds", Type: Seconds},
		count("bbps_right"),
		count("bbps_transverse"),
		count("bbps_left"),
		{Name: "retroversion", Type: YesNo, NA: true},
		amount("midazolam_mg", "mg"),
		amount("fentanyl_ug", "ug", "µg", "μg", "mcg"),
		amount("pethidine_mg", "mg"),
		yesNo("propofol"),
		count("comfort"),
		yesNo("detection_aid"),
		code("adverse_event", logbook.AdverseEvents),
		code("recommended_interval", logbook.Intervals),
	}
	lesionFields = []Field{
		text("procedure_id"),
		count("lesion_no"),
		code("segment", logbook.Segments),
		count("size_mm", "mm"),
		code("paris", logbook.ParisClasses),
		code("optical_class", logbook.OpticalClasses),
		code("confidence", logbook.Confidences),
		code("imaging", logbook.ImagingModes),
		code("aid_class", logbook.OpticalClasses),
		code("resection", logbook.Resections),
		yesNo("retrieved"),
		yesNo("sent_to_pathology"),
		code("histology", logbook.Histologies),
		code("dysplasia", logbook.Dysplasias),
		{Name: "tattoo", Type: YesNo, Optional: true},
	}
	histologyFields = []Field{
		text("procedure_id"),
		count("lesion_no"),
		code("histology", logbook.Histologies),
		code("dysplasia", logbook.Dysplasias),
		date("reported_on"),
	}
)

// Fields returns the fields of a kind in the order of our CSV files (nil
// for an unknown kind). The slice is shared: do not change it.
func Fields(k Kind) []Field {
	switch k {
	case Procedures:
		return procedureFields
	case Lesions:
		return lesionFields
	case Histology:
		return histologyFields
	}
	return nil
}

// Columns returns the column names of a kind, in the order of our CSV files.
func Columns(k Kind) []string {
	fs := Fields(k)
	out := make([]string, len(fs))
	for i, f := range fs {
		out[i] = f.Name
	}
	return out
}

// SheetTypes returns how a workbook stores each column of a kind: dates as
// dates, counts, amounts and seconds as numbers, the rest as text.
func SheetTypes(k Kind) []sheet.ColumnType {
	fs := Fields(k)
	out := make([]sheet.ColumnType, len(fs))
	for i, f := range fs {
		switch f.Type {
		case Date:
			out[i] = sheet.Date
		case Count, Amount, Seconds:
			out[i] = sheet.Number
		default:
			out[i] = sheet.Text
		}
	}
	return out
}

// fieldIndex returns the position of a field among its kind's, or -1.
func fieldIndex(k Kind, name string) int {
	for i, f := range Fields(k) {
		if f.Name == name {
			return i
		}
	}
	return -1
}
