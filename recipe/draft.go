package recipe

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode"

	"polypledger/sheet"
)

// Bounds of what Draft reads.
const (
	// DraftRows is how many data rows Draft looks at.
	DraftRows = 5000
	// draftDistinct is how many different values of a column Draft keeps;
	// a column with more is not a column of codes.
	draftDistinct = 60
	// draftScan is how many rows Draft looks at to find the header row.
	draftScan = 30
)

// DraftFile proposes a recipe for the file at path (sheetName chooses a
// workbook's sheet; "" for the first). See Draft.
func DraftFile(path, sheetName string) (string, error) {
	name := filepath.Base(path)
	return draft(name, func(opt sheet.Options) (*sheet.Table, error) {
		opt.Sheet = sheetName
		return sheet.OpenFile(path, opt)
	})
}

// Draft proposes a recipe, as TOML text, for a source file held in data;
// name (a file name) chooses the format. It reads the file's header and the
// different values of each column in its first DraftRows rows, and guesses:
// the header row, the kind (repeated procedure ids and lesion columns:
// combined; "Polyp 1 …" columns: wide), each of our fields' column by the
// likeness of its header to the usual names and by its values, the codes
// for the source's words, the yes/no words, the date format and the
// withdrawal unit. Every guess it is not sure of carries a "# check:"
// comment saying why, so that a person edits a few lines instead of writing
// forty. The text always loads with Parse. Values of the patient reference
// and of free-text columns never appear in it.
func Draft(name string, data []byte, sheetName string) (string, error) {
	return draft(name, func(opt sheet.Options) (*sheet.Table, error) {
		opt.Sheet = sheetName
		return sheet.Open(name, bytes.NewReader(data), opt)
	})
}

// column is what Draft learnt of one source column.
type column struct {
	index    int
	header   string
	words    string // normalised header
	joined   string // normalised header without spaces
	template string // a wide file's lesion column header with SlotMark
	repeated bool   // another column has the same header (as the mapper folds it)
	nonEmpty int
	counts   map[string]int // different values, up to draftDistinct
	order    []string       // those values in the order first seen
	many     bool           // more different values than kept
	repeats  bool           // some value appears twice
	seen     map[string]bool
	dates    int // values that read as dates
	numbers  int // values that read as numbers (a unit allowed)
	clocks   int // values such as 8:30
	maxNum   float64
	letters  int // values that are one letter
}

// usable reports whether a recipe can name the column: it has a header that
// no other column shares (the mapper refuses a header it cannot tell
// apart), and the header does not hold the slot mark.
func (c *column) usable() bool {
	return c.header != "" && !c.repeated && !strings.Contains(c.header, SlotMark)
}

func (c *column) add(v string) {
	v = strings.TrimSpace(v)
	if v == "" {
		return
	}
	c.nonEmpty++
	if c.seen[v] {
		c.repeats = true
	} else {
		c.seen[v] = true
	}
	if _, ok := c.counts[v]; ok || len(c.counts) < draftDistinct {
		if !ok {
			c.order = append(c.order, v)
		}
		c.counts[v]++
	} else {
		c.many = true
	}
	if looksLikeDate(v) {
		c.dates++
	}
	if n, ok := looseNumber(v); ok {
		c.numbers++
		if n > c.maxNum {
			c.maxNum = n
		}
	}
	if clock.MatchString(v) {
		c.clocks++
	}
	if len([]rune(v)) == 1 && unicode.IsLetter([]rune(v)[0]) {
		c.letters++
	}
}

var (
	clock      = regexp.MustCompile(`^\d{1,3}:\d{2}(:\d{2})?$`)
	dayFirst   = regexp.MustCompile(`^(\d{1,2})([/.\-])(\d{1,2})([/.\-])(\d{4})`)
	yearFirst  = regexp.MustCompile(`^(\d{4})([/.])(\d{1,2})([/.])(\d{1,2})`)
	monthNamed = regexp.MustCompile(`^(\d{1,2})([ \-/.])([A-Za-z]{3,9})([ \-/.])(\d{4})`)
	numberUnit = regexp.MustCompile(`^[+-]?(\d+\.?\d*|\.\d+)\s*[a-zA-Zµμ]{0,7}$`)
)

func looksLikeDate(v string) bool {
	if _, ok := isoDate(v); ok {
		return true
	}
	return dayFirst.MatchString(v) || yearFirst.MatchString(v) || monthNamed.MatchString(v)
}

// looseNumber reads a number that may carry a unit ("6 mm").
func looseNumber(v string) (float64, bool) {
	if !numberUnit.MatchString(v) {
		return 0, false
	}
	end := strings.IndexFunc(v, func(r rune) bool { return unicode.IsLetter(r) || r == 'µ' || r == 'μ' || r == ' ' })
	if end < 0 {
		end = len(v)
	}
	n, err := strconv.ParseFloat(v[:end], 64)
	return n, err == nil
}

// normalise turns a header into plain words: camelCase split, lower case,
// punctuation as spaces ("BBPS_Right" → "bbps right", "ExamID" → "exam
// id").
func normalise(s string) string {
	rs := []rune(s)
	var b strings.Builder
	for i, r := range rs {
		if i > 0 && unicode.IsUpper(r) {
			prev := rs[i-1]
			nextLower := i+1 < len(rs) && unicode.IsLower(rs[i+1])
			if unicode.IsLower(prev) || (unicode.IsUpper(prev) && nextLower) {
				b.WriteByte(' ')
			}
		}
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			b.WriteRune(unicode.ToLower(r))
		} else {
			b.WriteByte(' ')
		}
	}
	return strings.Join(strings.Fields(b.String()), " ")
}

// plainWords turns a value into plain words: lower case, punctuation as
// spaces (no camelCase split: "IIa" stays "iia").
func plainWords(s string) string {
	return strings.Join(strings.FieldsFunc(strings.ToLower(s), func(r rune) bool {
		return !unicode.IsLetter(r) && !unicode.IsDigit(r)
	}), " ")
}

func draft(name string, open func(sheet.Options) (*sheet.Table, error)) (string, error) {
	headerRow, err := findHeaderRow(open)
	if err != nil {
		return "", err
	}
	t, err := open(sheet.Options{HeaderRow: headerRow})
	if err != nil {
		return "", err
	}
	defer t.Close()
	cols := make([]*column, len(t.Header()))
	for i, h := range t.Header() {
		cols[i] = &column{index: i, header: h, words: normalise(h), counts: map[string]int{}, seen: map[string]bool{}}
		cols[i].joined = strings.ReplaceAll(cols[i].words, " ", "")
	}
	headers := map[string]int{}
	for _, h := range t.Header() {
		headers[Fold(h)]++
	}
	for _, c := range cols {
		c.repeated = headers[Fold(c.header)] > 1
	}
	rows := 0
	for rows < DraftRows {
		row, err := nextSound(t)
		if err == io.EOF {
			break
		}
		if err != nil {
			return "", err
		}
		rows++
		for i, v := range row.Cells {
			cols[i].add(v)
		}
	}
	d := &drafter{name: name, t: t, cols: cols, rows: rows, headerRow: headerRow}
	text := d.propose()
	for _, f := range []string{"procedure_id", "lesion_no"} {
		if d.assigned[f] == nil && (f == "procedure_id" || d.shape == ShapeHistology) {
			return "", fmt.Errorf("%s: no column can give %s, which a recipe needs (the header has no usable name)", t.Label(), f)
		}
	}
	return text, nil
}

// nextSound returns the table's next row, passing over rows with a fault of
// their own: a draft looks at what can be read.
func nextSound(t *sheet.Table) (sheet.Row, error) {
	for {
		row, err := t.Next()
		var se *sheet.Error
		if errors.As(err, &se) && se.RowOnly {
			continue
		}
		return row, err
	}
}

// findHeaderRow looks at the first rows for the header: the first row whose
// cells are mostly filled with distinct words (not numbers or dates).
func findHeaderRow(open func(sheet.Options) (*sheet.Table, error)) (int, error) {
	t, err := open(sheet.Options{NoHeader: true})
	if err != nil {
		return 0, err
	}
	defer t.Close()
	type seen struct {
		line, filled int
		words        bool
	}
	var rows []seen
	most := 0
	for len(rows) < draftScan {
		row, err := nextSound(t)
		if err == io.EOF {
			break
		}
		if err != nil {
			return 0, err
		}
		s := seen{line: row.Line, words: true}
		distinct := map[string]bool{}
		for _, c := range row.Cells {
			c = strings.TrimSpace(c)
			if c == "" {
				continue
			}
			s.filled++
			if _, num := looseNumber(c); num || looksLikeDate(c) || distinct[Fold(c)] {
				s.words = false
			}
			distinct[Fold(c)] = true
		}
		most = max(most, s.filled)
		rows = append(rows, s)
	}
	for _, s := range rows {
		if s.words && s.filled >= max(2, (most+1)/2) {
			return s.line, nil
		}
	}
	return 1, nil
}

// drafter builds the proposal.
type drafter struct {
	name      string
	t         *sheet.Table
	cols      []*column
	rows      int
	headerRow int

	shape      Shape
	shapeNote  string
	slots      int
	assigned   map[string]*column // field → column
	notes      map[string]string  // field → why it is unsure
	dateFormat string
	dateNote   string            // why date_format is unsure ("" when sure)
	codes      map[string]string // codeOf's memory
}

// match is a candidate column for a field.
type match struct {
	field string
	col   *column
	name  float64 // likeness of the header
	fit   float64 // how well the values fit the field
	score float64
}

func (d *drafter) propose() string {
	d.assigned, d.notes, d.codes = map[string]*column{}, map[string]string{}, map[string]string{}
	d.findSlots()
	d.assign()
	d.chooseShape()
	d.companions()
	d.guessDates()
	return d.write()
}

// slotHeader finds a number inside a header: "Polyp 2 size" → "Polyp {n}
// size", 2.
var slotHeader = regexp.MustCompile(`^(.*?\D)??(\d{1,2})(\D.*)?$`)

// findSlots finds a wide file's numbered lesion columns: headers alike but
// for a number, numbered 1, 2 … without a gap, whose other words name a
// lesion field.
func (d *drafter) findSlots() {
	numbers := map[string]map[int]bool{}
	split := func(c *column) (tpl string, n int, ok bool) {
		m := slotHeader.FindStringSubmatch(c.header)
		if m == nil || strings.TrimSpace(m[1]+m[3]) == "" || !c.usable() {
			return "", 0, false
		}
		n, _ = strconv.Atoi(m[2])
		return m[1] + SlotMark + m[3], n, n >= 1
	}
	for _, c := range d.cols {
		if tpl, n, ok := split(c); ok {
			if numbers[tpl] == nil {
				numbers[tpl] = map[int]bool{}
			}
			numbers[tpl][n] = true
		}
	}
	for _, c := range d.cols {
		tpl, _, ok := split(c)
		ns := numbers[tpl]
		if !ok || len(ns) < 2 {
			continue
		}
		top := 0
		for n := range ns {
			top = max(top, n)
		}
		if top != len(ns) {
			continue // a gap: not slots 1 … N
		}
		stem := normalise(strings.ReplaceAll(tpl, SlotMark, " "))
		best := 0.0
		for _, f := range Fields(Lesions) {
			if lesionOnly(f.Name) {
				best = max(best, nameLikeness(stem, f.Name))
			}
		}
		if best < 0.5 {
			continue
		}
		c.template = tpl
		d.slots = max(d.slots, top)
	}
}

// allFields lists every field a draft may map, once, in our files' order.
func allFields() []Field {
	var out []Field
	seen := map[string]bool{}
	for _, k := range Kinds {
		for _, f := range Fields(k) {
			if !seen[f.Name] {
				seen[f.Name] = true
				out = append(out, f)
			}
		}
	}
	return out
}

// assign matches columns to fields, the best pairs first.
func (d *drafter) assign() {
	var ms []match
	byTemplate := map[string]*column{} // a wide file's slots: the first column of each template
	for _, c := range d.cols {
		if c.template != "" {
			if byTemplate[c.template] == nil {
				byTemplate[c.template] = c
			} else {
				continue
			}
		}
		words := c.words
		if c.template != "" {
			words = normalise(strings.ReplaceAll(c.template, SlotMark, " "))
		}
		for _, f := range allFields() {
			if !c.usable() || (c.template != "" && !lesionOnly(f.Name)) {
				continue
			}
			m := match{field: f.Name, col: c, name: nameLikeness(words, f.Name)}
			if m.name < 0.5 && !distinctive(f) {
				continue
			}
			m.fit = d.fit(c, f)
			switch {
			case m.name >= 0.5:
				m.score = m.name * (0.5 + 0.5*m.fit)
			case m.fit >= 0.9 && distinctive(f):
				m.score = 0.4 * m.fit // by its values only
			}
			if m.score >= 0.35 {
				ms = append(ms, m)
			}
		}
	}
	sort.SliceStable(ms, func(i, j int) bool { return ms[i].score > ms[j].score })
	taken := map[*column]bool{}
	for i, m := range ms {
		if d.assigned[m.field] != nil || taken[m.col] {
			continue
		}
		d.assigned[m.field], taken[m.col] = m.col, true
		switch {
		case m.name < 0.5:
			d.notes[m.field] = "matched by its values only"
		case m.name < 0.75:
			d.notes[m.field] = "the header is only partly like the usual names of " + m.field
		case m.fit < 0.8:
			d.notes[m.field] = "some values do not look like " + describe(fieldByName(m.field))
		}
		// A close runner-up for the same field makes the choice unsure.
		for _, o := range ms[i+1:] {
			if o.field == m.field && !taken[o.col] && o.score > m.score-0.05 && d.notes[m.field] == "" {
				d.notes[m.field] = fmt.Sprintf("%q fits as well", o.col.header)
				break
			}
		}
	}
}

// nameLikeness scores how much a normalised header is like a field's names:
// 1 for one of them exactly, less when it holds or is held by one.
func nameLikeness(words, field string) float64 {
	if words == "" {
		return 0
	}
	joined := strings.ReplaceAll(words, " ", "")
	hw := strings.Fields(words)
	best := 0.0
	for _, pn := range headerPhrases()[field] {
		pw := pn.words
		switch {
		case pn.text == words, pn.joined == joined:
			return 1
		case containsAll(hw, pw):
			best = max(best, 0.6+0.3*float64(len(pw))/float64(len(hw)))
		case containsAll(pw, hw):
			best = max(best, 0.5+0.3*float64(len(hw))/float64(len(pw)))
		}
	}
	return best
}

func containsAll(have, want []string) bool {
	for _, w := range want {
		if !slices.Contains(have, w) {
			return false
		}
	}
	return true
}

// distinctive reports whether a field's values alone can tell its column:
// dates, and code sets of their own.
func distinctive(f Field) bool {
	switch f.Name {
	case "performed_on", "segment", "paris", "histology", "imaging", "resection", "indication", "extent":
		return true
	}
	return false
}

func fieldByName(name string) Field {
	for _, f := range allFields() {
		if f.Name == name {
			return f
		}
	}
	return Field{Name: name}
}

func describe(f Field) string {
	switch f.Type {
	case Date:
		return "dates"
	case Code:
		return "its codes"
	case YesNo:
		return "yes or no"
	case Count, Amount:
		return "numbers"
	case Seconds:
		return "times"
	}
	return "its values"
}

// fit says how well a column's values fit a field, from 0 to 1.
func (d *drafter) fit(c *column, f Field) float64 {
	if c.nonEmpty == 0 {
		return 0.5
	}
	frac := func(n int) float64 { return float64(n) / float64(c.nonEmpty) }
	switch f.Type {
	case Date:
		return frac(c.dates)
	case Count, Amount:
		if f.Name == "lesion_no" && c.letters == c.nonEmpty {
			return 1 // specimens labelled A, B, C
		}
		return frac(c.numbers) * (1 - frac(c.dates))
	case Seconds:
		return frac(c.numbers+c.clocks) * (1 - frac(c.dates))
	case YesNo:
		if c.many {
			return 0
		}
		yes, _ := d.yesNoShare(c)
		return yes
	case Code:
		if c.many {
			return 0
		}
		hit, total := 0, 0
		for _, v := range c.order {
			total += c.counts[v]
			if d.codeOf(f, v) != "" {
				hit += c.counts[v]
			}
		}
		return float64(hit) / float64(total)
	case Patient, Text:
		if frac(c.dates) > 0.5 || (f.Type == Text && frac(c.numbers) > 0.9 && c.maxNum < 1000) {
			return 0.2
		}
	}
	return 1
}

// codeOf is matchCode's code, remembered: fit asks for the same values
// again for each field.
func (d *drafter) codeOf(f Field, v string) string {
	key := f.Name + "\x00" + v
	if code, ok := d.codes[key]; ok {
		return code
	}
	code, _ := matchCode(f, v)
	d.codes[key] = code
	return code
}

// yesNoShare returns the share of a column's values that are yes/no words.
func (d *drafter) yesNoShare(c *column) (float64, int) {
	hit, total := 0, 0
	for _, v := range c.order {
		total += c.counts[v]
		if yesNoWord(v) != "" {
			hit += c.counts[v]
		}
	}
	if total == 0 {
		return 0, 0
	}
	return float64(hit) / float64(total), hit
}

// yesNoWord says which answer a word means: "yes", "no", "not_applicable"
// or "".
func yesNoWord(v string) string {
	k := Fold(v)
	switch {
	case slices.Contains(yesWords, k):
		return "yes"
	case slices.Contains(noWords, k):
		return "no"
	case slices.Contains(naWords, k):
		return "not_applicable"
	}
	return ""
}

// dysplasiaIn finds the dysplasia grade a value names and the value's other
// words.
func dysplasiaIn(v string) (code, rest string) {
	w := " " + plainWords(v) + " "
	for _, g := range gradePhrases() {
		if p := " " + g.joined + " "; strings.Contains(w, p) {
			return g.code, strings.TrimSpace(strings.Replace(w, p, " ", 1))
		}
	}
	return "", strings.TrimSpace(w)
}

// codePhrase is one way of writing a code, in plain words.
type codePhrase struct {
	code   string
	words  []string
	joined string
}

// codePhrases holds, for each field of codes, its codes and their common
// words in plain words, built once.
var codePhrases = sync.OnceValue(func() map[string][]codePhrase {
	out := map[string][]codePhrase{}
	for _, f := range allFields() {
		if f.Type != Code {
			continue
		}
		for _, c := range f.Codes {
			for _, p := range append([]string{strings.ReplaceAll(c, "_", " ")}, codeWords[f.Name][c]...) {
				w := plainWords(p)
				out[f.Name] = append(out[f.Name], codePhrase{code: c, words: strings.Fields(w), joined: w})
			}
		}
	}
	return out
})

// gradePhrases are the dysplasia words, longest first (so that "low grade
// dysplasia" wins over "low grade"), built once.
var gradePhrases = sync.OnceValue(func() []codePhrase {
	var out []codePhrase
	for c, ps := range codeWords["dysplasia"] {
		for _, p := range ps {
			out = append(out, codePhrase{code: c, joined: plainWords(p)})
		}
	}
	sort.Slice(out, func(i, j int) bool {
		if len(out[i].joined) != len(out[j].joined) {
			return len(out[i].joined) > len(out[j].joined)
		}
		return out[i].joined < out[j].joined
	})
	return out
})

// headerPhrases holds, for each field, its name and common headers,
// normalised, built once.
var headerPhrases = sync.OnceValue(func() map[string][]phrase {
	out := map[string][]phrase{}
	for _, f := range allFields() {
		for _, p := range append([]string{strings.ReplaceAll(f.Name, "_", " ")}, headerWords[f.Name]...) {
			n := normalise(p)
			out[f.Name] = append(out[f.Name], phrase{text: n, joined: strings.ReplaceAll(n, " ", ""), words: strings.Fields(n)})
		}
	}
	return out
})

// phrase is a normalised header phrase, with its forms nameLikeness
// compares, worked out once.
type phrase struct {
	text   string   // normalised
	joined string   // without spaces
	words  []string // its words
}

// matchCode finds the code of a field that a source value means; sure is
// false when the match is only partial.
func matchCode(f Field, v string) (code string, sure bool) {
	w := plainWords(v)
	if w == "" {
		return "", false
	}
	if f.Name == "histology" {
		grade, rest := dysplasiaIn(v)
		if grade != "" && rest != "" {
			code, sure := matchCode(f, rest)
			if code == "ssl" && (grade == "low" || grade == "high") {
				code = "ssl_dysplasia"
			}
			return code, sure
		}
	}
	cands := codePhrases()[f.Name]
	vw := strings.Fields(w)
	for _, c := range cands {
		if c.joined == w {
			return c.code, true
		}
	}
	// Partial: the value holds a code's words (the longest such words win);
	// two codes tied make it no match.
	best, bestLen, tied := "", 0, false
	for _, c := range cands {
		if len(c.words) == 0 || !containsAll(vw, c.words) {
			continue
		}
		switch {
		case len(c.words) > bestLen:
			best, bestLen, tied = c.code, len(c.words), false
		case len(c.words) == bestLen && c.code != best:
			tied = true
		}
	}
	if tied {
		return "", false
	}
	return best, false
}

// chooseShape decides the kind from the fields matched.
func (d *drafter) chooseShape() {
	count := func(names ...string) int {
		n := 0
		for _, f := range names {
			if d.assigned[f] != nil {
				n++
			}
		}
		return n
	}
	var procOnly []string
	for _, f := range Fields(Procedures) {
		if f.Name != "procedure_id" {
			procOnly = append(procOnly, f.Name)
		}
	}
	lesionOwn := []string{"segment", "size_mm", "paris", "optical_class", "confidence", "imaging", "aid_class", "resection", "retrieved", "sent_to_pathology", "tattoo"}
	p, l := count(procOnly...), count(lesionOwn...)
	id := d.assigned["procedure_id"]
	repeats := id != nil && id.repeats
	wide := false
	for _, c := range d.assigned {
		if c.template != "" {
			wide = true
		}
	}
	switch {
	case wide:
		d.shape = ShapeWide
	case p >= 2 && l >= 1:
		d.shape = ShapeCombined
		if !repeats {
			d.shapeNote = "no procedure id appears twice: if each row is one procedure with at most one lesion, combined still reads it"
		}
	case p >= 2:
		d.shape = ShapeProcedures
		if repeats {
			d.shapeNote = "some procedure ids appear on several rows, but no lesion column was found: is this one row per lesion (combined)?"
		}
	case l >= 1:
		d.shape = ShapeLesions
	case count("histology", "dysplasia", "reported_on") >= 1:
		d.shape = ShapeHistology
	default:
		d.shape = ShapeProcedures
		d.shapeNote = "too few columns were recognised to tell what the file holds"
	}
	if d.shape == ShapeHistology && d.assigned["reported_on"] == nil && d.assigned["performed_on"] != nil {
		// A results file's only date is the report's.
		d.assigned["reported_on"] = d.assigned["performed_on"]
		d.notes["reported_on"] = "the file's only date column, taken as the report date"
	}
	d.required()
	allowed := shapeFields(d.shape)
	for f, c := range d.assigned {
		if _, ok := allowed[f]; !ok {
			delete(d.assigned, f)
			delete(d.notes, f)
			continue
		}
		if d.shape == ShapeWide && lesionOnly(f) && c.template == "" {
			// A lesion field of a wide file must come from numbered columns.
			delete(d.assigned, f)
			delete(d.notes, f)
		}
	}
}

// required makes sure the fields every row needs have a column, so that
// the proposal loads: when no header is like theirs, the column whose
// values look most like them is taken, marked for checking.
func (d *drafter) required() {
	need := []string{"procedure_id"}
	if d.shape == ShapeHistology {
		need = append(need, "lesion_no")
	}
	for _, f := range need {
		if d.assigned[f] != nil {
			continue
		}
		var best *column
		bestScore := -1.0
		for _, c := range d.cols {
			if !c.usable() || c == d.assigned["patient_ref"] {
				continue
			}
			score := 0.0
			if c.template != "" {
				score -= 3 // a lesion slot's column, as a last resort
			}
			if !d.usedBy(c) {
				score += 2
			}
			if f == "procedure_id" {
				if c.dates == 0 && c.nonEmpty > 0 && (!c.repeats || d.shape == ShapeCombined) {
					score++
				}
			} else if c.letters == c.nonEmpty || (c.numbers == c.nonEmpty && c.maxNum < 100) {
				score++
			}
			if score > bestScore {
				best, bestScore = c, score
			}
		}
		if best == nil {
			if best = d.assigned["patient_ref"]; best == nil {
				continue // a file without a named column: the proposal names none
			}
			delete(d.assigned, "patient_ref")
		}
		d.assigned[f] = best
		d.notes[f] = "no column is named like " + f + ", which every row needs; this one is the likeliest by its values"
	}
}

// usedBy reports whether a column feeds a field already.
func (d *drafter) usedBy(c *column) bool {
	for _, a := range d.assigned {
		if a == c {
			return true
		}
	}
	return false
}

// companions lets one source column feed a second field where the source
// writes two of ours in one (a histology that carries its grade, an extent
// that carries why it was incomplete).
func (d *drafter) companions() {
	pairs := [][2]string{{"histology", "dysplasia"}, {"extent", "incomplete_reason"}}
	allowed := shapeFields(d.shape)
	for _, p := range pairs {
		c := d.assigned[p[0]]
		if c == nil || d.assigned[p[1]] != nil || c.many {
			continue
		}
		if _, ok := allowed[p[1]]; !ok {
			continue
		}
		f := fieldByName(p[1])
		for _, v := range c.order {
			if p[1] == "dysplasia" {
				if code, _ := dysplasiaIn(v); code != "" {
					d.assigned[p[1]] = c
					break
				}
				continue
			}
			if code, _ := matchCode(f, v); code != "" {
				d.assigned[p[1]] = c
				break
			}
		}
	}
}

// guessDates reads the date columns' values for the source's date form.
func (d *drafter) guessDates() {
	var firsts, seconds []int
	form := ""
	forms := map[string]bool{}
	for _, f := range []string{"performed_on", "reported_on"} {
		c := d.assigned[f]
		if c == nil {
			continue
		}
		for v := range c.seen {
			if _, ok := isoDate(v); ok {
				continue
			}
			if m := dayFirst.FindStringSubmatch(v); m != nil && m[2] == m[4] {
				a, _ := strconv.Atoi(m[1])
				b, _ := strconv.Atoi(m[3])
				firsts, seconds = append(firsts, a), append(seconds, b)
				form = "?" + m[2] + "?" + m[2] + "YYYY"
				forms[form] = true
			} else if m := yearFirst.FindStringSubmatch(v); m != nil && m[2] == m[4] {
				form = "YYYY" + m[2] + "MM" + m[2] + "DD"
				forms[form] = true
			} else if m := monthNamed.FindStringSubmatch(v); m != nil && m[2] == m[4] {
				form = "DD" + m[2] + "MMM" + m[2] + "YYYY"
				forms[form] = true
			}
		}
	}
	if len(forms) == 0 {
		return
	}
	if len(forms) > 1 {
		form = sortedKeys(forms)[0]
		d.dateNote = "the dates are written in more than one way; the recipe reads one of them (and ISO 8601)"
	}
	if !strings.HasPrefix(form, "?") {
		d.dateFormat = form
		return
	}
	sep := form[1:2]
	dayThenMonth := "DD" + sep + "MM" + sep + "YYYY"
	monthThenDay := "MM" + sep + "DD" + sep + "YYYY"
	big := func(ns []int) bool { return slices.ContainsFunc(ns, func(n int) bool { return n > 12 }) }
	switch {
	case big(firsts) && !big(seconds):
		d.dateFormat = dayThenMonth
	case big(seconds) && !big(firsts):
		d.dateFormat = monthThenDay
	case big(firsts) && big(seconds):
		d.dateFormat = dayThenMonth
		d.dateNote = "some dates have the day first and some the month first; the recipe reads one of them"
	case d.dateNote != "":
		d.dateFormat = dayThenMonth
	default:
		d.dateFormat = dayThenMonth
		d.dateNote = "no date in the file has a day above 12, so the day and the month cannot be told apart: remove the # before date_format if the day comes first, or write " + strconv.Quote(monthThenDay)
	}
}

// write renders the proposal as recipe text.
func (d *drafter) write() string {
	var b strings.Builder
	line := func(text, note string) {
		b.WriteString(text)
		if note != "" {
			b.WriteString("   # check: " + note)
		}
		b.WriteByte('\n')
	}
	fmt.Fprintf(&b, "# A first recipe for %s, proposed from its header (row %d) and the values of its first %d rows.\n", d.t.Label(), d.headerRow, d.rows)
	b.WriteString("# Lines marked \"# check:\" are guesses to confirm or correct; the others matched plainly.\n")
	b.WriteString("# The recipe contract, our fields and our codes: docs/recipes.md.\n")
	line("name = "+tomlQuote(strings.TrimSuffix(d.name, filepath.Ext(d.name))), "")
	line("kind = "+tomlQuote(string(d.shape)), d.shapeNote)
	if len(d.t.Sheets()) > 1 {
		line("sheet = "+tomlQuote(d.t.Sheet()), "")
	}
	if d.headerRow != 1 {
		line("header_row = "+strconv.Itoa(d.headerRow), "")
	}
	if d.dateFormat != "" {
		text := "date_format = " + tomlQuote(d.dateFormat)
		if strings.Contains(d.dateNote, "cannot be told apart") {
			text = "# " + text
		}
		line(text, d.dateNote)
	}
	if d.shape == ShapeWide {
		line("slots = "+strconv.Itoa(d.slots), "")
	}

	b.WriteString("\n[columns]\n")
	var missing []string
	for _, f := range fieldNames(d.shape) {
		c := d.assigned[f]
		if c == nil {
			switch {
			case f == "lesion_no" && d.shape != ShapeProcedures:
				b.WriteString("# lesion_no: no column; lesions are numbered by the mapping (see docs/recipes.md)\n")
			default:
				missing = append(missing, f)
			}
			continue
		}
		h := c.header
		if c.template != "" && lesionOnly(f) {
			h = c.template
		}
		line(f+" = "+tomlQuote(h), d.notes[f])
	}

	for _, f := range fieldNames(d.shape) {
		c := d.assigned[f]
		if c == nil {
			continue
		}
		d.writeValues(&b, fieldByName(f), c, line)
	}
	d.writeYesNo(&b, line)
	if c := d.assigned["withdrawal_seconds"]; c != nil {
		unit, note := d.withdrawalUnit(c)
		b.WriteString("\n[units]\n")
		line("withdrawal = "+tomlQuote(unit), note)
	}

	var unused, repeated []string
	for _, c := range d.cols {
		switch {
		case c.repeated && c.header != "":
			if !slices.Contains(repeated, tomlQuote(c.header)) {
				repeated = append(repeated, tomlQuote(c.header))
			}
		case !d.used(c):
			unused = append(unused, tomlQuote(c.header))
		}
	}
	if len(unused) > 0 || len(missing) > 0 || len(repeated) > 0 {
		b.WriteByte('\n')
	}
	if len(repeated) > 0 {
		b.WriteString(wrapComment("check: headers that more than one column has, which a recipe cannot name (rename them in the file to use them): " + strings.Join(repeated, ", ")))
	}
	if len(unused) > 0 {
		b.WriteString(wrapComment("Columns of the file the recipe does not use: " + strings.Join(unused, ", ")))
	}
	if len(missing) > 0 {
		b.WriteString(wrapComment("Our fields with no column found: " + strings.Join(missing, ", ")))
	}
	return b.String()
}

// companionOf returns the field that shares f's column, if any.
func (d *drafter) companionOf(f string) string {
	for g, c := range d.assigned {
		if g != f && c == d.assigned[f] {
			return g
		}
	}
	return ""
}

// used reports whether the recipe reads a column.
func (d *drafter) used(c *column) bool {
	for _, a := range d.assigned {
		if a == c || (c.template != "" && a.template == c.template) {
			return true
		}
	}
	return false
}

// slotValues returns the values of every slot column of a wide file's
// template (or of the one column), in the order first seen.
func (d *drafter) slotValues(c *column) (order []string, counts map[string]int, many bool) {
	counts = map[string]int{}
	for _, o := range d.cols {
		if o != c && (c.template == "" || o.template != c.template) {
			continue
		}
		many = many || o.many
		for _, v := range o.order {
			if _, ok := counts[v]; !ok {
				order = append(order, v)
			}
			counts[v] += o.counts[v]
		}
	}
	return order, counts, many
}

// writeValues writes [values.FIELD] for a field of codes (or a lesion
// number written as letters).
func (d *drafter) writeValues(b *strings.Builder, f Field, c *column, line func(string, string)) {
	order, _, many := d.slotValues(c)
	header := "\n[values." + f.Name + "]\n"
	started := false
	start := func() {
		if !started {
			b.WriteString(header)
			started = true
		}
	}
	companion := d.companionOf(f.Name) != "" && (f.Name == "dysplasia" || f.Name == "incomplete_reason")
	switch {
	case f.Type == Count && f.Name == "lesion_no":
		for _, v := range order {
			r := []rune(strings.TrimSpace(v))
			if len(r) == 1 && unicode.IsLetter(r[0]) {
				start()
				n := int(unicode.ToUpper(r[0])-'A') + 1
				line(tomlQuote(v)+" = "+tomlQuote(strconv.Itoa(n)), "specimen "+string(unicode.ToUpper(r[0]))+" taken as lesion "+strconv.Itoa(n))
			}
		}
		return
	case f.Type != Code:
		return
	}
	if many {
		start()
		line("# (more than "+strconv.Itoa(draftDistinct)+" different values: list those that are not our codes)", "the column has too many different values to list them all")
		return
	}
	codes := strings.Join(f.Codes, ", ")
	for _, v := range order {
		if plainWords(v) == "" {
			start()
			line(tomlQuote(v)+" = \"\"", "read as not recorded")
			continue
		}
		if !companion && slices.ContainsFunc(f.Codes, func(code string) bool { return Fold(code) == Fold(v) }) {
			continue // already our code
		}
		var code string
		sure := true
		switch {
		case f.Name == "dysplasia" && companion:
			code, _ = dysplasiaIn(v)
		case f.Name == "incomplete_reason" && companion:
			code, _ = matchCode(f, v)
		default:
			code, sure = matchCode(f, v)
		}
		start()
		switch {
		case code == "" && companion:
			line(tomlQuote(v)+" = \"\"", "")
		case code == "":
			line("# "+tomlQuote(v)+" = \"\"", "no code matched; write one of "+codes)
		case sure:
			line(tomlQuote(v)+" = "+tomlQuote(code), "")
		default:
			line(tomlQuote(v)+" = "+tomlQuote(code), "a guess from the words")
		}
	}
}

// writeYesNo writes [yes_no] from the words of every yes/no column.
func (d *drafter) writeYesNo(b *strings.Builder, line func(string, string)) {
	lists := map[string][]string{}
	seen := map[string]bool{}
	var odd []string
	for _, f := range fieldNames(d.shape) {
		c := d.assigned[f]
		if c == nil || fieldByName(f).Type != YesNo {
			continue
		}
		order, _, _ := d.slotValues(c)
		for _, v := range order {
			k := Fold(v)
			if seen[k] {
				continue
			}
			seen[k] = true
			answer := yesNoWord(v)
			switch {
			case answer == "":
				odd = append(odd, fmt.Sprintf("%s (%s)", tomlQuote(v), f))
			case k == "yes" || k == "no" || k == "not_applicable" || (answer == "not_applicable" && f == "retroversion" && (k == "na" || k == "n/a")):
				// our own words: read without a list
			default:
				lists[answer] = append(lists[answer], v)
			}
		}
	}
	if len(lists) == 0 && len(odd) == 0 {
		return
	}
	b.WriteString("\n[yes_no]\n")
	for _, answer := range []string{"yes", "no", "not_applicable"} {
		if len(lists[answer]) == 0 {
			continue
		}
		q := make([]string, len(lists[answer]))
		for i, w := range lists[answer] {
			q[i] = tomlQuote(w)
		}
		line(answer+" = ["+strings.Join(q, ", ")+"]", "")
	}
	if len(odd) > 0 {
		line("# "+strings.Join(odd, ", ")+" are neither yes nor no", "add each to a list above, or to [values.FIELD]")
	}
}

// withdrawalUnit guesses the unit of the withdrawal column from its header,
// else from its values.
func (d *drafter) withdrawalUnit(c *column) (unit, note string) {
	words := strings.Fields(c.words)
	switch {
	case slices.ContainsFunc(words, func(w string) bool { return w == "min" || w == "mins" || w == "minutes" || w == "m" }):
		return "minutes", ""
	case slices.ContainsFunc(words, func(w string) bool { return w == "sec" || w == "secs" || w == "seconds" || w == "s" }):
		return "seconds", ""
	case c.numbers > 0 && c.maxNum <= 60:
		return "minutes", "the header does not say; every number is 60 or less, so read as minutes"
	case c.numbers > 0:
		return "seconds", "the header does not say; some numbers are above 60, so read as seconds"
	}
	return "minutes", "the header does not say, and every value is minutes:seconds"
}

// wrapComment writes text as comment lines of about 78 characters.
func wrapComment(text string) string {
	var b strings.Builder
	lineLen := 0
	for i, w := range strings.Fields(text) {
		if i == 0 {
			b.WriteString("#")
			lineLen = 1
		}
		if lineLen+1+len(w) > 78 && lineLen > 1 {
			b.WriteString("\n#")
			lineLen = 1
		}
		b.WriteString(" " + w)
		lineLen += 1 + len(w)
	}
	b.WriteByte('\n')
	return b.String()
}

// tomlQuote writes s as a TOML basic string.
func tomlQuote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch r {
		case '"':
			b.WriteString(`\"`)
		case '\\':
			b.WriteString(`\\`)
		case '\b':
			b.WriteString(`\b`)
		case '\t':
			b.WriteString(`\t`)
		case '\n':
			b.WriteString(`\n`)
		case '\f':
			b.WriteString(`\f`)
		case '\r':
			b.WriteString(`\r`)
		default:
			if r < 0x20 || r == 0x7f {
				fmt.Fprintf(&b, `\u%04X`, r)
			} else {
				b.WriteRune(r)
			}
		}
	}
	b.WriteByte('"')
	return b.String()
}
