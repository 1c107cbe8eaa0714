package recipe

// The words other systems use, which Draft matches source headers and
// values against: for each of our fields the headers that commonly name it,
// and for each code the words that commonly mean it. Our own names and
// codes (with "_" read as a space) always match as well. Words are written
// as Draft normalises them: lower case, punctuation as spaces.

// headerWords are the common headers of each field.
var headerWords = map[string][]string{
	"procedure_id":           {"procedure id", "episode", "episode id", "exam id", "examination id", "procedure", "procedure no", "case id", "case no", "request ref", "request id", "request no", "ref", "reference", "visit id", "encounter id"},
	"performed_on":           {"date", "date of test", "procedure date", "exam date", "examination date", "date of procedure", "test date", "date performed", "visit date", "date of examination"},
	"operator_id":            {"endoscopist", "endoscopist id", "operator", "performed by", "consultant", "clinician", "colonoscopist", "responsible endoscopist"},
	"trainee_id":             {"trainee", "trainee id", "fellow", "registrar", "trainee endoscopist"},
	"supervision":            {"supervision level", "trainee supervision"},
	"trainee_reached_caecum": {"trainee reached caecum", "trainee caecum", "trainee intubated caecum"},
	"patient_ref":            {"hospital no", "hospital number", "patient id", "patient no", "patient number", "patient ref", "patient reference", "mrn", "nhs number", "nhs no", "unit number", "unit no", "pt id", "pid", "case number"},
	"age":                    {"pt age", "patient age", "age years", "age at procedure", "age at test"},
	"sex":                    {"gender", "pt sex", "patient sex"},
	"indication":             {"referral", "reason", "referral reason", "reason for test", "reason for procedure", "indication for procedure", "primary indication"},
	"setting":                {"patient type", "in out patient", "inpatient outpatient", "admission type", "ip op", "op ip", "care setting"},
	"exclusion":              {"excluded", "exclude", "exclusion reason", "audit exclusion"},
	"extent":                 {"extent reached", "completion", "furthest point", "extent of examination", "landmark reached", "extent of exam"},
	"incomplete_reason":      {"reason incomplete", "why incomplete", "incomplete because", "failure reason", "reason for incomplete"},
	"caecal_photo":           {"photo", "photo doc", "photodoc", "photo documentation", "caecum photographed", "landmark photo", "photo taken", "caecal photo taken"},
	"withdrawal_seconds":     {"withdrawal", "withdrawal time", "withdrawal min", "withdrawal mins", "withdrawal minutes", "withdrawal sec", "withdrawal secs", "withdrawal s", "withdrawal time min", "withdrawal time sec"},
	"bbps_right":             {"bbps r", "bbps rt", "boston right", "bbps right colon", "right bbps", "bowel prep right"},
	"bbps_transverse":        {"bbps t", "bbps tr", "boston transverse", "bbps transverse colon", "transverse bbps", "bowel prep transverse"},
	"bbps_left":              {"bbps l", "bbps lt", "boston left", "bbps left colon", "left bbps", "bowel prep left"},
	"retroversion":           {"retroflexion", "rectal retroversion", "rectal retroflexion", "retroflexed", "retro"},
	"midazolam_mg":           {"midazolam", "midaz", "midazolam dose"},
	"fentanyl_ug":            {"fentanyl", "fentanyl mcg", "fentanyl micrograms", "fentanyl dose"},
	"pethidine_mg":           {"pethidine", "meperidine", "pethidine dose"},
	"propofol":               {"propofol used", "propofol sedation"},
	"comfort":                {"comfort score", "gloucester", "gloucester comfort score", "patient comfort", "comfort gcs"},
	"detection_aid":          {"cade", "cad", "detection aid", "computer aided detection", "ai detection", "ai used", "ai"},
	"adverse_event":          {"adverse event", "adverse events", "complication", "complications"},
	"recommended_interval":   {"interval", "follow up", "surveillance interval", "next colonoscopy", "recommendation", "follow up interval"},
	"lesion_no":              {"lesion no", "lesion number", "polyp no", "polyp number", "specimen", "specimen no", "specimen id", "pot", "pot no", "lesion id", "polyp id"},
	"segment":                {"site", "location", "position", "polyp site", "lesion site", "polyp location", "lesion location", "colonic segment"},
	"size_mm":                {"size", "polyp size", "lesion size", "diameter", "estimated size", "size estimate"},
	"paris":                  {"morphology", "paris class", "paris classification", "shape", "polyp shape"},
	"optical_class":          {"optical diagnosis", "optical dx", "optical", "prediction", "endoscopic diagnosis", "characterisation", "optical call"},
	"confidence":             {"confidence level", "certainty", "optical confidence", "prediction confidence"},
	"imaging":                {"imaging mode", "light", "modality", "imaging used", "enhancement"},
	"aid_class":              {"cadx", "ai class", "cad class", "cadx class", "ai characterisation"},
	"resection":              {"removal", "technique", "removal method", "polypectomy", "resection method", "removal technique"},
	"retrieved":              {"recovered", "retrieval", "polyp retrieved"},
	"sent_to_pathology":      {"sent to lab", "to lab", "sent to histology", "histology sent", "sent", "pathology sent", "submitted", "sent for histology"},
	"histology":              {"diagnosis", "pathology", "histology result", "path result", "final diagnosis", "histopathology", "path diagnosis"},
	"dysplasia":              {"grade", "dysplasia grade", "grade of dysplasia"},
	"tattoo":                 {"tattooed", "ink", "tattoo placed"},
	"reported_on":            {"reported", "report date", "date reported", "authorised", "authorised on", "result date", "date of report"},
}

// codeWords are the common words for each code, by field.
var codeWords = map[string]map[string][]string{
	"sex": {
		"F": {"female", "woman", "f"}, "M": {"male", "man", "m"},
		"X": {"other", "non binary"}, "U": {"unknown", "not known", "not stated"},
	},
	"indication": {
		"screening":           {"bowel screening", "screening programme", "screening program", "bcsp", "population screening"},
		"stool_test_positive": {"fit", "fit positive", "positive fit", "fob", "fob positive", "fobt positive", "positive fobt", "positive stool test", "qfit positive"},
		"surveillance":        {"post polypectomy surveillance", "polyp surveillance", "polyp follow up", "follow up"},
		"diagnostic":          {"symptomatic", "symptoms", "change in bowel habit", "rectal bleeding", "anaemia", "iron deficiency anaemia", "ida", "abdominal pain", "diarrhoea"},
		"therapeutic":         {"therapy", "treatment", "planned polypectomy", "planned emr"},
	},
	"setting": {
		"outpatient": {"op", "out patient", "day case", "elective"},
		"inpatient":  {"ip", "in patient", "emergency", "ward"},
	},
	"exclusion": {
		"none":                {"no", "nil", "not excluded"},
		"ibd":                 {"inflammatory bowel disease", "crohns", "crohn s", "ulcerative colitis", "uc"},
		"hereditary_syndrome": {"hereditary", "lynch", "lynch syndrome", "fap", "polyposis"},
		"known_neoplasm":      {"known cancer", "known tumour", "staging"},
	},
	"extent": {
		"caecum":         {"cecum", "caecal pole", "appendix orifice", "complete"},
		"terminal_ileum": {"ti", "ileum", "ileal intubation"},
		"anastomosis":    {"ileocolic anastomosis", "colonic anastomosis"},
		"incomplete":     {"failed", "not reached", "incomplete colonoscopy"},
	},
	"incomplete_reason": {
		"poor_prep":      {"poor prep", "poor bowel prep", "inadequate prep", "inadequate bowel prep", "bowel prep"},
		"obstruction":    {"stricture", "obstructing", "obstructing lesion"},
		"severe_colitis": {"colitis"},
		"discomfort":     {"pain", "patient discomfort", "not tolerated", "poor tolerance"},
		"looping":        {"loop", "loops"},
	},
	"supervision": {
		"independent":         {"unsupervised", "alone"},
		"supervised_hands_on": {"hands on", "trainer took over", "trainer took scope"},
		"supervised_observed": {"observed", "trainer present", "trainer watched"},
	},
	"adverse_event": {
		"none":                          {"no", "nil", "none recorded"},
		"perforation":                   {"perf"},
		"bleeding_needing_intervention": {"bleeding", "bleed", "haemorrhage", "post polypectomy bleeding"},
	},
	"segment": {
		"caecum":          {"cecum", "caecal"},
		"ascending":       {"ascending colon", "asc colon", "asc", "right colon"},
		"hepatic_flexure": {"hep flexure", "hepatic", "hf"},
		"transverse":      {"transverse colon", "trans colon", "tc"},
		"splenic_flexure": {"spl flexure", "splenic", "sf"},
		"descending":      {"descending colon", "desc colon", "desc"},
		"sigmoid":         {"sigmoid colon", "sig", "sig colon"},
		"rectum":          {"rectal"},
	},
	"paris": {
		"0-Ip": {"ip", "pedunculated"}, "0-Isp": {"isp", "subpedunculated"}, "0-Is": {"is", "sessile"},
		"0-IIa": {"iia", "flat elevated", "slightly elevated"}, "0-IIb": {"iib", "flat"},
		"0-IIc": {"iic", "depressed", "slightly depressed"}, "0-III": {"iii", "excavated"},
	},
	"optical_class": {
		"adenoma":       {"adenomatous", "neoplastic"},
		"hyperplastic":  {"hp", "hyperplastic polyp"},
		"ssl":           {"sessile serrated", "sessile serrated lesion", "ssa", "sessile serrated adenoma"},
		"deep_invasive": {"invasive", "deep submucosal invasion", "cancer"},
		"uncertain":     {"unsure", "not sure", "unknown", "indeterminate"},
	},
	"confidence": {"high": {"high confidence", "confident", "h"}, "low": {"low confidence", "not confident", "l"}},
	"imaging": {
		"white_light":          {"wli", "wl", "white light imaging", "hd white light"},
		"nbi":                  {"narrow band", "narrow band imaging"},
		"other_virtual_chromo": {"bli", "lci", "i scan", "iscan", "fice", "virtual chromoendoscopy"},
		"dye_chromo":           {"dye", "dye spray", "indigo carmine", "methylene blue", "chromoendoscopy"},
	},
	"resection": {
		"none":          {"not removed", "left in situ", "no"},
		"cold_snare":    {"csp", "cold snare polypectomy"},
		"hot_snare":     {"hsp", "hot snare polypectomy"},
		"cold_forceps":  {"cold biopsy forceps", "cold biopsy", "forceps"},
		"emr_en_bloc":   {"en bloc emr", "emr"},
		"emr_piecemeal": {"piecemeal emr", "pemr", "piecemeal"},
		"biopsy_only":   {"biopsy", "biopsied"},
	},
	"histology": {
		"pending":               {"awaited", "awaiting", "not yet reported", "to follow"},
		"tubular_adenoma":       {"ta", "tubular"},
		"tubulovillous_adenoma": {"tva", "tubulovillous"},
		"villous_adenoma":       {"va", "villous"},
		"ssl":                   {"sessile serrated lesion", "ssa", "sessile serrated adenoma", "ssp", "sessile serrated polyp"},
		"ssl_dysplasia":         {"ssl with dysplasia", "ssld"},
		"tsa":                   {"traditional serrated adenoma"},
		"hyperplastic":          {"hp", "hyperplastic polyp"},
		"adenocarcinoma":        {"cancer", "carcinoma", "malignant", "invasive carcinoma"},
		"normal":                {"normal mucosa", "no abnormality", "nad"},
		"inflammatory":          {"inflammatory polyp"},
	},
	"dysplasia": {
		"none": {"no dysplasia", "without dysplasia", "nil", "negative for dysplasia"},
		"low":  {"lgd", "low grade", "low grade dysplasia"},
		"high": {"hgd", "high grade", "high grade dysplasia"},
	},
}

// Words for yes, no and not applicable.
var (
	yesWords = []string{"y", "yes", "true", "1", "on", "done", "present", "positive", "✓"}
	noWords  = []string{"n", "no", "false", "0", "off", "not done", "absent", "negative"}
	naWords  = []string{"n/a", "na", "not applicable", "n a"}
)
