// Package recipe maps another system's files — a unit's audit spreadsheet, a
// procedure-room system's export, a pathology laboratory's results — onto
// our records, through an import recipe: a small TOML file that says once how
// one source's files map, reused for every later file from that source. It
// also drafts a first recipe from a file's header and values.
//
// The full contract, with a worked example, is docs/recipes.md; in short:
//
//	name = "Room reporting system export"   # optional
//	kind = "combined"           # procedures | lesions | histology | combined | wide
//	sheet = "Audit"             # .xlsx only; default the first sheet
//	header_row = 1              # default 1
//	date_format = "DD/MM/YYYY"  # tokens DD MM MMM YYYY; default ISO 8601
//	slots = 3                   # wide only: lesion slots "Polyp 1 …" to "Polyp 3 …"
//	[columns]                   # our field = the source's header
//	procedure_id = "Episode"
//	performed_on = "Date of test"
//	size_mm = "Polyp {n} size"  # wide only: {n} is the slot's number
//	[values.indication]         # the source's value = our code (trimmed, any case)
//	"Bowel screening" = "screening"
//	[yes_no]
//	yes = ["Y", "Yes", "1"]
//	no = ["N", "No", "0"]
//	not_applicable = ["N/A"]
//	[units]
//	withdrawal = "minutes"      # "8.5" or "8:30"; default seconds
//
// Kinds: procedures, lesions and histology are one record per row; combined
// is one lesion per row with its procedure's columns repeated (a procedure
// without a lesion has one row with the lesion columns empty; repeated
// procedure columns must agree); wide is one procedure per row with its
// lesions side by side in numbered columns, written once in [columns] with
// {n} and counted by slots (an empty slot is skipped; a lesion's number is
// its slot's). Without a lesion_no column, lesions of combined and lesions
// files are numbered 1, 2, 3 … per procedure in file order. Numbers may carry
// their unit ("6 mm", "6mm", "50 mcg"). One source column may feed two of our
// fields ("TA LGD" gives histology and dysplasia). A recipe never lists
// patient references, and no message shows one.
//
// Parse (or Load) reads a recipe, refusing every unknown key with the
// recipe's name, the key and what is allowed. Recipe.Map reads a
// sheet.Table and hands over our records in our own CSV dialect (the
// columns of logbook.ColumnNames(kind), our codes, ISO 8601 dates, yes/no, whole
// seconds), each with its provenance: the source file, its line, and for
// each of our columns the source header it came from, so that a check made
// later can name the source's line and column. Every problem of the file is
// collected in one run as FILE:LINE: column: reason, a value the recipe does
// not map naming the recipe section to add it to; source columns the recipe
// does not mention are listed once.
//
// Draft and DraftFile propose a recipe as TOML text, every guess they are not
// sure of marked with a "# check:" comment saying why; the text always loads
// with Parse.
package recipe

//go:generate go test -run TestSourceWorkbook -update .
