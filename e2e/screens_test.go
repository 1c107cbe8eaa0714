package e2e

import (
	"fmt"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// screenshot saves the whole display as PNG under the artefacts folder
// and checks it: the window shows something, and nothing is drawn outside
// it.
func (s *session) screenshot(name string) string {
	s.t.Helper()
	path := filepath.Join(artefacts, name+".png")
	s.alive()
	s.xdo("mousemove", "--window", s.wid, "2", "2") // no hover highlight in the picture
	cmd := exec.Command("import", "-display", s.d.name, "-window", "root", path)
	if out, err := cmd.CombinedOutput(); err != nil {
		s.t.Fatalf("import (ImageMagick): %v\n%s", err, out)
	}
	checkScreenshot(s.t, path, s.d.w, s.d.h)
	return path
}

// checkScreenshot reads a screenshot of a display holding a w × h window
// at its top left and fails the test when
//   - anything is drawn outside the window: every pixel right of it and
//     below it must be the display's own background, one colour;
//   - the window is blank or nearly so: it must hold many colours, its
//     brightness must vary, and at least half of a 4 × 4 grid over it must
//     hold something other than one flat colour (content spread over the
//     window, not one corner).
func checkScreenshot(t *testing.T, path string, w, h int) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	b := img.Bounds()
	if b.Dx() < w+margin || b.Dy() < h+margin {
		t.Fatalf("%s is %v, smaller than the display", path, b)
	}
	rgb := func(x, y int) [3]uint32 {
		r, g, bl, _ := img.At(x, y).RGBA()
		return [3]uint32{r >> 8, g >> 8, bl >> 8}
	}
	bg := rgb(b.Max.X-1, b.Max.Y-1)
	outside := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if (x >= w || y >= h) && rgb(x, y) != bg {
				outside++
			}
		}
	}
	if outside > 0 {
		t.Errorf("%s: %d pixels drawn outside the %d × %d window", path, outside, w, h)
	}
	colours := map[[3]uint32]bool{}
	var sum, sumSq float64
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			c := rgb(x, y)
			colours[c] = true
			l := 0.299*float64(c[0]) + 0.587*float64(c[1]) + 0.114*float64(c[2])
			sum += l
			sumSq += l * l
		}
	}
	n := float64(w * h)
	sd := math.Sqrt(sumSq/n - (sum/n)*(sum/n))
	if len(colours) < 32 || sd < 8 {
		t.Errorf("%s: the window looks blank (%d colours, brightness varies by %.1f)", path, len(colours), sd)
	}
	busy := 0
	for gy := 0; gy < 4; gy++ {
		for gx := 0; gx < 4; gx++ {
			first := rgb(gx*w/4, gy*h/4)
			flat := true
			for y := gy * h / 4; y < (gy+1)*h/4 && flat; y += 2 {
				for x := gx * w / 4; x < (gx+1)*w/4; x += 2 {
					if rgb(x, y) != first {
						flat = false
						break
					}
				}
			}
			if !flat {
				busy++
			}
		}
	}
	if busy < 8 {
		t.Errorf("%s: only %d of 16 parts of the window hold anything", path, busy)
	}
}

// screens are the six screens: their Alt key, their name for the
// screenshot files, and a label only they show.
var screens = []struct {
	key   int
	name  string
	label string
}{
	{1, "cases", "Click a case to open it"},
	{2, "entry", "The procedure"},
	{3, "pathology", "Choose the histology"},
	{4, "figures", "Detection (detection-eligible procedures)"},
	{5, "reports", "Make a PDF report"},
	{6, "settings", "Roster"},
}

// TestEveryScreenAtTwoSizes opens each screen of a demo unit at 1024×700
// and 1920×1080, keeps a screenshot of each in dist/e2e and checks it, and
// checks that nothing reaches past the window's right edge.
func TestEveryScreenAtTwoSizes(t *testing.T) {
	need(t)
	u := newUnit(t, 800)
	for _, size := range [][2]int{{1024, 700}, {1920, 1080}} {
		t.Run(fmt.Sprintf("%dx%d", size[0], size[1]), func(t *testing.T) {
			d := newDisplay(t, size[0], size[1])
			s := d.start(u)
			s.waitFor("the main screens", func(sc screen) bool { return sc.has("Click a case to open it") })
			for _, sc := range screens {
				shown := s.showScreen(sc.key, sc.label)
				for _, it := range shown.Items {
					if it.X+it.W > float64(size[0])+1 {
						t.Errorf("%s at %d×%d: %s %q reaches %.0f px, past the window's edge", sc.name, size[0], size[1], it.Kind, it.Name, it.X+it.W)
					}
				}
				s.screenshot(fmt.Sprintf("%s-%dx%d", sc.name, size[0], size[1]))
			}
			s.stop()
		})
	}
}
