package logbook

import (
	"fmt"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"
)

// FieldError is one broken rule of a record: the field (named as its CSV
// column) and why it was refused.
type FieldError struct {
	Field  string
	Reason string
}

// Error returns "field: reason".
func (e FieldError) Error() string { return e.Field + ": " + e.Reason }

// Problems collects the FieldErrors of one record in the order they are found.
type Problems []FieldError

func (ps *Problems) add(field, format string, args ...any) {
	*ps = append(*ps, FieldError{Field: field, Reason: fmt.Sprintf(format, args...)})
}

// Field returns the first reason given for field, or "" when it has none; the
// entry form shows it beside the field.
func (ps Problems) Field(field string) string {
	for _, p := range ps {
		if p.Field == field {
			return p.Reason
		}
	}
	return ""
}

// Limits of the recorded values (clinical-reference §1).
const (
	MinAge, MaxAge         = 18, 110
	MaxWithdrawalSeconds   = 7200
	MaxBBPS                = 3
	MinSizeMM, MaxSizeMM   = 1, 150
	MinComfort, MaxComfort = 1, 5
	MaxIDLength            = 64
	MaxMidazolamMg         = 50
	MaxFentanylUg          = 1000
	MaxPethidineMg         = 500
	MaxLesionNo            = 999
)

// checkID refuses empty, overlong or control-character identifiers.
func checkID(ps *Problems, field, id string, required bool) {
	if id == "" {
		if required {
			ps.add(field, "is required")
		}
		return
	}
	if len(id) > MaxIDLength {
		ps.add(field, "is longer than %d characters", MaxIDLength)
		return
	}
	if !utf8.ValidString(id) {
		ps.add(field, "is not valid UTF-8 text")
		return
	}
	if strings.TrimSpace(id) != id {
		ps.add(field, "has leading or trailing spaces")
		return
	}
	for _, r := range id {
		if unicode.IsControl(r) {
			ps.add(field, "contains a control character")
			return
		}
	}
}

func checkCode[T ~string](ps *Problems, field string, v T, set []T, required bool) {
	if v == "" {
		if required {
			ps.add(field, "is required")
		}
		return
	}
	if !IsOneOf(v, set) {
		names := make([]string, len(set))
		for i, c := range set {
			names[i] = string(c)
		}
		ps.add(field, "%s is not one of %s", QuoteValue(string(v)), strings.Join(names, ", "))
	}
}

func checkRange(ps *Problems, field string, v, lo, hi int, required bool) {
	if v == NotRecorded {
		if required {
			ps.add(field, "is required")
		}
		return
	}
	if v < lo || v > hi {
		ps.add(field, "%d is outside %d–%d", v, lo, hi)
	}
}

func checkDose(ps *Problems, field string, v, hi float64) {
	if v == NotRecorded {
		return
	}
	if v < 0 || v > hi || v != v {
		ps.add(field, "%g is outside 0–%g", v, hi)
	}
}

func checkDate(ps *Problems, field string, d time.Time, today time.Time, required bool) {
	if d.IsZero() {
		if required {
			ps.add(field, "is required")
		}
		return
	}
	if d.After(today) {
		ps.add(field, "%s is in the future", d.Format(DateLayout))
	}
}

func checkYesNo(ps *Problems, field string, v YesNo, allowNA bool) {
	if v == NotApplicable && !allowNA {
		ps.add(field, "must be yes or no")
	} else if v < Unrecorded || v > NotApplicable {
		ps.add(field, "must be yes or no")
	}
}

// ValidateProcedure checks a procedure against every rule of
// clinical-reference §1 and returns each violation; nil means valid. today is
// the local date (injected so tests can fix the clock); a date after it is
// refused.
func ValidateProcedure(p Procedure, today time.Time) Problems {
	var ps Problems
	checkID(&ps, "procedure_id", p.ID, true)
	checkDate(&ps, "performed_on", p.PerformedOn, today, true)
	checkID(&ps, "operator_id", p.OperatorID, true)
	checkID(&ps, "trainee_id", p.TraineeID, false)
	checkCode(&ps, "supervision", p.Supervision, Supervisions, false)
	checkYesNo(&ps, "trainee_reached_caecum", p.TraineeReachedCaecum, false)
	if p.PatientKey != "" && !IsPatientKey(p.PatientKey) {
		ps.add("patient_ref", "is not a pseudonym")
	}
	checkRange(&ps, "age", p.Age, MinAge, MaxAge, true)
	checkCode(&ps, "sex", p.Sex, Sexes, true)
	checkCode(&ps, "indication", p.Indication, Indications, true)
	checkCode(&ps, "setting", p.Setting, Settings, false)
	checkCode(&ps, "exclusion", p.Exclusion, Exclusions, false)
	checkCode(&ps, "extent", p.Extent, Extents, true)
	checkCode(&ps, "incomplete_reason", p.IncompleteReason, IncompleteReasons, false)
	checkYesNo(&ps, "caecal_photo", p.CaecalPhoto, false)
	checkRange(&ps, "withdrawal_seconds", p.WithdrawalSeconds, 0, MaxWithdrawalSeconds, false)
	checkRange(&ps, "bbps_right", p.BBPSRight, 0, MaxBBPS, false)
	checkRange(&ps, "bbps_transverse", p.BBPSTransverse, 0, MaxBBPS, false)
	checkRange(&ps, "bbps_left", p.BBPSLeft, 0, MaxBBPS, false)
	checkYesNo(&ps, "retroversion", p.Retroversion, true)
	checkDose(&ps, "midazolam_mg", p.MidazolamMg, MaxMidazolamMg)
	checkDose(&ps, "fentanyl_ug", p.FentanylUg, MaxFentanylUg)
	checkDose(&ps, "pethidine_mg", p.PethidineMg, MaxPethidineMg)
	checkYesNo(&ps, "propofol", p.Propofol, false)
	checkRange(&ps, "comfort", p.Comfort, MinComfort, MaxComfort, false)
	checkYesNo(&ps, "detection_aid", p.DetectionAid, false)
	checkCode(&ps, "adverse_event", p.AdverseEvent, AdverseEvents, false)
	checkCode(&ps, "recommended_interval", p.RecommendedInterval, Intervals, false)

	// Cross-field rules.
	if p.IncompleteReason != "" && p.Extent != ExtentIncomplete && p.Extent != "" {
		ps.add("incomplete_reason", "is given but extent is %s, not incomplete", p.Extent)
	}
	if p.TraineeID == "" {
		if p.Supervision != "" {
			ps.add("supervision", "is given but there is no trainee_id")
		}
		if p.TraineeReachedCaecum != Unrecorded {
			ps.add("trainee_reached_caecum", "is given but there is no trainee_id")
		}
	} else if p.TraineeID == p.OperatorID {
		ps.add("trainee_id", "is the same as operator_id")
	}
	if p.Extent == ExtentIncomplete {
		if p.CaecalPhoto == Yes {
			ps.add("caecal_photo", "is yes but extent is incomplete")
		}
		if p.TraineeReachedCaecum == Yes {
			ps.add("trainee_reached_caecum", "is yes but extent is incomplete")
		}
	}
	return ps
}

// dysplasiaRule says which dysplasia values a histology allows.
func dysplasiaRule(h Histology) (allowed []Dysplasia, allowEmpty bool, text string) {
	switch h {
	case TubularAdenoma, TubulovillousAdeno, VillousAdenoma, HistSSLDysplasia:
		return []Dysplasia{DysplasiaLow, DysplasiaHigh}, false, "must be low or high for " + string(h)
	case HistHyperplastic, HistNormal, HistInflammatory, HistSSL:
		return []Dysplasia{DysplasiaNone}, true, "must be none or empty for " + string(h)
	case "", HistPending:
		return nil, true, "must be empty while histology is pending or not recorded"
	}
	return Dysplasias, true, "" // TSA, adenocarcinoma, other: free
}

// ValidateLesion checks one lesion's ranges, codes and cross-field rules; the
// rules that involve other lesions (unique numbers) or the procedure (it must
// exist) are checked by the store, which sees them.
func ValidateLesion(l Lesion, today time.Time) Problems {
	var ps Problems
	checkID(&ps, "procedure_id", l.ProcedureID, true)
	if l.LesionNo == NotRecorded {
		ps.add("lesion_no", "is required")
	} else if l.LesionNo < 1 || l.LesionNo > MaxLesionNo {
		ps.add("lesion_no", "%d is outside 1–%d", l.LesionNo, MaxLesionNo)
	}
	checkCode(&ps, "segment", l.Segment, Segments, true)
	checkRange(&ps, "size_mm", l.SizeMM, MinSizeMM, MaxSizeMM, true)
	checkCode(&ps, "paris", l.Paris, ParisClasses, false)
	checkCode(&ps, "optical_class", l.OpticalClass, OpticalClasses, false)
	checkCode(&ps, "confidence", l.Confidence, Confidences, false)
	checkCode(&ps, "imaging", l.Imaging, ImagingModes, false)
	checkCode(&ps, "aid_class", l.AidClass, OpticalClasses, false)
	checkCode(&ps, "resection", l.Resection, Resections, false)
	checkYesNo(&ps, "retrieved", l.Retrieved, false)
	checkYesNo(&ps, "sent_to_pathology", l.SentToPathology, false)
	checkCode(&ps, "histology", l.Histology, Histologies, false)
	checkCode(&ps, "dysplasia", l.Dysplasia, Dysplasias, false)
	checkYesNo(&ps, "tattoo", l.Tattoo, false)
	checkDate(&ps, "reported_on", l.ReportedOn, today, false)

	if l.SentToPathology == Yes && l.Retrieved != Yes {
		ps.add("sent_to_pathology", "is yes but retrieved is not yes")
	}
	if l.Histology.IsFinal() && l.SentToPathology != Yes {
		ps.add("histology", "is %s but sent_to_pathology is not yes", l.Histology)
	}
	if l.OpticalClass == OpticalUncertain && l.Confidence == HighConfidence {
		ps.add("confidence", "must be low when optical_class is uncertain")
	}
	if l.Confidence != "" && l.OpticalClass == "" {
		ps.add("confidence", "is given but there is no optical_class")
	}
	if IsOneOf(l.Histology, append([]Histology{""}, Histologies...)) && IsOneOf(l.Dysplasia, append([]Dysplasia{""}, Dysplasias...)) {
		allowed, allowEmpty, text := dysplasiaRule(l.Histology)
		if l.Dysplasia == "" {
			if !allowEmpty {
				ps.add("dysplasia", "%s", text)
			}
		} else if !IsOneOf(l.Dysplasia, allowed) {
			ps.add("dysplasia", "%s", text)
		}
	}
	if !l.ReportedOn.IsZero() && !l.Histology.IsFinal() {
		ps.add("reported_on", "is given but histology is not reported")
	}
	return ps
}

// ValidateHistologyResult checks a pathology result before it is applied to
// a pending lesion. The lesion's own rules (dysplasia consistent with the
// histology) are checked again on the updated lesion.
func ValidateHistologyResult(h HistologyResult, today time.Time) Problems {
	var ps Problems
	checkID(&ps, "procedure_id", h.ProcedureID, true)
	if h.LesionNo == NotRecorded {
		ps.add("lesion_no", "is required")
	} else if h.LesionNo < 1 || h.LesionNo > MaxLesionNo {
		ps.add("lesion_no", "%d is outside 1–%d", h.LesionNo, MaxLesionNo)
	}
	checkCode(&ps, "histology", h.Histology, Histologies, true)
	if h.Histology == HistPending {
		ps.add("histology", "a result cannot be pending")
	}
	checkCode(&ps, "dysplasia", h.Dysplasia, Dysplasias, false)
	checkDate(&ps, "reported_on", h.ReportedOn, today, true)
	if len(ps) == 0 {
		allowed, allowEmpty, text := dysplasiaRule(h.Histology)
		if (h.Dysplasia == "" && !allowEmpty) || (h.Dysplasia != "" && !IsOneOf(h.Dysplasia, allowed)) {
			ps.add("dysplasia", "%s", text)
		}
	}
	return ps
}

// ValidateLesionNumbers reports lesion numbers used twice within one
// procedure's list of lesions.
func ValidateLesionNumbers(lesions []Lesion) Problems {
	var ps Problems
	seen := make(map[int]bool, len(lesions))
	for _, l := range lesions {
		if seen[l.LesionNo] {
			ps.add("lesion_no", "%d is used twice in procedure %s", l.LesionNo, l.ProcedureID)
		}
		seen[l.LesionNo] = true
	}
	return ps
}

// ValidateRosterEntry checks a roster entry.
func ValidateRosterEntry(r RosterEntry) Problems {
	var ps Problems
	checkID(&ps, "id", r.ID, true)
	if len(r.Name) > 200 {
		ps.add("name", "is longer than 200 characters")
	} else if !utf8.ValidString(r.Name) {
		ps.add("name", "is not valid UTF-8 text")
	}
	checkCode(&ps, "role", r.Role, Roles, true)
	return ps
}
