package recipe

import "polypledger/logbook"

// Kind is a kind of our records, named as our CSV files are: the logbook's
// (and the store's) Kind.
type Kind = logbook.Kind

// Kinds of records.
const (
	Procedures = logbook.KindProcedures
	Lesions    = logbook.KindLesions
	Histology  = logbook.KindHistology
)

// Kinds lists the kinds in the order they are stored: a lesion needs its
// procedure, a histology result its lesion.
var Kinds = logbook.Kinds

// FieldType says what a field holds, and so how a source value is read.
type FieldType = logbook.ColumnType

// Field types.
const (
	Text    = logbook.TextColumn    // any text, kept as it is (trimmed)
	Patient = logbook.PatientColumn // the patient reference: text never shown in a message
	Date    = logbook.DateColumn    // a calendar date, written YYYY-MM-DD
	Code    = logbook.CodeColumn    // one of the field's codes
	YesNo   = logbook.YesNoColumn   // yes or no (and not_applicable where allowed)
	Count   = logbook.CountColumn   // a whole number
	Amount  = logbook.AmountColumn  // a decimal amount, such as a dose
	Seconds = logbook.SecondsColumn // the withdrawal time, written in whole seconds
)

// Field is one column of our CSV files, from the logbook's one catalogue.
type Field = logbook.Column

// Fields returns the fields of a kind in the order of our CSV files (nil
// for an unknown kind). The slice is shared: do not change it.
func Fields(k Kind) []Field { return logbook.Columns(k) }

// fieldIndex returns the position of a field among its kind's, or -1.
func fieldIndex(k Kind, name string) int {
	for i, f := range Fields(k) {
		if f.Name == name {
			return i
		}
	}
	return -1
}
