package logbook

import "time"

// NotRecorded marks a numeric field that was left empty. Every numeric field
// of a record uses it, so "0" always means a measured zero.
const NotRecorded = -1

// YesNo is a recorded yes/no answer, with "not recorded" as its zero value and
// "not applicable" for the fields that allow it (rectal retroversion).
type YesNo int8

// YesNo values.
const (
	Unrecorded    YesNo = iota // empty in CSV
	Yes                        // "yes"
	No                         // "no"
	NotApplicable              // "not_applicable" (retroversion only)
)

// String returns the CSV spelling of the answer ("" when not recorded).
func (y YesNo) String() string {
	switch y {
	case Yes:
		return "yes"
	case No:
		return "no"
	case NotApplicable:
		return "not_applicable"
	}
	return ""
}

// Procedure is one colonoscopy, with every field of clinical-reference §1.
// Dates are civil dates held as midnight UTC. Numeric fields hold NotRecorded
// when empty.
type Procedure struct {
	ID                   string
	PerformedOn          time.Time
	OperatorID           string // the accountable endoscopist
	TraineeID            string // who held the scope, if a trainee; "" otherwise
	Supervision          Supervision
	TraineeReachedCaecum YesNo
	// PatientKey is the pseudonym: HMAC-SHA-256 of the hospital number under
	// the unit key, hex encoded. Never the hospital number itself.
	PatientKey          string
	Age                 int
	Sex                 Sex
	Indication          Indication
	Setting             Setting
	Exclusion           Exclusion
	Extent              Extent
	IncompleteReason    IncompleteReason
	CaecalPhoto         YesNo
	WithdrawalSeconds   int
	BBPSRight           int
	BBPSTransverse      int
	BBPSLeft            int
	Retroversion        YesNo
	MidazolamMg         float64
	FentanylUg          float64
	PethidineMg         float64
	Propofol            YesNo
	Comfort             int // Gloucester comfort score 1–5
	DetectionAid        YesNo
	AdverseEvent        AdverseEvent
	RecommendedInterval Interval
}

// NewProcedure returns a procedure with every numeric field NotRecorded, the
// starting point for the importer and the entry form.
func NewProcedure() Procedure {
	return Procedure{
		Age: NotRecorded, WithdrawalSeconds: NotRecorded,
		BBPSRight: NotRecorded, BBPSTransverse: NotRecorded, BBPSLeft: NotRecorded,
		MidazolamMg: NotRecorded, FentanylUg: NotRecorded, PethidineMg: NotRecorded,
		Comfort: NotRecorded,
	}
}

// Lesion is one polyp or other finding of a procedure.
type Lesion struct {
	ProcedureID     string
	LesionNo        int // 1, 2, … unique within the procedure
	Segment         Segment
	SizeMM          int
	Paris           Paris
	OpticalClass    OpticalClass
	Confidence      Confidence
	Imaging         Imaging
	AidClass        OpticalClass // class suggested by a computer-aided system, if recorded
	Resection       Resection
	Retrieved       YesNo
	SentToPathology YesNo
	Histology       Histology
	Dysplasia       Dysplasia
	Tattoo          YesNo
	// ReportedOn is the date histology was reported (zero when not yet).
	ReportedOn time.Time
}

// NewLesion returns a lesion with its numeric fields NotRecorded.
func NewLesion() Lesion { return Lesion{SizeMM: NotRecorded} }

// HistologyResult is a pathology result arriving after the procedure.
type HistologyResult struct {
	ProcedureID string
	LesionNo    int
	Histology   Histology
	Dysplasia   Dysplasia
	ReportedOn  time.Time
}

// RosterEntry is a member of the unit's staff who performs or learns
// colonoscopy. Staff names are not patient data and may be shown.
type RosterEntry struct {
	ID      string
	Name    string
	Role    Role
	Retired bool
}

// Case is a procedure with its lesions: the unit every indicator reads.
type Case struct {
	Procedure
	Lesions []Lesion
}
