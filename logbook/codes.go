// Package logbook holds the records a colonoscopy unit keeps — procedures,
// lesions and roster entries — with their codes, the derived groups the
// indicators count, and the one validation function per record that the
// importer, the desktop app and the tests all call. It imports nothing of the
// project, so both store and report can depend on it.
package logbook

// Code sets of clinical-reference §1. Each code set is a named string type so
// that a value of one set cannot be passed where another is expected; the
// empty string always means "not recorded".

// Sex as recorded; sex-specific ADR uses F and M only.
type Sex string

// Sex codes.
const (
	SexFemale  Sex = "F"
	SexMale    Sex = "M"
	SexOther   Sex = "X"
	SexUnknown Sex = "U"
)

// Indication is why the colonoscopy was done.
type Indication string

// Indication codes (stool test = FIT/FOBT).
const (
	Screening         Indication = "screening"
	StoolTestPositive Indication = "stool_test_positive"
	Surveillance      Indication = "surveillance"
	Diagnostic        Indication = "diagnostic"
	Therapeutic       Indication = "therapeutic"
)

// Setting is outpatient or inpatient.
type Setting string

// Setting codes.
const (
	Outpatient Setting = "outpatient"
	Inpatient  Setting = "inpatient"
)

// Exclusion removes a case from the detection indicators.
type Exclusion string

// Exclusion codes.
const (
	ExclusionNone      Exclusion = "none"
	IBD                Exclusion = "ibd"
	HereditarySyndrome Exclusion = "hereditary_syndrome"
	KnownNeoplasm      Exclusion = "known_neoplasm"
)

// Extent is how far the examination reached.
type Extent string

// Extent codes.
const (
	ExtentCaecum        Extent = "caecum"
	ExtentTerminalIleum Extent = "terminal_ileum"
	ExtentAnastomosis   Extent = "anastomosis"
	ExtentIncomplete    Extent = "incomplete"
)

// IncompleteReason says why an incomplete examination stopped.
type IncompleteReason string

// Incomplete reason codes.
const (
	ReasonPoorPrep      IncompleteReason = "poor_prep"
	ReasonObstruction   IncompleteReason = "obstruction"
	ReasonSevereColitis IncompleteReason = "severe_colitis"
	ReasonDiscomfort    IncompleteReason = "discomfort"
	ReasonLooping       IncompleteReason = "looping"
	ReasonOther         IncompleteReason = "other"
)

// Supervision is the level of supervision of a trainee case.
type Supervision string

// Supervision codes.
const (
	Independent        Supervision = "independent"
	SupervisedHandsOn  Supervision = "supervised_hands_on"
	SupervisedObserved Supervision = "supervised_observed"
)

// AdverseEvent is an adverse event within 30 days.
type AdverseEvent string

// Adverse event codes.
const (
	AdverseNone     AdverseEvent = "none"
	Perforation     AdverseEvent = "perforation"
	BleedingTreated AdverseEvent = "bleeding_needing_intervention"
)

// Segment is the colonic segment a lesion was found in.
type Segment string

// Segment codes, proximal to distal.
const (
	Caecum         Segment = "caecum"
	Ascending      Segment = "ascending"
	HepaticFlexure Segment = "hepatic_flexure"
	Transverse     Segment = "transverse"
	SplenicFlexure Segment = "splenic_flexure"
	Descending     Segment = "descending"
	Sigmoid        Segment = "sigmoid"
	Rectum         Segment = "rectum"
)

// Paris is the Paris endoscopic classification of a superficial lesion
// (Endoscopy 2003;35(6 Suppl):S3–S43).
type Paris string

// Paris classes.
const (
	Paris0Ip  Paris = "0-Ip"
	Paris0Isp Paris = "0-Isp"
	Paris0Is  Paris = "0-Is"
	Paris0IIa Paris = "0-IIa"
	Paris0IIb Paris = "0-IIb"
	Paris0IIc Paris = "0-IIc"
	Paris0III Paris = "0-III"
)

// OpticalClass is the real-time optical diagnosis of a lesion, by the
// endoscopist or by a computer-aided characterisation system.
type OpticalClass string

// Optical classes.
const (
	OpticalAdenoma      OpticalClass = "adenoma"
	OpticalHyperplastic OpticalClass = "hyperplastic"
	OpticalSSL          OpticalClass = "ssl"
	OpticalDeepInvasive OpticalClass = "deep_invasive"
	OpticalUncertain    OpticalClass = "uncertain"
)

// Confidence of an optical diagnosis.
type Confidence string

// Confidence codes.
const (
	HighConfidence Confidence = "high"
	LowConfidence  Confidence = "low"
)

// Imaging is the imaging mode used for the optical diagnosis.
type Imaging string

// Imaging codes.
const (
	WhiteLight         Imaging = "white_light"
	NBI                Imaging = "nbi"
	OtherVirtualChromo Imaging = "other_virtual_chromo"
	DyeChromo          Imaging = "dye_chromo"
)

// Resection is how a lesion was removed or sampled.
type Resection string

// Resection codes.
const (
	ResectionNone Resection = "none"
	ColdSnare     Resection = "cold_snare"
	HotSnare      Resection = "hot_snare"
	ColdForceps   Resection = "cold_forceps"
	EMREnBloc     Resection = "emr_en_bloc"
	EMRPiecemeal  Resection = "emr_piecemeal"
	ESD           Resection = "esd"
	BiopsyOnly    Resection = "biopsy_only"
)

// Histology is the pathologist's diagnosis of a lesion.
type Histology string

// Histology codes.
const (
	HistPending        Histology = "pending"
	TubularAdenoma     Histology = "tubular_adenoma"
	TubulovillousAdeno Histology = "tubulovillous_adenoma"
	VillousAdenoma     Histology = "villous_adenoma"
	HistSSL            Histology = "ssl"
	HistSSLDysplasia   Histology = "ssl_dysplasia"
	HistTSA            Histology = "tsa"
	HistHyperplastic   Histology = "hyperplastic"
	Adenocarcinoma     Histology = "adenocarcinoma"
	HistNormal         Histology = "normal"
	HistInflammatory   Histology = "inflammatory"
	HistOther          Histology = "other"
)

// Dysplasia grade.
type Dysplasia string

// Dysplasia codes.
const (
	DysplasiaNone Dysplasia = "none"
	DysplasiaLow  Dysplasia = "low"
	DysplasiaHigh Dysplasia = "high"
)

// Interval is a surveillance interval code (architecture.md, CSV interchange).
type Interval string

// Interval codes, as written in CSV files and JSON output.
const (
	Interval2to6m     Interval = "2-6m"
	Interval3to6m     Interval = "3-6m"
	Interval6m        Interval = "6m"
	Interval1y        Interval = "1y"
	Interval3y        Interval = "3y"
	Interval3to5y     Interval = "3-5y"
	Interval5to10y    Interval = "5-10y"
	Interval7to10y    Interval = "7-10y"
	Interval10y       Interval = "10y"
	IntervalScreening Interval = "screening"
	IntervalRepeat    Interval = "repeat"
	IntervalOutside   Interval = "outside"
	IntervalPending   Interval = "pending"
)

// Role is a roster entry's role in the unit.
type Role string

// Roster roles.
const (
	RoleEndoscopist Role = "endoscopist"
	RoleTrainee     Role = "trainee"
)

// Code lists in the order the reference gives them; the app offers them as
// choices and the validators check membership against them.
var (
	Sexes             = []Sex{SexFemale, SexMale, SexOther, SexUnknown}
	Indications       = []Indication{Screening, StoolTestPositive, Surveillance, Diagnostic, Therapeutic}
	Settings          = []Setting{Outpatient, Inpatient}
	Exclusions        = []Exclusion{ExclusionNone, IBD, HereditarySyndrome, KnownNeoplasm}
	Extents           = []Extent{ExtentCaecum, ExtentTerminalIleum, ExtentAnastomosis, ExtentIncomplete}
	IncompleteReasons = []IncompleteReason{ReasonPoorPrep, ReasonObstruction, ReasonSevereColitis, ReasonDiscomfort, ReasonLooping, ReasonOther}
	Supervisions      = []Supervision{Independent, SupervisedHandsOn, SupervisedObserved}
	AdverseEvents     = []AdverseEvent{AdverseNone, Perforation, BleedingTreated}
	Segments          = []Segment{Caecum, Ascending, HepaticFlexure, Transverse, SplenicFlexure, Descending, Sigmoid, Rectum}
	ParisClasses      = []Paris{Paris0Ip, Paris0Isp, Paris0Is, Paris0IIa, Paris0IIb, Paris0IIc, Paris0III}
	OpticalClasses    = []OpticalClass{OpticalAdenoma, OpticalHyperplastic, OpticalSSL, OpticalDeepInvasive, OpticalUncertain}
	Confidences       = []Confidence{HighConfidence, LowConfidence}
	ImagingModes      = []Imaging{WhiteLight, NBI, OtherVirtualChromo, DyeChromo}
	Resections        = []Resection{ResectionNone, ColdSnare, HotSnare, ColdForceps, EMREnBloc, EMRPiecemeal, ESD, BiopsyOnly}
	Histologies       = []Histology{HistPending, TubularAdenoma, TubulovillousAdeno, VillousAdenoma, HistSSL, HistSSLDysplasia, HistTSA, HistHyperplastic, Adenocarcinoma, HistNormal, HistInflammatory, HistOther}
	Dysplasias        = []Dysplasia{DysplasiaNone, DysplasiaLow, DysplasiaHigh}
	Intervals         = []Interval{Interval2to6m, Interval3to6m, Interval6m, Interval1y, Interval3y, Interval3to5y, Interval5to10y, Interval7to10y, Interval10y, IntervalScreening, IntervalRepeat, IntervalOutside, IntervalPending}
	Roles             = []Role{RoleEndoscopist, RoleTrainee}
)

// IsOneOf reports whether v is one of the codes in set.
func IsOneOf[T ~string](v T, set []T) bool {
	for _, c := range set {
		if c == v {
			return true
		}
	}
	return false
}
