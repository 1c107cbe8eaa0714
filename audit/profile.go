package audit

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"path"
	"reflect"
	"slices"
	"sort"
	"strconv"
	"strings"

	"polypledger/logbook"
)

// DefaultMinCases is the number of cases below which a rate is shown as "too
// few cases to judge" when a profile does not set its own (common practice;
// clinical-reference §7).
const DefaultMinCases = 30

// Profile is a standard profile: the published rules that decide who counts in
// the detection indicators and the targets each indicator is judged against
// (clinical-reference §2). A profile is data, shipped as JSON in assets and
// copied and edited by users; the arithmetic lives in code.
type Profile struct {
	// ID names the profile on the command line (--standard) and in output.
	ID string `json:"id"`
	// Title is the profile's name for people.
	Title string `json:"title"`
	// Source is the full published reference the profile follows.
	Source string `json:"source"`
	// Notes say what was chosen or not verified, for the methods page.
	Notes string `json:"notes,omitempty"`
	// MinCases is the denominator below which no verdict is given (default 30).
	MinCases int `json:"min_cases"`
	// Detection is the detection-eligible population (ADR family, pdr, aadr,
	// apc, proximal_sdr, withdrawal_negative).
	Detection DetectionRule `json:"detection_eligible"`
	// StoolTest is the population of adr_stool_test_positive: indication
	// stool_test_positive with this age and these exclusions.
	StoolTest StoolTestRule `json:"stool_test_positive"`
	// CIRRequiresPhoto, when true, counts a procedure in the numerator of
	// cir and cir_adjusted only when it is complete and its caecal landmarks
	// were photographed (caecal_photo yes). It follows the profile's source:
	// BSG/JAG 2016 (Rees 2016) defines its caecal intubation rate "with photo
	// documentation"; ASGE/ACG 2024 and ESGE 2017 count completeness alone
	// and measure photo documentation as its own figure (caecal_photo).
	// Absent means false (clinical-reference §2).
	CIRRequiresPhoto bool `json:"cir_requires_photo,omitempty"`
	// Targets maps an indicator id to what the profile asks of it; an
	// indicator without an entry is reported with no verdict.
	Targets map[string]Target `json:"targets"`
}

// DetectionRule decides which procedures count in the detection indicators:
// age at least MinAge (0 = any age), an indication in Indications and an
// exclusion in Exclusions. An unrecorded indication or exclusion is in no
// list, so such a procedure is not eligible.
type DetectionRule struct {
	MinAge      int                  `json:"min_age"`
	Indications []logbook.Indication `json:"indications"`
	Exclusions  []logbook.Exclusion  `json:"exclusions"`
}

// StoolTestRule is the population for ADR after a positive stool test (FIT
// or FOBT): indication stool_test_positive, age at least MinAge, exclusion in
// Exclusions.
type StoolTestRule struct {
	MinAge     int                 `json:"min_age"`
	Exclusions []logbook.Exclusion `json:"exclusions"`
}

// Includes reports whether the procedure belongs to the population.
func (e *DetectionRule) Includes(p *logbook.Procedure) bool {
	return p.Age != logbook.NotRecorded && p.Age >= e.MinAge &&
		logbook.IsOneOf(p.Indication, e.Indications) && logbook.IsOneOf(p.Exclusion, e.Exclusions)
}

// Includes reports whether the procedure belongs to the stool-test-positive
// population.
func (r *StoolTestRule) Includes(p *logbook.Procedure) bool {
	return p.Indication == logbook.StoolTestPositive && p.Age != logbook.NotRecorded &&
		p.Age >= r.MinAge && logbook.IsOneOf(p.Exclusion, r.Exclusions)
}

// Target returns the profile's target for the indicator id, or nil when it
// sets none.
func (p *Profile) Target(id string) *Target {
	t, ok := p.Targets[id]
	if !ok {
		return nil
	}
	return &t
}

// ProfileError is one problem in a profile file: the file, the JSON path of
// the field (such as "targets.adr.minimum"; empty for the file as a whole)
// and what is wrong.
type ProfileError struct {
	File, Field, Reason string
}

// Error writes "file: field: reason" (without the field when it is empty).
func (e ProfileError) Error() string {
	if e.Field == "" {
		return e.File + ": " + e.Reason
	}
	return e.File + ": " + e.Field + ": " + e.Reason
}

// ProfileErrors is every problem found in one profile file.
type ProfileErrors []ProfileError

// Error writes one problem per line.
func (es ProfileErrors) Error() string {
	parts := make([]string, len(es))
	for i, e := range es {
		parts[i] = e.Error()
	}
	return strings.Join(parts, "\n")
}

// ParseProfile reads one profile file strictly: unknown fields, wrong types,
// trailing data and every rule of validate are errors of type ProfileErrors,
// each naming file, field and reason. A missing min_cases means
// DefaultMinCases.
//
// Besides the populations and targets, two fields choose how a source
// words its rule:
//   - "cir_requires_photo": true makes cir and cir_adjusted count a
//     complete procedure only with caecal_photo yes (BSG/JAG 2016); absent
//     or false counts completeness alone.
//   - "strict": true on a target asks for a value strictly below its maximum
//     (or above its minimum), for sources that say "below" or "less than":
//     a discomfort rate of exactly 10% then misses "below 10%". A strict
//     target that no value could pass (a strict minimum of 1 for a
//     proportion, a strict maximum of 0) is refused.
func ParseProfile(file string, data []byte) (*Profile, error) {
	var raw any
	if err := json.Unmarshal(data, &raw); err != nil {
		return nil, ProfileErrors{{File: file, Reason: jsonSyntaxReason(data, err)}}
	}
	var errs ProfileErrors
	fieldProblems(raw, reflect.TypeFor[Profile](), "", func(field, reason string) {
		errs = append(errs, ProfileError{File: file, Field: field, Reason: reason})
	})
	if len(errs) > 0 {
		return nil, errs
	}
	p := &Profile{MinCases: DefaultMinCases}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(p); err != nil {
		var te *json.UnmarshalTypeError
		if errors.As(err, &te) {
			return nil, ProfileErrors{{File: file, Field: te.Field, Reason: fmt.Sprintf("is a JSON %s, want %s", te.Value, jsonTypeName(te.Type))}}
		}
		return nil, ProfileErrors{{File: file, Reason: err.Error()}}
	}
	if errs := p.validate(file); len(errs) > 0 {
		return nil, errs
	}
	return p, nil
}

// jsonTypeName names a Go type as the JSON a user should write.
func jsonTypeName(t reflect.Type) string {
	switch t.Kind() {
	case reflect.Bool:
		return "true or false"
	case reflect.Int, reflect.Int64, reflect.Float64:
		return "a number"
	case reflect.String:
		return "a string"
	case reflect.Slice:
		return "a list"
	case reflect.Struct, reflect.Map:
		return "an object"
	case reflect.Pointer:
		return jsonTypeName(t.Elem())
	}
	return t.String()
}

// jsonSyntaxReason turns a JSON syntax error into a reason with line and
// column.
func jsonSyntaxReason(data []byte, err error) string {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		before := data[:min(int(se.Offset), len(data))]
		line := bytes.Count(before, []byte("\n")) + 1
		col := len(before) - bytes.LastIndexByte(before, '\n')
		return fmt.Sprintf("not valid JSON at line %d, column %d: %v", line, col, se)
	}
	return "not valid JSON: " + err.Error()
}

// fieldProblems walks decoded JSON against the Go type it will fill and
// calls report with the JSON path of every key the type has no field for
// ("unknown field") and of every value of the wrong JSON type. The standard
// decoder names the key but not where it is, and loses map keys from the
// path; this names the whole path, such as "targets.adr.strict".
func fieldProblems(v any, t reflect.Type, at string, report func(field, reason string)) {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	join := func(key string) string {
		if at == "" {
			return key
		}
		return at + "." + key
	}
	wrongType := func() {
		report(at, fmt.Sprintf("is a JSON %s, want %s", jsonKind(v), jsonTypeName(t)))
	}
	if v == nil {
		return // null leaves the field as it is
	}
	switch t.Kind() {
	case reflect.Struct:
		obj, ok := v.(map[string]any)
		if !ok {
			wrongType()
			return
		}
		for _, k := range slices.Sorted(maps.Keys(obj)) {
			f, ok := fieldByJSONName(t, k)
			if !ok {
				report(join(k), "unknown field")
				continue
			}
			fieldProblems(obj[k], f.Type, join(k), report)
		}
	case reflect.Map:
		obj, ok := v.(map[string]any)
		if !ok {
			wrongType()
			return
		}
		for _, k := range slices.Sorted(maps.Keys(obj)) {
			fieldProblems(obj[k], t.Elem(), join(k), report)
		}
	case reflect.Slice:
		list, ok := v.([]any)
		if !ok {
			wrongType()
			return
		}
		for i, e := range list {
			fieldProblems(e, t.Elem(), at+"["+strconv.Itoa(i)+"]", report)
		}
	case reflect.Bool:
		if _, ok := v.(bool); !ok {
			wrongType()
		}
	case reflect.String:
		if _, ok := v.(string); !ok {
			wrongType()
		}
	case reflect.Int, reflect.Int64, reflect.Float64:
		if _, ok := v.(float64); !ok {
			wrongType()
		}
	}
}

// jsonKind names the JSON type of a decoded value as encoding/json does in
// its type errors.
func jsonKind(v any) string {
	switch v.(type) {
	case bool:
		return "bool"
	case float64:
		return "number"
	case string:
		return "string"
	case []any:
		return "array"
	case map[string]any:
		return "object"
	}
	return "null"
}

// fieldByJSONName finds the struct field the JSON key fills, as
// encoding/json matches it (tag name, case-insensitively).
func fieldByJSONName(t reflect.Type, key string) (reflect.StructField, bool) {
	for i := range t.NumField() {
		f := t.Field(i)
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if name == "-" || !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		if strings.EqualFold(name, key) {
			return f, true
		}
	}
	return reflect.StructField{}, false
}

// validate checks the rules a profile must follow and returns every problem.
func (p *Profile) validate(file string) ProfileErrors {
	var errs ProfileErrors
	bad := func(field, format string, args ...any) {
		errs = append(errs, ProfileError{File: file, Field: field, Reason: fmt.Sprintf(format, args...)})
	}
	if p.ID == "" {
		bad("id", "is required")
	} else if strings.ContainsAny(p.ID, " \t\n/\\") {
		bad("id", "%q must not contain spaces or slashes", p.ID)
	}
	if p.Title == "" {
		bad("title", "is required")
	}
	if p.Source == "" {
		bad("source", "is required: name the published standard")
	}
	if p.MinCases < 0 {
		bad("min_cases", "%d is negative", p.MinCases)
	}
	checkAge := func(field string, age int) {
		if age < 0 || age > logbook.MaxAge {
			bad(field, "%d is outside 0–%d", age, logbook.MaxAge)
		}
	}
	checkAge("detection_eligible.min_age", p.Detection.MinAge)
	checkAge("stool_test_positive.min_age", p.StoolTest.MinAge)
	if len(p.Detection.Indications) == 0 {
		bad("detection_eligible.indications", "must list at least one indication")
	}
	for i, c := range p.Detection.Indications {
		if !logbook.IsOneOf(c, logbook.Indications) {
			bad(fmt.Sprintf("detection_eligible.indications[%d]", i), "unknown indication code %q (known: %s)", c, CodeList(logbook.Indications))
		}
	}
	checkExclusions := func(field string, list []logbook.Exclusion) {
		if len(list) == 0 {
			bad(field, "must list at least one exclusion code (usually \"none\")")
		}
		for i, c := range list {
			if !logbook.IsOneOf(c, logbook.Exclusions) {
				bad(fmt.Sprintf("%s[%d]", field, i), "unknown exclusion code %q (known: %s)", c, CodeList(logbook.Exclusions))
			}
		}
	}
	checkExclusions("detection_eligible.exclusions", p.Detection.Exclusions)
	checkExclusions("stool_test_positive.exclusions", p.StoolTest.Exclusions)

	ids := make([]string, 0, len(p.Targets))
	for id := range p.Targets {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		t := p.Targets[id]
		at := "targets." + id
		d, known := Lookup(id)
		switch {
		case !known:
			bad(at, "unknown indicator id %q", id)
			continue
		case d.Kind == KindDifference:
			bad(at, "%s is a comparison and takes no target", id)
			continue
		case d.Judged == ByThreshold:
			bad(at, "%s is judged against its published threshold, not a profile's target", id)
			continue
		case d.Judged == NotJudged:
			bad(at, "%s is reported without a target; a profile cannot set one", id)
			continue
		}
		if t.Minimum == nil && t.Maximum == nil {
			bad(at, "sets neither minimum nor maximum")
		}
		if t.Minimum != nil && t.Maximum != nil {
			bad(at, "sets both minimum and maximum; a target is one or the other")
		}
		lo, hi := 0.0, math.Inf(1)
		switch d.Kind {
		case KindProportion:
			hi = 1
		case KindKappa:
			lo, hi = -1, 1
		}
		for _, f := range []struct {
			name string
			v    *float64
		}{{"minimum", t.Minimum}, {"maximum", t.Maximum}, {"aspirational", t.Aspirational}} {
			if f.v == nil {
				continue
			}
			if *f.v < lo || *f.v > hi || math.IsNaN(*f.v) {
				if d.Kind == KindProportion {
					bad(at+"."+f.name, "%v is outside 0–1 (write proportions, 0.35 not 35)", *f.v)
				} else {
					bad(at+"."+f.name, "%v is outside %v–%v", *f.v, lo, hi)
				}
			}
		}
		// A strict target must leave room to pass it: nothing is above the
		// top of the scale or below its bottom.
		switch {
		case t.Strict && t.Minimum != nil && *t.Minimum >= hi:
			bad(at+".strict", "a strict minimum of %v can never be passed (nothing is above %v); use a minimum without strict", *t.Minimum, hi)
		case t.Strict && t.Maximum != nil && *t.Maximum <= lo:
			bad(at+".strict", "a strict maximum of %v can never be met (nothing is below %v); use a maximum without strict", *t.Maximum, lo)
		}
		if t.Aspirational != nil {
			switch {
			case t.Minimum != nil && *t.Aspirational < *t.Minimum:
				bad(at+".aspirational", "%v is below the minimum %v", *t.Aspirational, *t.Minimum)
			case t.Maximum != nil && *t.Aspirational > *t.Maximum:
				bad(at+".aspirational", "%v is above the maximum %v", *t.Aspirational, *t.Maximum)
			}
		}
	}
	return errs
}

func CodeList[T ~string](set []T) string {
	names := make([]string, len(set))
	for i, c := range set {
		names[i] = string(c)
	}
	return strings.Join(names, ", ")
}

// LoadProfiles reads the shipped profiles from builtin and any *.json files
// at the root of user (either may be nil). A user profile with the id of a
// shipped one replaces it, so a unit can copy a shipped file and edit it. Two
// files of the same origin with one id are an error. The result is sorted by
// id.
func LoadProfiles(builtin, user fs.FS) ([]*Profile, error) {
	byID := map[string]*Profile{}
	from := map[string]string{}
	load := func(fsys fs.FS, origin string, replace bool) error {
		if fsys == nil {
			return nil
		}
		names, err := fs.Glob(fsys, "*.json")
		if err != nil {
			return fmt.Errorf("list %s profiles: %w", origin, err)
		}
		seen := map[string]string{}
		for _, name := range names {
			data, err := fs.ReadFile(fsys, name)
			if err != nil {
				return fmt.Errorf("read %s profile %s: %w", origin, name, err)
			}
			label := path.Join(origin, name)
			p, err := ParseProfile(label, data)
			if err != nil {
				return err
			}
			if other, dup := seen[p.ID]; dup {
				return ProfileErrors{{File: label, Field: "id", Reason: fmt.Sprintf("%q is also the id of %s", p.ID, other)}}
			}
			seen[p.ID] = label
			if _, exists := byID[p.ID]; exists && !replace {
				return ProfileErrors{{File: label, Field: "id", Reason: fmt.Sprintf("%q is also the id of %s", p.ID, from[p.ID])}}
			}
			byID[p.ID], from[p.ID] = p, label
		}
		return nil
	}
	if err := load(builtin, "standards", false); err != nil {
		return nil, err
	}
	if err := load(user, "user standards", true); err != nil {
		return nil, err
	}
	ps := make([]*Profile, 0, len(byID))
	for _, p := range byID {
		ps = append(ps, p)
	}
	sort.Slice(ps, func(i, j int) bool { return ps[i].ID < ps[j].ID })
	return ps, nil
}

// FindProfile returns the profile with the id, or an error that lists the
// known ids.
func FindProfile(ps []*Profile, id string) (*Profile, error) {
	ids := make([]string, len(ps))
	for i, p := range ps {
		if p.ID == id {
			return p, nil
		}
		ids[i] = p.ID
	}
	return nil, fmt.Errorf("unknown standard %q (known: %s)", id, strings.Join(ids, ", "))
}
