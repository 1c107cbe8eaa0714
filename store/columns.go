package store

import (
	"encoding/json"
	"fmt"
	"strings"
	"time"

	"polypledger/logbook"
)

// column maps one field of a record to its CSV column and its SQL column.
// The CSV text form is also what is stored (SQLite's column affinity turns
// "12" into the integer 12), so one pair of functions serves both, except
// where the stored form differs (the patient pseudonym).
type column[T any] struct {
	name     string // CSV header and, unless sqlName is set, SQL column
	sqlName  string
	optional bool // the CSV header may omit it
	get      func(*T) string
	set      func(*T, string, *codec) error
	// toSQL and fromSQL override get/set for the stored form.
	toSQL   func(*T) string
	fromSQL func(*T, string)
	// fromRaw, when set, reads a stored value straight from the bytes the
	// driver returned, without making a string; it reports false for a value
	// it does not recognise, which then takes the ordinary path. Stored
	// values are written by the program itself, so the common ones are few.
	fromRaw func(*T, []byte, *rawCache) bool
}

// rawCache remembers what one reader of a full pass has read already, so
// that values that repeat are not made again: the stored dates (a full
// pass reads the same few thousand dates again and again: procedures in
// date order, lesions' report dates in any order), the staff ids (a unit
// has a few dozen), and the last procedure id of the lesion stream (a
// procedure's lesions come together); and the doses (a unit gives the same
// few amounts).
type rawCache struct {
	dateRaw []byte
	date    time.Time
	dates   map[string]time.Time
	doses   map[string]float64
	staff   map[string]string
	lastID  string
}

// maxStaffIDs, maxDates and maxDoses bound the staff ids, dates and doses
// a reader keeps.
const (
	maxStaffIDs = 4096
	maxDates    = 16384
	maxDoses    = 4096
)

// dose returns the stored dose b, read once.
func (rc *rawCache) dose(b []byte) (float64, bool) {
	if v, ok := rc.doses[string(b)]; ok {
		return v, true
	}
	v, err := logbook.ParseDose(string(b))
	if err != nil {
		return 0, false
	}
	if rc.doses == nil {
		rc.doses = map[string]float64{}
	}
	if len(rc.doses) < maxDoses {
		rc.doses[string(b)] = v
	}
	return v, true
}

// storedDate returns the stored date b, read once.
func (rc *rawCache) storedDate(b []byte) (time.Time, bool) {
	if string(b) == string(rc.dateRaw) {
		return rc.date, true
	}
	d, ok := rc.dates[string(b)]
	if !ok {
		var err error
		if d, err = logbook.ParseDate(string(b)); err != nil {
			return time.Time{}, false
		}
		if rc.dates == nil {
			rc.dates = map[string]time.Time{}
		}
		if len(rc.dates) < maxDates {
			rc.dates[string(b)] = d
		}
	}
	rc.dateRaw, rc.date = append(rc.dateRaw[:0], b...), d
	return d, true
}

// staffID returns the stored staff id b as a string, made once.
func (rc *rawCache) staffID(b []byte) string {
	if s, ok := rc.staff[string(b)]; ok {
		return s
	}
	s := string(b)
	if rc.staff == nil {
		rc.staff = map[string]string{}
	}
	if len(rc.staff) < maxStaffIDs {
		rc.staff[s] = s
	}
	return s
}

// sameID returns the stored procedure id b as a string, the one made for
// the row before when it is the same.
func (rc *rawCache) sameID(b []byte) string {
	if rc.lastID != string(b) {
		rc.lastID = string(b)
	}
	return rc.lastID
}

// cachedRaw returns a fromRaw that reads a stored value through one of a
// reader's caches (read).
func cachedRaw[T, V any](f func(*T) *V, read func(*rawCache, []byte) (V, bool)) func(*T, []byte, *rawCache) bool {
	return func(r *T, b []byte, rc *rawCache) bool {
		if rc == nil {
			return false
		}
		v, ok := read(rc, b)
		if ok {
			*f(r) = v
		}
		return ok
	}
}

// rawCount reads a stored whole number of up to nine digits.
func rawCount(b []byte) (int, bool) {
	if len(b) == 0 || len(b) > 9 {
		return 0, false
	}
	n := 0
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int(c-'0')
	}
	return n, true
}

func (c column[T]) sqlColumn() string {
	if c.sqlName != "" {
		return c.sqlName
	}
	return c.name
}

func (c column[T]) storedValue(r *T) any {
	v := ""
	if c.toSQL != nil {
		v = c.toSQL(r)
	} else {
		v = c.get(r)
	}
	if v == "" {
		return nil
	}
	return v
}

func (c column[T]) loadStored(r *T, v string) error {
	if c.fromSQL != nil {
		c.fromSQL(r, v)
		return nil
	}
	return c.set(r, v, nil)
}

// codec carries what parsing a CSV value may need: the unit key for
// pseudonymising patient references.
type codec struct {
	key []byte
	// hashed is set when a value was pseudonymised under key (rather than
	// arriving as a pseudonym already).
	hashed bool
}

// Helpers that build columns of each kind of field.

func textCol[T any](name string, f func(*T) *string) column[T] {
	return column[T]{name: name,
		get: func(r *T) string { return *f(r) },
		set: func(r *T, s string, _ *codec) error { *f(r) = s; return nil }}
}

// reusedTextCol is a text column whose stored values repeat, read through
// the reader's cache (see rawCache).
func reusedTextCol[T any](name string, f func(*T) *string, reuse func(*rawCache, []byte) string) column[T] {
	c := textCol(name, f)
	c.fromRaw = func(r *T, b []byte, rc *rawCache) bool {
		if rc == nil {
			return false
		}
		*f(r) = reuse(rc, b)
		return true
	}
	return c
}

func codeCol[T any, C ~string](name string, set []C, f func(*T) *C) column[T] {
	return column[T]{name: name,
		fromRaw: func(r *T, b []byte, _ *rawCache) bool {
			for _, c := range set {
				if string(b) == string(c) {
					*f(r) = c
					return true
				}
			}
			return false
		},
		get: func(r *T) string { return string(*f(r)) },
		set: func(r *T, s string, _ *codec) error {
			v, err := logbook.ParseCode(s, set)
			*f(r) = v
			return err
		}}
}

func countCol[T any](name string, f func(*T) *int) column[T] {
	return column[T]{name: name,
		fromRaw: func(r *T, b []byte, _ *rawCache) bool {
			n, ok := rawCount(b)
			if ok {
				*f(r) = n
			}
			return ok
		},
		get: func(r *T) string { return logbook.FormatCount(*f(r)) },
		set: func(r *T, s string, _ *codec) error {
			v, err := logbook.ParseCount(s)
			*f(r) = v
			return err
		}}
}

func doseCol[T any](name string, f func(*T) *float64) column[T] {
	return column[T]{name: name,
		fromRaw: cachedRaw(f, (*rawCache).dose),
		get:     func(r *T) string { return logbook.FormatDose(*f(r)) },
		set: func(r *T, s string, _ *codec) error {
			v, err := logbook.ParseDose(s)
			*f(r) = v
			return err
		}}
}

func yesNoCol[T any](name string, allowNA bool, f func(*T) *logbook.YesNo) column[T] {
	return column[T]{name: name,
		fromRaw: func(r *T, b []byte, _ *rawCache) bool {
			switch string(b) {
			case "yes":
				*f(r) = logbook.Yes
			case "no":
				*f(r) = logbook.No
			default:
				return false
			}
			return true
		},
		get: func(r *T) string { return f(r).String() },
		set: func(r *T, s string, _ *codec) error {
			v, err := logbook.ParseYesNo(s, allowNA)
			*f(r) = v
			return err
		}}
}

func dateCol[T any](name string, f func(*T) *time.Time) column[T] {
	return column[T]{name: name,
		fromRaw: cachedRaw(f, (*rawCache).storedDate),
		get:     func(r *T) string { return logbook.FormatDate(*f(r)) },
		set: func(r *T, s string, _ *codec) error {
			v, err := logbook.ParseDate(s)
			*f(r) = v
			return err
		}}
}

// procRec, lesionRec and histRec are short, unexported names for the
// records the column tables below describe, to keep their lines readable.
type procRec = logbook.Procedure
type lesionRec = logbook.Lesion
type histRec = logbook.HistologyResult

// procedureColumns is procedures.csv in the order of the contract
// (architecture.md).
var procedureColumns = []column[procRec]{
	withSQLName(textCol("procedure_id", func(p *procRec) *string { return &p.ID }), "id"),
	dateCol("performed_on", func(p *procRec) *time.Time { return &p.PerformedOn }),
	reusedTextCol("operator_id", func(p *procRec) *string { return &p.OperatorID }, (*rawCache).staffID),
	reusedTextCol("trainee_id", func(p *procRec) *string { return &p.TraineeID }, (*rawCache).staffID),
	codeCol("supervision", logbook.Supervisions, func(p *procRec) *logbook.Supervision { return &p.Supervision }),
	yesNoCol("trainee_reached_caecum", false, func(p *procRec) *logbook.YesNo { return &p.TraineeReachedCaecum }),
	{
		name: "patient_ref", sqlName: "patient_key",
		get: func(p *procRec) string { return logbook.ExportPseudonym(p.PatientKey) },
		set: func(p *procRec, s string, c *codec) error {
			var key []byte
			if c != nil {
				key = c.key
			}
			v, err := logbook.Pseudonymise(key, s)
			p.PatientKey = v
			if c != nil && err == nil && v != "" && !logbook.IsExportPseudonym(s) {
				c.hashed = true
			}
			return err
		},
		toSQL:   func(p *procRec) string { return p.PatientKey },
		fromSQL: func(p *procRec, s string) { p.PatientKey = s },
	},
	countCol("age", func(p *procRec) *int { return &p.Age }),
	codeCol("sex", logbook.Sexes, func(p *procRec) *logbook.Sex { return &p.Sex }),
	codeCol("indication", logbook.Indications, func(p *procRec) *logbook.Indication { return &p.Indication }),
	codeCol("setting", logbook.Settings, func(p *procRec) *logbook.Setting { return &p.Setting }),
	codeCol("exclusion", logbook.Exclusions, func(p *procRec) *logbook.Exclusion { return &p.Exclusion }),
	codeCol("extent", logbook.Extents, func(p *procRec) *logbook.Extent { return &p.Extent }),
	codeCol("incomplete_reason", logbook.IncompleteReasons, func(p *procRec) *logbook.IncompleteReason { return &p.IncompleteReason }),
	yesNoCol("caecal_photo", false, func(p *procRec) *logbook.YesNo { return &p.CaecalPhoto }),
	countCol("withdrawal_seconds", func(p *procRec) *int { return &p.WithdrawalSeconds }),
	countCol("bbps_right", func(p *procRec) *int { return &p.BBPSRight }),
	countCol("bbps_transverse", func(p *procRec) *int { return &p.BBPSTransverse }),
	countCol("bbps_left", func(p *procRec) *int { return &p.BBPSLeft }),
	yesNoCol("retroversion", true, func(p *procRec) *logbook.YesNo { return &p.Retroversion }),
	doseCol("midazolam_mg", func(p *procRec) *float64 { return &p.MidazolamMg }),
	doseCol("fentanyl_ug", func(p *procRec) *float64 { return &p.FentanylUg }),
	doseCol("pethidine_mg", func(p *procRec) *float64 { return &p.PethidineMg }),
	yesNoCol("propofol", false, func(p *procRec) *logbook.YesNo { return &p.Propofol }),
	countCol("comfort", func(p *procRec) *int { return &p.Comfort }),
	yesNoCol("detection_aid", false, func(p *procRec) *logbook.YesNo { return &p.DetectionAid }),
	codeCol("adverse_event", logbook.AdverseEvents, func(p *procRec) *logbook.AdverseEvent { return &p.AdverseEvent }),
	codeCol("recommended_interval", logbook.Intervals, func(p *procRec) *logbook.Interval { return &p.RecommendedInterval }),
}

// lesionColumns is lesions.csv in the order of the contract; tattoo is
// optional on import and always exported.
var lesionColumns = []column[lesionRec]{
	reusedTextCol("procedure_id", func(l *lesionRec) *string { return &l.ProcedureID }, (*rawCache).sameID),
	countCol("lesion_no", func(l *lesionRec) *int { return &l.LesionNo }),
	codeCol("segment", logbook.Segments, func(l *lesionRec) *logbook.Segment { return &l.Segment }),
	countCol("size_mm", func(l *lesionRec) *int { return &l.SizeMM }),
	codeCol("paris", logbook.ParisClasses, func(l *lesionRec) *logbook.Paris { return &l.Paris }),
	codeCol("optical_class", logbook.OpticalClasses, func(l *lesionRec) *logbook.OpticalClass { return &l.OpticalClass }),
	codeCol("confidence", logbook.Confidences, func(l *lesionRec) *logbook.Confidence { return &l.Confidence }),
	codeCol("imaging", logbook.ImagingModes, func(l *lesionRec) *logbook.Imaging { return &l.Imaging }),
	codeCol("aid_class", logbook.OpticalClasses, func(l *lesionRec) *logbook.OpticalClass { return &l.AidClass }),
	codeCol("resection", logbook.Resections, func(l *lesionRec) *logbook.Resection { return &l.Resection }),
	yesNoCol("retrieved", false, func(l *lesionRec) *logbook.YesNo { return &l.Retrieved }),
	yesNoCol("sent_to_pathology", false, func(l *lesionRec) *logbook.YesNo { return &l.SentToPathology }),
	codeCol("histology", logbook.Histologies, func(l *lesionRec) *logbook.Histology { return &l.Histology }),
	codeCol("dysplasia", logbook.Dysplasias, func(l *lesionRec) *logbook.Dysplasia { return &l.Dysplasia }),
	withOptional(yesNoCol("tattoo", false, func(l *lesionRec) *logbook.YesNo { return &l.Tattoo })),
}

// lesionStoredColumns adds what the database keeps beyond lesions.csv.
var lesionStoredColumns = append(append([]column[lesionRec](nil), lesionColumns...),
	dateCol("reported_on", func(l *lesionRec) *time.Time { return &l.ReportedOn }))

// histologyColumns is histology.csv.
var histologyColumns = []column[histRec]{
	textCol("procedure_id", func(h *histRec) *string { return &h.ProcedureID }),
	countCol("lesion_no", func(h *histRec) *int { return &h.LesionNo }),
	codeCol("histology", logbook.Histologies, func(h *histRec) *logbook.Histology { return &h.Histology }),
	codeCol("dysplasia", logbook.Dysplasias, func(h *histRec) *logbook.Dysplasia { return &h.Dysplasia }),
	dateCol("reported_on", func(h *histRec) *time.Time { return &h.ReportedOn }),
}

func withOptional[T any](c column[T]) column[T] { c.optional = true; return c }

func withSQLName[T any](c column[T], name string) column[T] { c.sqlName = name; return c }

// names returns the CSV names of cols.
func names[T any](cols []column[T]) []string {
	out := make([]string, len(cols))
	for i, c := range cols {
		out[i] = c.name
	}
	return out
}

// sqlList returns the SQL column names of cols joined by commas.
func sqlList[T any](cols []column[T]) string {
	out := make([]string, len(cols))
	for i, c := range cols {
		out[i] = c.sqlColumn()
	}
	return strings.Join(out, ", ")
}

// placeholders returns "?, ?, …" for n values.
func placeholders(n int) string {
	return strings.TrimSuffix(strings.Repeat("?, ", n), ", ")
}

// storedArgs returns the values to store for r, in the order of cols.
func storedArgs[T any](cols []column[T], r *T) []any {
	args := make([]any, len(cols))
	for i, c := range cols {
		args[i] = c.storedValue(r)
	}
	return args
}

// csvRow returns r's CSV cells in the order of cols.
func csvRow[T any](cols []column[T], r *T) []string {
	out := make([]string, len(cols))
	for i, c := range cols {
		out[i] = c.get(r)
	}
	return out
}

// recordJSON is the change-log form of one record.
func recordJSON[T any](cols []column[T], r *T) json.RawMessage {
	return appendJSON(make([]byte, 0, 512), cols, r)
}

// appendJSON appends r's non-empty fields as a JSON object in column
// order, the form the change log records. Plain printable-ASCII values (all
// codes, dates and numbers) are written directly; anything else is quoted
// by encoding/json.
func appendJSON[T any](b []byte, cols []column[T], r *T) []byte {
	b = append(b, '{')
	first := true
	for _, c := range cols {
		v := c.get(r)
		if v == "" {
			continue
		}
		if !first {
			b = append(b, ',')
		}
		first = false
		b = append(b, '"')
		b = append(b, c.name...)
		b = append(b, '"', ':')
		b = appendJSONString(b, v)
	}
	return append(b, '}')
}

func appendJSONString(b []byte, v string) []byte {
	for i := 0; i < len(v); i++ {
		if c := v[i]; c < 0x20 || c > 0x7e || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			q, _ := json.Marshal(v) // a string always encodes
			return append(b, q...)
		}
	}
	b = append(b, '"')
	b = append(b, v...)
	return append(b, '"')
}

// scanStored reads one stored row (as nullable strings, in the order of
// cols) into r.
func scanStored[T any](cols []column[T], vals []*string, r *T) error {
	for i, c := range cols {
		if vals[i] == nil {
			continue
		}
		if err := c.loadStored(r, *vals[i]); err != nil {
			return fmt.Errorf("stored %s: %w", c.name, err)
		}
	}
	return nil
}
