package logbook

// The plain words for the codes that reasons, reports and screens print.
// Files and JSON keep the codes; each code set's words live here once, so
// that an interval reason, a PDF table and a drop-down say the same thing.

// intervalWords are the plain words for each interval code.
var intervalWords = map[Interval]string{
	Interval2to6m:     "2 to 6 months",
	Interval3to6m:     "3 to 6 months",
	Interval6m:        "6 months",
	Interval1y:        "1 year",
	Interval3y:        "3 years",
	Interval3to5y:     "3 to 5 years",
	Interval5to10y:    "5 to 10 years",
	Interval7to10y:    "7 to 10 years",
	Interval10y:       "10 years",
	IntervalScreening: "back to screening",
	IntervalRepeat:    "repeat the colonoscopy",
	IntervalOutside:   "outside the guideline",
	IntervalPending:   "waiting for histology",
}

// Words returns the interval in plain words ("3 years", "back to
// screening") for text meant to be read; files and JSON keep the code.
// An unknown code is returned as it is.
func (i Interval) Words() string {
	if w, ok := intervalWords[i]; ok {
		return w
	}
	return string(i)
}

// histologyWords are the plain words for each histology code.
var histologyWords = map[Histology]string{
	HistPending:        "waiting for the result",
	TubularAdenoma:     "tubular adenoma",
	TubulovillousAdeno: "tubulovillous adenoma",
	VillousAdenoma:     "villous adenoma",
	HistSSL:            "sessile serrated lesion",
	HistSSLDysplasia:   "sessile serrated lesion with dysplasia",
	HistTSA:            "traditional serrated adenoma",
	HistHyperplastic:   "hyperplastic polyp",
	Adenocarcinoma:     "adenocarcinoma",
	HistNormal:         "normal tissue",
	HistInflammatory:   "inflammatory",
	HistOther:          "other",
}

// Words returns the histology in plain words for use inside a sentence
// ("tubular adenoma", "hyperplastic polyp"). An unknown code is returned as
// it is.
func (h Histology) Words() string {
	if w, ok := histologyWords[h]; ok {
		return w
	}
	return string(h)
}

// supervisionWords are the plain words for each supervision level.
var supervisionWords = map[Supervision]string{
	Independent:        "On their own",
	SupervisedHandsOn:  "Trainer helped",
	SupervisedObserved: "Trainer watched",
}

// Words returns the supervision level as a label ("On their own", "Trainer
// helped", "Trainer watched"), "Not recorded" for none, as every table,
// chart legend and drop-down prints it.
func (s Supervision) Words() string {
	if w, ok := supervisionWords[s]; ok {
		return w
	}
	return "Not recorded"
}
