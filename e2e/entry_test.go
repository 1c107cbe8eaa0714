package e2e

import (
	"fmt"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestFirstRunAndDemo starts the program where there is no database yet:
// the first-run screen offers a demo unit and an empty one; the role
// drop-down (which once ended the program when clicked) opens and takes a
// choice; a demo unit of 300 cases is made and opened, and the command
// line finds it whole.
func TestFirstRunAndDemo(t *testing.T) {
	need(t)
	u := newUnit(t, 0)
	d := newDisplay(t, 1024, 700)
	s := d.start(u)
	s.waitFor("the first-run screen", func(sc screen) bool { return sc.has("Welcome to polypledger") })
	s.screenshot("first-run-1024x700")

	s.choose("Role", "Trainee")
	s.choose("Role", "Endoscopist")

	s.fillEntry("Number of cases", "300")
	s.click("button", "Open a demo unit")
	s.waitFor("the demo unit's screens", func(sc screen) bool {
		return sc.has("Larkfield Endoscopy Unit") && sc.has("Click a case to open it")
	})
	s.waitFor("the case list's count", func(sc screen) bool { return sc.has("300 cases.") })
	s.stop()

	u.cli("check", "--db", u.db)
	if n := len(u.export("procedures")); n != 300 {
		t.Errorf("the demo unit holds %d procedures, want 300", n)
	}
}

// caseValues are the values entered for the test case, by the label beside
// each field; drop-downs take the option's words.
func caseValues(id, date string) map[string]string {
	return map[string]string{
		"Procedure number":                   id,
		"Date":                               date,
		"Endoscopist":                        "E01 – Dr Maren Okonkwo-Hale",
		"Patient":                            "RX 90017",
		"Age":                                "61",
		"Sex":                                "Female",
		"Reason for the test":                "Screening",
		"Setting":                            "Outpatient",
		"Excluded from detection figures":    "None",
		"Furthest point reached":             "Caecum",
		"Photo of the caecum":                "Yes",
		"Withdrawal time":                    "9:15",
		"Boston score, right colon":          "3 – whole mucosa seen well",
		"Boston score, transverse":           "2 – minor residue, mucosa seen well",
		"Boston score, left colon":           "2 – minor residue, mucosa seen well",
		"Rectal retroversion":                "Yes",
		"Computer-aided detection used":      "No",
		"Midazolam (mg)":                     "2.5",
		"Fentanyl (µg)":                      "50",
		"Propofol":                           "No",
		"Comfort (nurse's score)":            "2 – minimal discomfort",
		"Complication within 30 days":        "None",
		"Next colonoscopy advised":           "3 years",
		"Trainee holding the scope":          "(no trainee)",
		"Supervision":                        "(not recorded)",
		"Trainee reached the caecum unaided": "(not recorded)",
	}
}

// lesionValues are the two lesions, by the label beside each field.
func lesionValues() []map[string]string {
	return []map[string]string{{
		"Segment":           "Sigmoid colon",
		"Size (mm)":         "4",
		"Paris class":       "0-Is (sessile)",
		"Optical diagnosis": "Adenoma",
		"Confidence":        "High",
		"Imaging used":      "NBI",
		"Resection":         "Cold snare",
		"Retrieved":         "Yes",
		"Sent to pathology": "Yes",
	}, {
		"Segment":           "Ascending colon",
		"Size (mm)":         "12",
		"Paris class":       "0-IIa (slightly raised)",
		"Optical diagnosis": "Adenoma",
		"Confidence":        "Low",
		"Imaging used":      "White light",
		"Resection":         "EMR in one piece",
		"Retrieved":         "Yes",
		"Sent to pathology": "Yes",
		"Tattoo":            "No",
	}}
}

// checkStoredCase reads the case and its lesions back with the command
// line's export and compares every value entered.
func checkStoredCase(t *testing.T, u *unit, id, date string) {
	t.Helper()
	p, err := record(u.export("procedures"), "procedure_id", id)
	if err != nil {
		t.Fatalf("the case entered is not in the export: %v", err)
	}
	want := map[string]string{
		"performed_on": date, "operator_id": "E01", "trainee_id": "", "age": "61", "sex": "F", "indication": "screening",
		"setting": "outpatient", "exclusion": "none", "extent": "caecum", "caecal_photo": "yes", "withdrawal_seconds": "555",
		"bbps_right": "3", "bbps_transverse": "2", "bbps_left": "2", "retroversion": "yes", "detection_aid": "no",
		"midazolam_mg": "2.5", "fentanyl_ug": "50", "propofol": "no", "comfort": "2", "adverse_event": "none",
		"recommended_interval": "3y",
	}
	for col, v := range want {
		if p[col] != v {
			t.Errorf("case %s: %s stored as %q, entered %q", id, col, p[col], v)
		}
	}
	if !strings.HasPrefix(p["patient_ref"], "psn:") || strings.Contains(p["patient_ref"], "90017") {
		t.Errorf("case %s: patient stored as %q, want a pseudonym", id, p["patient_ref"])
	}
	var lesions []map[string]string
	for _, l := range u.export("lesions") {
		if l["procedure_id"] == id {
			lesions = append(lesions, l)
		}
	}
	wantLesions := []map[string]string{
		{"lesion_no": "1", "segment": "sigmoid", "size_mm": "4", "paris": "0-Is", "optical_class": "adenoma", "confidence": "high",
			"imaging": "nbi", "resection": "cold_snare", "retrieved": "yes", "sent_to_pathology": "yes", "histology": "pending"},
		{"lesion_no": "2", "segment": "ascending", "size_mm": "12", "paris": "0-IIa", "optical_class": "adenoma", "confidence": "low",
			"imaging": "white_light", "resection": "emr_en_bloc", "retrieved": "yes", "sent_to_pathology": "yes", "histology": "pending",
			"tattoo": "no"},
	}
	if len(lesions) != len(wantLesions) {
		t.Fatalf("case %s has %d lesions stored, 2 entered", id, len(lesions))
	}
	for i, w := range wantLesions {
		for col, v := range w {
			if lesions[i][col] != v {
				t.Errorf("case %s lesion %d: %s stored as %q, entered %q", id, i+1, col, lesions[i][col], v)
			}
		}
	}
}

// yesterday is a date that is never in the future.
func yesterday() string { return time.Now().AddDate(0, 0, -1).Format("2006-01-02") }

// TestCaseEnteredWithTheMouse enters a full case with two lesions by
// clicking every field and drop-down, and checks what the command line
// exports.
func TestCaseEnteredWithTheMouse(t *testing.T) {
	need(t)
	u := newUnit(t, 200)
	d := newDisplay(t, 1920, 1080)
	s := d.start(u)
	s.showScreen(2, "The procedure")
	date := yesterday()
	s.mouseFill(caseValues("E2E-MOUSE", date))
	for i, lesion := range lesionValues() {
		s.click("button", "Add a lesion")
		s.waitItem("button", "Keep this lesion  (Enter)")
		s.mouseFill(lesion)
		s.click("button", "Keep this lesion  (Enter)")
		s.waitItem("button", fmt.Sprintf("Edit lesion %d", i+1))
	}
	s.screenshot("entry-filled-1920x1080")
	s.click("button", "Save the case  (Enter)")
	s.waitFor("the case to be saved", func(sc screen) bool { return sc.has("Saved case E2E-MOUSE") })
	s.stop()
	checkStoredCase(t, u, "E2E-MOUSE", date)
}

// mouseFill fills every field on screen named in values, in screen order,
// clicking each field and drop-down.
func (s *session) mouseFill(values map[string]string) {
	s.t.Helper()
	for _, it := range s.screen().Items {
		v, ok := values[it.Name]
		if !ok {
			continue
		}
		switch it.Kind {
		case "entry":
			s.fillEntry(it.Name, v)
		case "select":
			s.choose(it.Name, v)
		}
	}
}

// TestCaseEnteredWithTheKeyboard enters the same case with the keyboard
// only: Tab from field to field (checking that the keyboard is where it
// should be), typing into fields, letters and digits in drop-downs, Enter
// on the lesion button and in the lesion form, Enter to save.
func TestCaseEnteredWithTheKeyboard(t *testing.T) {
	need(t)
	u := newUnit(t, 200)
	d := newDisplay(t, 1024, 700)
	s := d.start(u)
	s.showScreen(2, "The procedure")
	date := yesterday()
	s.keyboardFill(caseValues("E2E-KEYS", date), "Add a lesion")
	for i, lesion := range lesionValues() {
		s.key("Return") // on "Add a lesion"
		s.waitFor("the lesion form", func(sc screen) bool {
			it, ok := sc.focused()
			return ok && it.Name == "Segment"
		})
		s.keyboardFill(lesion, "Keep this lesion  (Enter)")
		if i == 0 {
			s.screenshot("lesion-1024x700")
		}
		s.key("Return")
		s.waitItem("button", fmt.Sprintf("Edit lesion %d", i+1))
		s.tabTo("Add a lesion")
	}
	s.tabTo("Save the case  (Enter)")
	s.key("Return")
	s.waitFor("the case to be saved", func(sc screen) bool { return sc.has("Saved case E2E-KEYS") })
	s.stop()
	checkStoredCase(t, u, "E2E-KEYS", date)
}

// keyboardFill walks the form with Tab until the item named last has the
// keyboard, filling each field found in values: text is typed over what
// a field holds, a drop-down is stepped with the first letter (or digit)
// of the option wanted until it shows it.
func (s *session) keyboardFill(values map[string]string, last string) {
	s.t.Helper()
	filled := map[string]bool{}
	it, _ := s.screen().focused()
	for step := 0; step < 120; step++ {
		if it.Name == last {
			for name := range values {
				if !filled[name] {
					s.t.Fatalf("the keyboard never reached %q", name)
				}
			}
			return
		}
		v, want := values[it.Name]
		switch {
		case want && it.Kind == "entry":
			s.key("ctrl+a")
			s.typeText(v)
			s.waitFor(fmt.Sprintf("%q to hold %q", it.Name, v), func(sc screen) bool {
				f, _ := sc.focused()
				return f.Name == it.Name && f.Text == v
			})
			filled[it.Name] = true
		case want && it.Kind == "select":
			s.keyChoose(it.Name, v)
			filled[it.Name] = true
		}
		it = s.tab(it)
	}
	s.t.Fatalf("Tab never reached %q", last)
}

// tab presses Tab and waits for the keyboard to leave from, returning the
// item that has it then.
func (s *session) tab(from item) item {
	s.t.Helper()
	s.key("Tab")
	var to item
	s.waitFor("Tab to move on from "+strconv.Quote(from.Name), func(sc screen) bool {
		var ok bool
		to, ok = sc.focused()
		return ok && (to.Name != from.Name || to.X != from.X || to.Y != from.Y)
	})
	return to
}

// keyChoose steps the focused drop-down with the first letter or digit of
// option until it shows option, waiting after each key for the drop-down
// to show its next choice.
func (s *session) keyChoose(name, option string) {
	s.t.Helper()
	key := "Left" // the bracketed first option
	if !strings.HasPrefix(option, "(") {
		r := []rune(option)[0]
		key = strings.ToLower(string(r))
	}
	var seen []string
	it, _ := s.screen().focused()
	for i := 0; i < 12; i++ {
		if it.Name == name && it.Text == option {
			return
		}
		seen = append(seen, it.Text)
		before := it.Text
		s.key(key)
		s.waitFor(fmt.Sprintf("%q to change from %q", name, before), func(sc screen) bool {
			it, _ = sc.focused()
			return it.Text != before
		})
	}
	s.t.Fatalf("the drop-down %q never showed %q by keyboard; it showed in turn %q", name, option, seen)
}

// tabTo presses Tab until the item named name has the keyboard.
func (s *session) tabTo(name string) {
	s.t.Helper()
	it, ok := s.screen().focused()
	for i := 0; i < 120; i++ {
		if ok && it.Name == name {
			return
		}
		it, ok = s.tab(it), true
	}
	s.t.Fatalf("Tab never reached %q", name)
}

// TestPathologyResultInTheInbox enters a histology result for the oldest
// waiting lesion in the pathology inbox and checks the stored lesion.
func TestPathologyResultInTheInbox(t *testing.T) {
	need(t)
	u := newUnit(t, 400)
	d := newDisplay(t, 1024, 700)
	s := d.start(u)
	sc := s.showScreen(3, "Choose the histology")
	// The first case heading and the lesion line under it name the lesion.
	var caseID string
	var lesionNo int
	for i, it := range sc.Items {
		if it.Kind == "label" && strings.HasPrefix(it.Name, "Case ") && caseID == "" {
			caseID = strings.Fields(it.Name)[1]
			for _, next := range sc.Items[i+1:] {
				if next.Kind == "label" {
					lesionNo, _ = strconv.Atoi(strings.TrimSuffix(strings.Fields(next.Name)[0], "."))
					break
				}
			}
		}
	}
	if caseID == "" || lesionNo == 0 {
		t.Fatal("the inbox shows no waiting lesion")
	}
	waiting := func(sc screen) int {
		for _, it := range sc.Items {
			if it.Kind == "label" && strings.Contains(it.Name, " lesions are waiting for histology") {
				n, _ := strconv.Atoi(strings.Fields(it.Name)[0])
				return n
			}
		}
		return -1
	}
	before := waiting(sc)
	s.choose("histology…", "Tubular adenoma")
	s.choose("dysplasia…", "Low grade")
	s.click("button", "Save result")
	s.waitFor("one lesion fewer in the inbox", func(sc screen) bool { return waiting(sc) == before-1 })
	s.stop()
	for _, l := range u.export("lesions") {
		if l["procedure_id"] == caseID && l["lesion_no"] == strconv.Itoa(lesionNo) {
			if l["histology"] != "tubular_adenoma" || l["dysplasia"] != "low" {
				t.Errorf("lesion %s/%d stored as %s, %s; entered tubular adenoma, low grade", caseID, lesionNo, l["histology"], l["dysplasia"])
			}
			return
		}
	}
	t.Errorf("lesion %s/%d is not in the export", caseID, lesionNo)
}
