package recipe

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"polypledger/sheet"
)

// Shape is how a source file lays out its records: the recipe's kind.
type Shape string

// Shapes.
const (
	// ShapeProcedures: one row per procedure, procedure columns only.
	ShapeProcedures Shape = "procedures"
	// ShapeLesions: one row per lesion, lesion columns only.
	ShapeLesions Shape = "lesions"
	// ShapeHistology: one row per histology result.
	ShapeHistology Shape = "histology"
	// ShapeCombined: one row per lesion with its procedure's columns
	// repeated; a procedure without a lesion has one row whose lesion
	// columns are empty.
	ShapeCombined Shape = "combined"
	// ShapeWide: one row per procedure with its lesions side by side in
	// numbered columns ("Polyp 1 size" … "Polyp 3 size").
	ShapeWide Shape = "wide"
)

// Shapes lists the shapes in the order the contract gives them.
var Shapes = []Shape{ShapeProcedures, ShapeLesions, ShapeHistology, ShapeCombined, ShapeWide}

// Kinds returns the kinds of record a file of this shape yields.
func (s Shape) Kinds() []Kind {
	switch s {
	case ShapeProcedures:
		return []Kind{Procedures}
	case ShapeLesions:
		return []Kind{Lesions}
	case ShapeHistology:
		return []Kind{Histology}
	case ShapeCombined, ShapeWide:
		return []Kind{Procedures, Lesions}
	}
	return nil
}

// SlotMark stands for the lesion's number in the lesion column headers of a
// wide recipe: "Polyp {n} size".
const SlotMark = "{n}"

// MaxSlots caps the lesion slots of a wide recipe.
const MaxSlots = 50

// Recipe says how one source's files map onto our records. Build one with
// Load or Parse; it is not changed by mapping, and may be used for many files
// at once.
type Recipe struct {
	// File names the recipe in messages.
	File string
	// Name is the recipe's own name (optional key "name").
	Name  string
	Shape Shape
	// Sheet is the workbook sheet to read; empty for the first.
	Sheet string
	// HeaderRow is the row holding the column names (1 by default).
	HeaderRow int
	// DateFormat is the source's date form as written in the recipe, empty
	// for ISO 8601.
	DateFormat string
	// Slots is the number of lesion slots of a wide recipe.
	Slots int
	// Columns maps our field names to the source's headers, as written.
	Columns map[string]string
	// WithdrawalMinutes is set when the source gives the withdrawal time in
	// minutes ("8.5" or "8:30") rather than seconds.
	WithdrawalMinutes bool
	// Warnings are parts of the recipe that do no harm but do nothing.
	Warnings []string

	dates  dateForm
	values map[string]map[string]string // field → folded source value → our value
	yes    map[string]bool              // folded words
	no     map[string]bool
	na     map[string]bool
	// As written in the recipe, for Text.
	spelled map[string]map[string]string // field → folded source value → as written
	words   map[string][]string          // answer → words as written
}

// Options returns the sheet options the recipe asks for.
func (r *Recipe) Options() sheet.Options {
	return sheet.Options{Sheet: r.Sheet, HeaderRow: r.HeaderRow}
}

// Values returns the recipe's value list for a field: source value (folded:
// trimmed, spaces collapsed, lower case) → our value. Nil when the recipe
// has none.
func (r *Recipe) Values(field string) map[string]string { return r.values[field] }

// LoadError is a recipe that cannot be used, with every problem found.
type LoadError struct {
	File     string
	Problems []string
}

func (e *LoadError) Error() string {
	var b strings.Builder
	for i, p := range e.Problems {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.File)
		b.WriteString(": ")
		b.WriteString(p)
	}
	return b.String()
}

func (e *LoadError) add(format string, args ...any) {
	e.Problems = append(e.Problems, fmt.Sprintf(format, args...))
}

// Load reads the recipe file at path.
func Load(path string) (*Recipe, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read recipe: %w", err)
	}
	return Parse(filepath.Base(path), b)
}

// maxRecipeBytes caps a recipe file: a recipe is a page of text.
const maxRecipeBytes = 1 << 20

// topKeys are the recipe's top-level keys, in the contract's order.
var topKeys = []string{"name", "kind", "sheet", "header_row", "date_format", "slots", "columns", "values", "yes_no", "units"}

// Parse reads a recipe from its TOML text; name names it in messages. Every
// problem is reported at once, in a *LoadError.
func Parse(name string, data []byte) (*Recipe, error) {
	le := &LoadError{File: name}
	if len(data) > maxRecipeBytes {
		le.add("a recipe longer than %d KiB is not a recipe", maxRecipeBytes>>10)
		return nil, le
	}
	var doc map[string]any
	if _, err := toml.Decode(string(data), &doc); err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			le.add("line %d: not valid TOML: %s", pe.Position.Line, pe.Message)
		} else {
			le.add("not valid TOML: %v", err)
		}
		return nil, le
	}
	r := &Recipe{File: name, HeaderRow: 1, Columns: map[string]string{}, values: map[string]map[string]string{},
		spelled: map[string]map[string]string{}, words: map[string][]string{}}
	for _, k := range sortedKeys(doc) {
		if !slices.Contains(topKeys, k) {
			le.add("unknown key %q (a recipe has: %s)", k, strings.Join(topKeys, ", "))
		}
	}
	r.Name = str(le, doc, "name")
	kind := str(le, doc, "kind")
	switch {
	case kind == "":
		le.add("kind is missing (one of %s)", shapeList())
	case !slices.Contains(Shapes, Shape(kind)):
		le.add("kind %q is not one of %s", kind, shapeList())
	default:
		r.Shape = Shape(kind)
	}
	r.Sheet = str(le, doc, "sheet")
	if v, ok := doc["header_row"]; ok {
		n, isInt := v.(int64)
		if !isInt || n < 1 || n > 1<<20 {
			le.add("header_row must be a row number (1 or more), not %s", show(v))
		} else {
			r.HeaderRow = int(n)
		}
	}
	r.DateFormat = str(le, doc, "date_format")
	if r.DateFormat != "" {
		f, err := parseDateForm(r.DateFormat)
		if err != nil {
			le.add("date_format %q: %v", r.DateFormat, err)
		}
		r.dates = f
	}
	if v, ok := doc["slots"]; ok {
		n, isInt := v.(int64)
		switch {
		case r.Shape != ShapeWide:
			le.add("slots belongs to a wide recipe (kind = \"wide\"), not to kind %q", kind)
		case !isInt || n < 1 || n > MaxSlots:
			le.add("slots must be a whole number from 1 to %d, not %s", MaxSlots, show(v))
		default:
			r.Slots = int(n)
		}
	} else if r.Shape == ShapeWide {
		le.add("slots is missing: a wide recipe says how many lesions a row can hold (slots = 3 for \"Polyp 1 …\" to \"Polyp 3 …\")")
	}
	fields := shapeFields(r.Shape)
	r.columns(le, doc["columns"], fields)
	r.valueLists(le, doc["values"], fields)
	r.yesNo(le, doc["yes_no"])
	r.units(le, doc["units"])
	if len(le.Problems) > 0 {
		return nil, le
	}
	return r, nil
}

// columns reads [columns]: our field = the source's header.
func (r *Recipe) columns(le *LoadError, v any, fields map[string]Field) {
	if v == nil {
		le.add("[columns] is missing: it names the source column of each of our fields")
		return
	}
	t, ok := v.(map[string]any)
	if !ok {
		le.add("columns must be a table ([columns]), not %s", show(v))
		return
	}
	for _, k := range sortedKeys(t) {
		h, isStr := t[k].(string)
		h = strings.TrimSpace(h)
		if _, known := fields[k]; !known {
			switch {
			case slices.Contains(topKeys, k):
				le.add("[columns] %q: %s belongs above the first [section] (TOML puts every key after [columns] into it)", k, k)
			case r.Shape != "":
				le.add("[columns] %q is not one of our fields for kind %q (fields: %s)", k, r.Shape, strings.Join(fieldNames(r.Shape), ", "))
			}
			continue
		}
		if !isStr || h == "" {
			le.add("[columns] %s must be the source column's header, as text", k)
			continue
		}
		slotted := strings.Contains(h, SlotMark)
		switch {
		case r.Shape == ShapeWide && lesionOnly(k) && !slotted:
			le.add("[columns] %s = %q: a lesion column of a wide recipe has %s where the lesion's number goes (\"Polyp %s size\")", k, h, SlotMark, SlotMark)
		case r.Shape == ShapeWide && !lesionOnly(k) && slotted:
			le.add("[columns] %s = %q: %s belongs in lesion columns only", k, h, SlotMark)
		case r.Shape != ShapeWide && slotted:
			le.add("[columns] %s = %q: %s belongs to a wide recipe (kind = \"wide\")", k, h, SlotMark)
		}
		r.Columns[k] = h
	}
	if pr, ok := r.Columns["patient_ref"]; ok {
		for _, f := range sortedKeys(r.Columns) {
			if f != "patient_ref" && Fold(r.Columns[f]) == Fold(pr) {
				le.add("[columns] %s = %q: the patient reference's column feeds no other field (its values are never shown in messages)", f, r.Columns[f])
			}
		}
	}
	if r.Shape == "" {
		return
	}
	required := []string{"procedure_id"}
	if r.Shape == ShapeHistology {
		required = append(required, "lesion_no")
	}
	for _, f := range required {
		if _, ok := r.Columns[f]; !ok {
			le.add("[columns] %s is missing: every row needs it", f)
		}
	}
	if r.Shape == ShapeWide {
		hasLesion := false
		for f := range r.Columns {
			if lesionOnly(f) {
				hasLesion = true
			}
		}
		if !hasLesion {
			le.add("[columns] names no lesion column: a wide recipe maps at least one (\"Polyp %s size\")", SlotMark)
		}
	}
}

// valueLists reads [values.FIELD]: the source's value = our value.
func (r *Recipe) valueLists(le *LoadError, v any, fields map[string]Field) {
	if v == nil {
		return
	}
	t, ok := v.(map[string]any)
	if !ok {
		le.add("values must be tables ([values.FIELD]), not %s", show(v))
		return
	}
	for _, name := range sortedKeys(t) {
		f, known := fields[name]
		switch {
		case !known:
			if r.Shape != "" {
				le.add("[values.%s]: %q is not one of our fields for kind %q (fields: %s)", name, name, r.Shape, strings.Join(fieldNames(r.Shape), ", "))
			}
			continue
		case f.Type == Patient:
			le.add("[values.%s]: a recipe never lists patient references", name)
			continue
		}
		if _, mapped := r.Columns[name]; !mapped && r.Shape != "" {
			r.Warnings = append(r.Warnings, fmt.Sprintf("[values.%s] is not used: the recipe maps no column to %s (add it to [columns])", name, name))
		}
		list, ok := t[name].(map[string]any)
		if !ok {
			le.add("[values.%s] must be a table of source value = our value, not %s", name, show(t[name]))
			continue
		}
		m := map[string]string{}
		seen := map[string]string{}
		for _, src := range sortedKeys(list) {
			key := Fold(src)
			ours, err := ourValue(f, list[src])
			if err != nil {
				le.add("[values.%s] %q: %v", name, src, err)
				continue
			}
			if prev, dup := seen[key]; dup && m[key] != ours {
				le.add("[values.%s] %q and %q are the same value (case and spaces are ignored) mapped to different codes", name, prev, src)
				continue
			}
			seen[key], m[key] = src, ours
		}
		r.values[name], r.spelled[name] = m, seen
	}
}

// ourValue checks a target of [values.FIELD]: a value in our own form for the
// field ("" = not recorded).
func ourValue(f Field, v any) (string, error) {
	var s string
	switch x := v.(type) {
	case string:
		s = strings.TrimSpace(x)
	case int64:
		if f.Type != Count && f.Type != Amount && f.Type != Seconds {
			return "", fmt.Errorf("must be text (one of our codes), not the number %d", x)
		}
		s = strconv.FormatInt(x, 10)
	default:
		return "", fmt.Errorf("must be our value as text, not %s", show(v))
	}
	if s == "" {
		return "", nil
	}
	switch f.Type {
	case Code:
		for _, c := range f.Codes {
			if c == s {
				return s, nil
			}
		}
		return "", fmt.Errorf("%q is not one of our %s codes (%s)", s, f.Name, strings.Join(f.Codes, ", "))
	case YesNo:
		if s == "yes" || s == "no" || (f.NA && s == "not_applicable") {
			return s, nil
		}
		if f.NA {
			return "", fmt.Errorf("%q is not yes, no or not_applicable", s)
		}
		return "", fmt.Errorf("%q is not yes or no", s)
	case Count, Seconds:
		if n, err := strconv.Atoi(s); err != nil || n < 0 || strconv.Itoa(n) != s {
			return "", fmt.Errorf("%q is not a whole number", s)
		}
	case Amount:
		if _, err := plainDecimal(s); err != nil {
			return "", fmt.Errorf("%q is not an amount", s)
		}
	case Date:
		if _, ok := isoDate(s); !ok {
			return "", fmt.Errorf("%q is not a date in the form YYYY-MM-DD", s)
		}
	}
	return s, nil
}

// yesNo reads [yes_no]: the source's words for yes, no and not applicable.
func (r *Recipe) yesNo(le *LoadError, v any) {
	r.yes, r.no, r.na = map[string]bool{}, map[string]bool{}, map[string]bool{}
	if v == nil {
		return
	}
	t, ok := v.(map[string]any)
	if !ok {
		le.add("yes_no must be a table ([yes_no]), not %s", show(v))
		return
	}
	sets := map[string]map[string]bool{"yes": r.yes, "no": r.no, "not_applicable": r.na}
	for _, k := range sortedKeys(t) {
		set, known := sets[k]
		if !known {
			le.add("[yes_no] unknown key %q (allowed: yes, no, not_applicable)", k)
			continue
		}
		words, ok := stringList(t[k])
		if !ok {
			le.add("[yes_no] %s must be a list of words, such as [\"Y\", \"Yes\"]", k)
			continue
		}
		for _, w := range words {
			set[Fold(w)] = true
		}
		r.words[k] = words
	}
	for w := range r.yes {
		if r.no[w] || r.na[w] {
			le.add("[yes_no] %q is listed for two answers", w)
		}
	}
	for w := range r.no {
		if r.na[w] {
			le.add("[yes_no] %q is listed for two answers", w)
		}
	}
}

// units reads [units].
func (r *Recipe) units(le *LoadError, v any) {
	if v == nil {
		return
	}
	t, ok := v.(map[string]any)
	if !ok {
		le.add("units must be a table ([units]), not %s", show(v))
		return
	}
	for _, k := range sortedKeys(t) {
		if k != "withdrawal" {
			le.add("[units] unknown key %q (allowed: withdrawal)", k)
			continue
		}
		switch t[k] {
		case "minutes":
			r.WithdrawalMinutes = true
		case "seconds":
		default:
			le.add("[units] withdrawal must be \"minutes\" or \"seconds\", not %s", show(t[k]))
		}
	}
}

// ValuePair is one entry of a recipe's value list: the source's value as
// the recipe writes it, and our value ("" for not recorded).
type ValuePair struct{ Source, Ours string }

// ValueList returns a field's value list as the recipe writes it, in the
// order of the source values (folded).
func (r *Recipe) ValueList(field string) []ValuePair {
	m := r.values[field]
	out := make([]ValuePair, 0, len(m))
	for _, k := range sortedKeys(m) {
		out = append(out, ValuePair{Source: r.spelled[field][k], Ours: m[k]})
	}
	return out
}

// SetValue maps a source value of a field to our value ("" for not
// recorded), replacing the entry for the same value (compared as Fold
// compares). The recipe is not checked again: a screen editing a recipe
// reads its Text back with Parse before using it.
func (r *Recipe) SetValue(field, source, ours string) {
	r.RemoveValue(field, source)
	if r.values[field] == nil {
		r.values[field], r.spelled[field] = map[string]string{}, map[string]string{}
	}
	k := Fold(source)
	r.values[field][k], r.spelled[field][k] = ours, strings.TrimSpace(source)
}

// RemoveValue takes a source value off a field's value list.
func (r *Recipe) RemoveValue(field, source string) {
	k := Fold(source)
	delete(r.values[field], k)
	delete(r.spelled[field], k)
	if len(r.values[field]) == 0 {
		delete(r.values, field)
		delete(r.spelled, field)
	}
}

// YesNoWords returns the source's words listed under [yes_no] for an answer
// (yes, no or not_applicable), as written.
func (r *Recipe) YesNoWords(answer string) []string { return r.words[answer] }

// SetYesNo lists a source word under [yes_no] for answer (yes, no or
// not_applicable), taking it off the others; "" only takes it off. Like
// SetValue, it is checked when the recipe's Text is read back.
func (r *Recipe) SetYesNo(word, answer string) {
	k := Fold(word)
	for a, ws := range r.words {
		ws = slices.DeleteFunc(slices.Clone(ws), func(w string) bool { return Fold(w) == k })
		if len(ws) == 0 {
			delete(r.words, a)
		} else {
			r.words[a] = ws
		}
	}
	if answer != "" {
		r.words[answer] = append(r.words[answer], strings.TrimSpace(word))
	}
}

// Text writes the recipe as TOML that Parse reads back to the same recipe
// (without the comments of the file it was read from): the form in which a
// recipe edited on screen is saved.
func (r *Recipe) Text() string {
	var b strings.Builder
	kv := func(k, v string) { b.WriteString(k + " = " + v + "\n") }
	if r.Name != "" {
		kv("name", tomlQuote(r.Name))
	}
	kv("kind", tomlQuote(string(r.Shape)))
	if r.Sheet != "" {
		kv("sheet", tomlQuote(r.Sheet))
	}
	if r.HeaderRow != 1 {
		kv("header_row", strconv.Itoa(r.HeaderRow))
	}
	if r.DateFormat != "" {
		kv("date_format", tomlQuote(r.DateFormat))
	}
	if r.Shape == ShapeWide {
		kv("slots", strconv.Itoa(r.Slots))
	}
	b.WriteString("\n[columns]\n")
	fields := fieldNames(r.Shape)
	for _, f := range fields {
		if h, ok := r.Columns[f]; ok {
			kv(f, tomlQuote(h))
		}
	}
	for _, f := range fields {
		m := r.values[f]
		if m == nil {
			continue
		}
		b.WriteString("\n[values." + f + "]\n")
		for _, k := range sortedKeys(m) {
			kv(tomlQuote(r.spelled[f][k]), tomlQuote(m[k]))
		}
	}
	if len(r.words) > 0 {
		b.WriteString("\n[yes_no]\n")
		for _, answer := range []string{"yes", "no", "not_applicable"} {
			if ws, ok := r.words[answer]; ok {
				q := make([]string, len(ws))
				for i, w := range ws {
					q[i] = tomlQuote(w)
				}
				kv(answer, "["+strings.Join(q, ", ")+"]")
			}
		}
	}
	if r.WithdrawalMinutes {
		b.WriteString("\n[units]\n")
		kv("withdrawal", tomlQuote("minutes"))
	}
	return b.String()
}

// Missing returns the headers the recipe reads that a file's header lacks
// (matched as the mapping matches them; a wide recipe's for every slot), in
// the order of our fields: none when the recipe fits the file, which is how
// a saved recipe is recognised for a new file of the same source.
func (r *Recipe) Missing(header []string) []string {
	have := map[string]bool{}
	for _, h := range header {
		have[Fold(h)] = true
	}
	var out []string
	seen := map[string]bool{}
	for _, f := range fieldNames(r.Shape) {
		h, ok := r.Columns[f]
		if !ok {
			continue
		}
		names := []string{h}
		if r.Shape == ShapeWide && strings.Contains(h, SlotMark) {
			names = names[:0]
			for n := 1; n <= r.Slots; n++ {
				names = append(names, strings.ReplaceAll(h, SlotMark, strconv.Itoa(n)))
			}
		}
		for _, n := range names {
			if !have[Fold(n)] && !seen[Fold(n)] {
				seen[Fold(n)] = true
				out = append(out, n)
			}
		}
	}
	return out
}

// Fold is how recipe values and headers are compared: surrounding spaces
// dropped, inner runs of spaces made one, lower case.
func Fold(s string) string {
	if folded(s) {
		return s // most values already are: no copy
	}
	return strings.ToLower(strings.Join(strings.Fields(s), " "))
}

// folded reports whether Fold would return s unchanged: plain ASCII with
// no capital letter, and spaces only single and inside.
func folded(s string) bool {
	for i := 0; i < len(s); i++ {
		switch b := s[i]; {
		case b >= 0x80, 'A' <= b && b <= 'Z', b == '\t', b == '\n', b == '\v', b == '\f', b == '\r':
			return false
		case b == ' ' && (i == 0 || i == len(s)-1 || s[i-1] == ' '):
			return false
		}
	}
	return true
}

// shapeFields returns our fields that a recipe of the shape may map, by name.
func shapeFields(s Shape) map[string]Field {
	m := map[string]Field{}
	for _, k := range s.Kinds() {
		for _, f := range Fields(k) {
			if _, dup := m[f.Name]; !dup {
				m[f.Name] = f
			}
		}
	}
	return m
}

// fieldNames lists the fields of a shape in our files' order.
func fieldNames(s Shape) []string {
	var out []string
	for _, k := range s.Kinds() {
		for _, f := range Fields(k) {
			if !slices.Contains(out, f.Name) {
				out = append(out, f.Name)
			}
		}
	}
	return out
}

// lesionOnly reports whether a field belongs to lesions and not to
// procedures (procedure_id belongs to both).
func lesionOnly(name string) bool {
	return fieldIndex(Lesions, name) >= 0 && fieldIndex(Procedures, name) < 0
}

func shapeList() string {
	s := make([]string, len(Shapes))
	for i, sh := range Shapes {
		s[i] = string(sh)
	}
	return strings.Join(s, ", ")
}

func str(le *LoadError, doc map[string]any, key string) string {
	v, ok := doc[key]
	if !ok {
		return ""
	}
	s, isStr := v.(string)
	if !isStr {
		le.add("%s must be text, not %s", key, show(v))
	}
	return strings.TrimSpace(s)
}

func stringList(v any) ([]string, bool) {
	switch x := v.(type) {
	case string:
		return []string{x}, true
	case []any:
		out := make([]string, len(x))
		for i, e := range x {
			s, ok := e.(string)
			if !ok {
				return nil, false
			}
			out[i] = s
		}
		return out, true
	}
	return nil, false
}

// show describes a TOML value in a message.
func show(v any) string {
	switch x := v.(type) {
	case string:
		return strconv.Quote(x)
	case int64, float64, bool:
		return fmt.Sprint(x)
	case map[string]any:
		return "a table"
	case []any, []map[string]any:
		return "a list"
	}
	return fmt.Sprintf("a %T", v)
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
