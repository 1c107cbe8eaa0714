package e2e

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

var (
	// binary is the polypledger program built for the suite.
	binary string
	// skipWhy says why the suite cannot run here ("" when it can).
	skipWhy string
	// artefacts is the folder the screenshots are kept in (dist/e2e).
	artefacts string
)

func TestMain(m *testing.M) {
	for _, tool := range []struct{ cmd, pkg string }{{"Xvfb", "xvfb"}, {"xdotool", "xdotool"}, {"import", "imagemagick"}} {
		if _, err := exec.LookPath(tool.cmd); err != nil {
			skipWhy = fmt.Sprintf("%s is not installed (Debian package %s; scripts/setup-debian --test installs it), so the app cannot be driven in a real window", tool.cmd, tool.pkg)
			break
		}
	}
	code := 0
	dir, err := os.MkdirTemp("", "polypledger-e2e-")
	if err == nil && skipWhy == "" {
		binary = filepath.Join(dir, "polypledger")
		build := exec.Command("go", "build", "-o", binary, "..")
		build.Stdout, build.Stderr = os.Stderr, os.Stderr
		if err = build.Run(); err != nil {
			fmt.Fprintln(os.Stderr, "e2e: building polypledger:", err)
			code = 1
		}
		artefacts, _ = filepath.Abs(filepath.Join("..", "dist", "e2e"))
		if err := os.MkdirAll(artefacts, 0o755); err != nil {
			fmt.Fprintln(os.Stderr, "e2e:", err)
			code = 1
		}
	}
	if code == 0 {
		code = m.Run()
	}
	if dir != "" {
		os.RemoveAll(dir)
	}
	os.Exit(code)
}

// need skips a test where the suite cannot run.
func need(t *testing.T) {
	t.Helper()
	if skipWhy != "" {
		t.Skip(skipWhy)
	}
}

// unit is a folder with a configuration folder (and unit key) of its own.
type unit struct {
	t    *testing.T
	dir  string
	home string
	db   string
}

// newUnit makes an empty folder for a unit; with demo > 0 it holds a demo
// unit of that many invented cases, made by the command line.
func newUnit(t *testing.T, demo int) *unit {
	t.Helper()
	dir := t.TempDir()
	u := &unit{t: t, dir: dir, home: filepath.Join(dir, "home"), db: filepath.Join(dir, "unit.db")}
	// A desktop's own folders, as a desktop session defines them, for the
	// file dialogs' list of places.
	dirs := "# written by the end-to-end tests\n"
	for _, d := range []string{"Desktop", "Documents", "Downloads", "Music", "Pictures", "Videos"} {
		if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
		key := strings.ToUpper(d)
		if d == "Downloads" {
			key = "DOWNLOAD"
		}
		dirs += fmt.Sprintf("XDG_%s_DIR=\"$HOME/%s\"\n", key, d)
	}
	if err := os.MkdirAll(filepath.Join(dir, ".config"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, ".config", "user-dirs.dirs"), []byte(dirs), 0o644); err != nil {
		t.Fatal(err)
	}
	if demo > 0 {
		u.cli("demo", "--db", u.db, "--procedures", strconv.Itoa(demo))
	}
	return u
}

// env is the environment every program of the unit runs with: its own
// configuration folder, and a home folder for the toolkit's preferences.
func (u *unit) env(extra ...string) []string {
	env := append(os.Environ(), "POLYPLEDGER_HOME="+u.home, "HOME="+u.dir, "XDG_CONFIG_HOME="+filepath.Join(u.dir, ".config"))
	return append(env, extra...)
}

// cli runs the command line and returns its standard output; any failure
// fails the test.
func (u *unit) cli(args ...string) string {
	u.t.Helper()
	cmd := exec.Command(binary, args...)
	cmd.Env = u.env()
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		u.t.Fatalf("polypledger %s: %v\n%s", strings.Join(args, " "), err, errb.String())
	}
	return out.String()
}

// export returns the records of one kind as the command line exports
// them, keyed by column name.
func (u *unit) export(kind string) []map[string]string {
	u.t.Helper()
	out := filepath.Join(u.dir, fmt.Sprintf("export-%s-%d.csv", kind, time.Now().UnixNano()))
	u.cli("export", "--db", u.db, "--kind", kind, "--out", out)
	f, err := os.Open(out)
	if err != nil {
		u.t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil || len(rows) == 0 {
		u.t.Fatalf("export %s: %v", kind, err)
	}
	var recs []map[string]string
	for _, r := range rows[1:] {
		m := map[string]string{}
		for i, col := range rows[0] {
			m[col] = r[i]
		}
		recs = append(recs, m)
	}
	return recs
}

// display is a private X server (Xvfb) with a screen a little larger than
// the window it is for, so that anything drawn outside the window shows.
type display struct {
	t    *testing.T
	name string
	w, h int
}

// margin is how far the screen reaches beyond the window on the right and
// at the bottom.
const margin = 64

// newDisplay starts Xvfb for a window of w × h pixels.
func newDisplay(t *testing.T, w, h int) *display {
	t.Helper()
	r, wr, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	cmd := exec.Command("Xvfb", "-displayfd", "3", "-screen", "0", fmt.Sprintf("%dx%dx24", w+margin, h+margin), "-nolisten", "tcp", "-br")
	cmd.ExtraFiles = []*os.File{wr}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	wr.Close()
	t.Cleanup(func() {
		cmd.Process.Signal(syscall.SIGTERM)
		cmd.Wait()
	})
	line := make(chan string, 1)
	go func() {
		s, _ := bufio.NewReader(r).ReadString('\n')
		line <- strings.TrimSpace(s)
	}()
	select {
	case n := <-line:
		if n == "" {
			t.Fatal("Xvfb did not start")
		}
		return &display{t: t, name: ":" + n, w: w, h: h}
	case <-time.After(20 * time.Second):
		t.Fatal("Xvfb did not say which display it opened within 20 s")
	}
	return nil
}

// session is the program running on a display.
type session struct {
	t      *testing.T
	u      *unit
	d      *display
	cmd    *exec.Cmd
	log    string
	layout string
	wid    string
	seq    int
	exited chan struct{}
	err    error
}

// start runs the desktop program on the unit's database and waits for its
// window, sized to fill the display's window area.
func (d *display) start(u *unit, env ...string) *session {
	d.t.Helper()
	s := &session{t: d.t, u: u, d: d, log: filepath.Join(u.dir, fmt.Sprintf("app-%d.log", time.Now().UnixNano())),
		layout: filepath.Join(u.dir, "layout.json"), exited: make(chan struct{})}
	os.Remove(s.layout)
	logf, err := os.Create(s.log)
	if err != nil {
		d.t.Fatal(err)
	}
	s.cmd = exec.Command(binary, "--db", u.db)
	s.cmd.Env = u.env(append([]string{"DISPLAY=" + d.name, "POLYPLEDGER_LAYOUT_FILE=" + s.layout}, env...)...)
	s.cmd.Stdout, s.cmd.Stderr = logf, logf
	if err := s.cmd.Start(); err != nil {
		d.t.Fatal(err)
	}
	go func() {
		s.err = s.cmd.Wait()
		logf.Close()
		close(s.exited)
	}()
	d.t.Cleanup(func() {
		select {
		case <-s.exited:
		default:
			s.cmd.Process.Kill()
			<-s.exited
		}
		if d.t.Failed() {
			b, _ := os.ReadFile(s.log)
			d.t.Logf("the program's output:\n%s", b)
		}
	})
	ids := strings.Fields(s.xdoOut(30*time.Second, "search", "--sync", "--name", "^polypledger"))
	if len(ids) == 0 {
		d.t.Fatal("the program's window did not appear")
	}
	s.wid = ids[0]
	s.resize()
	// The pointer in the window gives it the keyboard (there is no window
	// manager on the display).
	s.xdo("mousemove", "--window", s.wid, "5", strconv.Itoa(d.h/2))
	return s
}

// resize sizes the window to the display's window area, as a window
// manager maximising it would, and fails when the program will not fit
// (its minimum size is larger).
func (s *session) resize() {
	s.t.Helper()
	want := fmt.Sprintf("WIDTH=%d\nHEIGHT=%d", s.d.w, s.d.h)
	var geo string
	var canvas screen
	for i := 0; i < 40; i++ {
		s.xdo("windowsize", s.wid, strconv.Itoa(s.d.w), strconv.Itoa(s.d.h))
		geo = s.xdoOut(5*time.Second, "getwindowgeometry", "--shell", s.wid)
		if strings.Contains(geo, want) {
			// The X window has its size; the toolkit may still lay out
			// at its first size (it can apply that after this resize
			// when the machine is busy), so wait until the program's own
			// canvas says it has the new size, and resize again if not.
			var ok bool
			canvas, ok = s.poll(3*time.Second, func(sc screen) bool {
				return int(sc.Width+0.5) == s.d.w && int(sc.Height+0.5) == s.d.h
			})
			if ok {
				return
			}
		}
		time.Sleep(150 * time.Millisecond)
	}
	s.t.Fatalf("the window will not take %d × %d; it stays at\n%s\nand the program lays out at %.0f × %.0f", s.d.w, s.d.h, geo, canvas.Width, canvas.Height)
}

// xdo runs xdotool on the display.
func (s *session) xdo(args ...string) {
	s.t.Helper()
	s.xdoOut(20*time.Second, args...)
}

func (s *session) xdoOut(timeout time.Duration, args ...string) string {
	s.t.Helper()
	s.alive()
	ctx, cancel := context.WithTimeout(context.Background(), timeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, "xdotool", args...)
	cmd.Env = append(os.Environ(), "DISPLAY="+s.d.name)
	out, err := cmd.CombinedOutput()
	if err != nil {
		s.t.Fatalf("xdotool %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	return string(out)
}

// alive fails the test at once when the program has ended by itself.
func (s *session) alive() {
	s.t.Helper()
	select {
	case <-s.exited:
		b, _ := os.ReadFile(s.log)
		s.t.Fatalf("the program ended by itself (%v):\n%s", s.err, b)
	default:
	}
}

// forbidden are words in the program's output that fail a test: a crash,
// a recovered panic or an error the toolkit logged.
var forbidden = regexp.MustCompile(`(?i)internal error|panic|fatal error|goroutine \d+|Fyne error|nil pointer`)

// stop ends the program as closing its window does (SIGTERM, which the
// toolkit turns into Quit) and checks that it ended cleanly with nothing
// alarming in its output.
func (s *session) stop() {
	s.t.Helper()
	s.alive()
	s.cmd.Process.Signal(syscall.SIGTERM)
	select {
	case <-s.exited:
	case <-time.After(20 * time.Second):
		s.t.Fatal("the program did not end within 20 s of being asked to")
	}
	if s.err != nil {
		s.t.Errorf("the program ended with %v", s.err)
	}
	s.checkLog()
}

// toolkitPrefsRace is the one toolkit message let through: at exit the
// toolkit saves its own preferences file (it holds nothing of ours: the
// file dialogs' last folder) while its file watcher reads it back half
// written, and it logs the empty read. It says nothing about the program.
var toolkitPrefsRace = regexp.MustCompile(`(?m)^.*Fyne error:  Preferences load error:\n.*Cause: EOF\n.*At: .*fyne/v2@[^/]+/app/preferences\.go:\d+\n`)

// checkLog fails the test when the program's output holds a crash or an
// error.
func (s *session) checkLog() {
	s.t.Helper()
	b, _ := os.ReadFile(s.log)
	b = toolkitPrefsRace.ReplaceAll(b, nil)
	if loc := forbidden.FindIndex(b); loc != nil {
		s.t.Errorf("the program's output holds %q:\n%s", b[loc[0]:loc[1]], b)
	}
}

// item is one thing on screen, as the layout file gives it.
type item struct {
	Kind     string   `json:"kind"`
	Name     string   `json:"name"`
	Text     string   `json:"text"`
	Options  []string `json:"options"`
	X, Y     float64
	W, H     float64
	Disabled bool `json:"disabled"`
	Focused  bool `json:"focused"`
}

// screen is the whole layout file.
type screen struct {
	Seq    int     `json:"seq"`
	Title  string  `json:"title"`
	Width  float64 `json:"width"`
	Height float64 `json:"height"`
	Items  []item  `json:"items"`
}

// find returns the first item of kind whose name is name (or starts with
// it, when name ends with "…*").
func (sc screen) find(kind, name string) (item, bool) {
	prefix, isPrefix := strings.CutSuffix(name, "*")
	for _, it := range sc.Items {
		if it.Kind != kind {
			continue
		}
		if it.Name == name || (isPrefix && strings.HasPrefix(it.Name, prefix)) {
			return it, true
		}
	}
	return item{}, false
}

// focused returns the item that has the keyboard.
func (sc screen) focused() (item, bool) {
	for _, it := range sc.Items {
		if it.Focused {
			return it, true
		}
	}
	return item{}, false
}

// has reports whether a label starting with text is on screen.
func (sc screen) has(text string) bool {
	for _, it := range sc.Items {
		if it.Kind == "label" && strings.HasPrefix(it.Name, text) {
			return true
		}
	}
	return false
}

// screen asks the program for a fresh layout file and reads it.
func (s *session) screen() screen {
	s.t.Helper()
	s.alive()
	if err := s.cmd.Process.Signal(syscall.SIGUSR1); err != nil {
		s.t.Fatal(err)
	}
	deadline := time.Now().Add(15 * time.Second)
	for time.Now().Before(deadline) {
		b, err := os.ReadFile(s.layout)
		var sc screen
		if err == nil && json.Unmarshal(b, &sc) == nil && sc.Seq > s.seq {
			s.seq = sc.Seq
			return sc
		}
		time.Sleep(15 * time.Millisecond)
	}
	s.alive()
	s.t.Fatal("the program wrote no layout file within 15 s of being asked")
	return screen{}
}

// poll reads the screen until cond holds or timeout passes; it returns the
// last screen read and whether cond held.
func (s *session) poll(timeout time.Duration, cond func(screen) bool) (screen, bool) {
	s.t.Helper()
	deadline := time.Now().Add(timeout)
	var sc screen
	for {
		sc = s.screen()
		if cond(sc) {
			return sc, true
		}
		if time.Now().After(deadline) {
			return sc, false
		}
		time.Sleep(60 * time.Millisecond)
	}
}

// waitFor polls the screen until cond holds, failing after a minute with
// what was awaited and what is on screen.
func (s *session) waitFor(what string, cond func(screen) bool) screen {
	s.t.Helper()
	sc, ok := s.poll(time.Minute, cond)
	if ok {
		return sc
	}
	var names []string
	for _, it := range sc.Items {
		line := it.Kind + " " + strconv.Quote(it.Name)
		if it.Text != "" {
			line += " holding " + strconv.Quote(it.Text)
		}
		if it.Focused {
			line += " (has the keyboard)"
		}
		names = append(names, line)
	}
	s.t.Fatalf("waited a minute for %s; on screen:\n%s", what, strings.Join(names, "\n"))
	return sc
}

// waitItem waits for an enabled item of kind and name, scrolling with the
// mouse wheel to bring it into view as a person would, and returns it.
func (s *session) waitItem(kind, name string) item {
	s.t.Helper()
	var it item
	s.waitFor(kind+" "+strconv.Quote(name), func(sc screen) bool {
		var ok bool
		it, ok = sc.find(kind, name)
		if !ok || it.Disabled {
			return false
		}
		wheel := ""
		switch {
		case it.Y+it.H > float64(s.d.h)-40: // below the fold (and the status line)
			wheel = "5"
		case it.Y < 0:
			wheel = "4"
		default:
			return true
		}
		s.xdo("mousemove", "--window", s.wid, strconv.Itoa(s.d.w/2), strconv.Itoa(s.d.h/2), "click", "--repeat", "3", wheel)
		return false
	})
	return it
}

// clickAt clicks the middle of an item.
func (s *session) clickAt(it item) {
	s.t.Helper()
	x, y := int(it.X+it.W/2), int(it.Y+it.H/2)
	s.xdo("mousemove", "--window", s.wid, strconv.Itoa(x), strconv.Itoa(y), "click", "1")
}

// click waits for an item and clicks it.
func (s *session) click(kind, name string) {
	s.t.Helper()
	s.clickAt(s.waitItem(kind, name))
}

// key presses keys (xdotool names: Tab, Return, alt+2, ctrl+a).
func (s *session) key(keys ...string) {
	s.t.Helper()
	s.xdo(append([]string{"key", "--delay", "40"}, keys...)...)
}

// typeText types text as a person would.
func (s *session) typeText(text string) {
	s.t.Helper()
	s.xdo("type", "--delay", "25", text)
}

// fillEntry clicks a field, selects what it holds and types text over it.
// It types only once the field has the keyboard: a click on a text field
// takes effect only after the toolkit's double-click time.
func (s *session) fillEntry(name, text string) {
	s.t.Helper()
	s.click("entry", name)
	s.waitFor(fmt.Sprintf("the field %q to have the keyboard", name), func(sc screen) bool {
		it, ok := sc.focused()
		return ok && it.Kind == "entry" && it.Name == name
	})
	s.key("ctrl+a")
	s.typeText(text)
	s.waitFor(fmt.Sprintf("the field %q to hold %q", name, text), func(sc screen) bool {
		it, ok := sc.find("entry", name)
		return ok && it.Text == text
	})
}

// choose opens a drop-down with the mouse and clicks the option.
func (s *session) choose(name, option string) {
	s.t.Helper()
	s.click("select", name)
	s.click("option", option)
	s.waitFor(fmt.Sprintf("the drop-down %q to show %q", name, option), func(sc screen) bool {
		it, ok := sc.find("select", name)
		_, open := sc.find("option", option)
		return ok && it.Text == option && !open
	})
}

// showScreen switches to screen n (1–6) with its Alt key and waits for a
// label that only it shows. A key pressed while the program is still
// building its screens is lost, as it would be for a person; the key is
// pressed again until the screen shows.
func (s *session) showScreen(n int, label string) screen {
	s.t.Helper()
	shown := func(sc screen) bool { return sc.has(label) }
	for try := 0; try < 10; try++ {
		s.key(fmt.Sprintf("alt+%d", n))
		if sc, ok := s.poll(3*time.Second, shown); ok {
			return sc
		}
	}
	return s.waitFor("screen "+strconv.Itoa(n)+" ("+label+")", shown)
}

// errNotFound is returned by record lookups.
var errNotFound = errors.New("not found")

// record returns the exported record whose column col is value.
func record(recs []map[string]string, col, value string) (map[string]string, error) {
	for _, r := range recs {
		if r[col] == value {
			return r, nil
		}
	}
	return nil, fmt.Errorf("%s %s: %w", col, value, errNotFound)
}
