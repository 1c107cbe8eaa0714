package app

import (
	"polypledger/logbook"
)

// The plain words the screens use for each stored code. The codes stay as
// the clinical reference spells them in files; people see these.

var indicationWords = map[logbook.Indication]string{
	logbook.Screening:         "Screening",
	logbook.StoolTestPositive: "Positive stool test (FIT/FOBT)",
	logbook.Surveillance:      "Surveillance",
	logbook.Diagnostic:        "Symptoms (diagnostic)",
	logbook.Therapeutic:       "Planned treatment (therapeutic)",
}

var sexWords = map[logbook.Sex]string{
	logbook.SexFemale: "Female", logbook.SexMale: "Male", logbook.SexOther: "Other", logbook.SexUnknown: "Not known",
}

var settingWords = map[logbook.Setting]string{logbook.Outpatient: "Outpatient", logbook.Inpatient: "Inpatient"}

var exclusionWords = map[logbook.Exclusion]string{
	logbook.ExclusionNone:      "None",
	logbook.IBD:                "Inflammatory bowel disease",
	logbook.HereditarySyndrome: "Hereditary syndrome",
	logbook.KnownNeoplasm:      "Known tumour",
}

var extentWords = map[logbook.Extent]string{
	logbook.ExtentCaecum:        "Caecum",
	logbook.ExtentTerminalIleum: "Terminal ileum",
	logbook.ExtentAnastomosis:   "Anastomosis",
	logbook.ExtentIncomplete:    "Did not reach the caecum",
}

var incompleteWords = map[logbook.IncompleteReason]string{
	logbook.ReasonPoorPrep:      "Poor bowel prep",
	logbook.ReasonObstruction:   "Obstruction",
	logbook.ReasonSevereColitis: "Severe colitis",
	logbook.ReasonDiscomfort:    "Discomfort",
	logbook.ReasonLooping:       "Looping",
	logbook.ReasonOther:         "Other reason",
}

// supervisionWords, intervalWords and histologyWords are logbook's words
// for those codes, so that screens, reasons and reports say the same.
var (
	supervisionWords = choiceWords(logbook.Supervisions)
	intervalWords    = choiceWords(logbook.Intervals)
	histologyWords   = choiceWords(logbook.Histologies)
)

// choiceWords maps each code of set to logbook's words for it, starting
// with a capital as a choice in a drop-down does.
func choiceWords[T interface {
	~string
	Words() string
}](set []T) map[T]string {
	m := make(map[T]string, len(set))
	for _, c := range set {
		m[c] = upperFirst(c.Words())
	}
	return m
}

var adverseWords = map[logbook.AdverseEvent]string{
	logbook.AdverseNone:     "None",
	logbook.Perforation:     "Perforation",
	logbook.BleedingTreated: "Bleeding that needed treatment",
}

var segmentWords = map[logbook.Segment]string{
	logbook.Caecum: "Caecum", logbook.Ascending: "Ascending colon", logbook.HepaticFlexure: "Hepatic flexure",
	logbook.Transverse: "Transverse colon", logbook.SplenicFlexure: "Splenic flexure",
	logbook.Descending: "Descending colon", logbook.Sigmoid: "Sigmoid colon", logbook.Rectum: "Rectum",
}

var parisWords = map[logbook.Paris]string{
	logbook.Paris0Ip: "0-Ip (stalked)", logbook.Paris0Isp: "0-Isp (broad stalk)", logbook.Paris0Is: "0-Is (sessile)",
	logbook.Paris0IIa: "0-IIa (slightly raised)", logbook.Paris0IIb: "0-IIb (flat)",
	logbook.Paris0IIc: "0-IIc (slightly depressed)", logbook.Paris0III: "0-III (excavated)",
}

var opticalWords = map[logbook.OpticalClass]string{
	logbook.OpticalAdenoma:      "Adenoma",
	logbook.OpticalHyperplastic: "Hyperplastic",
	logbook.OpticalSSL:          "Sessile serrated lesion",
	logbook.OpticalDeepInvasive: "Deep invasive",
	logbook.OpticalUncertain:    "Uncertain",
}

var confidenceWords = map[logbook.Confidence]string{logbook.HighConfidence: "High", logbook.LowConfidence: "Low"}

var imagingWords = map[logbook.Imaging]string{
	logbook.WhiteLight: "White light", logbook.NBI: "NBI",
	logbook.OtherVirtualChromo: "Other virtual chromoendoscopy", logbook.DyeChromo: "Dye spray",
}

var resectionWords = map[logbook.Resection]string{
	logbook.ResectionNone: "Not removed", logbook.ColdSnare: "Cold snare", logbook.HotSnare: "Hot snare",
	logbook.ColdForceps: "Cold forceps", logbook.EMREnBloc: "EMR in one piece", logbook.EMRPiecemeal: "EMR in pieces",
	logbook.ESD: "ESD", logbook.BiopsyOnly: "Biopsy only",
}

var dysplasiaWords = map[logbook.Dysplasia]string{
	logbook.DysplasiaNone: "None", logbook.DysplasiaLow: "Low grade", logbook.DysplasiaHigh: "High grade",
}

var roleWords = map[logbook.Role]string{logbook.RoleEndoscopist: "Endoscopist", logbook.RoleTrainee: "Trainee"}

// comfortWords are the Gloucester comfort score's grades.
var comfortWords = []string{"1 – comfortable", "2 – minimal discomfort", "3 – mild discomfort", "4 – moderate discomfort", "5 – severe discomfort"}

// bostonWords describe each Boston Bowel Preparation Scale grade (Lai EJ et
// al., Gastrointest Endosc 2009;69:620–625).
var bostonWords = []string{
	"0 – solid stool, mucosa not seen",
	"1 – only part of the mucosa seen",
	"2 – minor residue, mucosa seen well",
	"3 – whole mucosa seen well",
}
